// Temporary files of interrupted saves, removed at start (docs/reliability.md, "Saving"). A save removes
// those of its own file (atomic-save.ts); at start main also clears
//   - the app's own folders (user data: recent.json, window-state.json; the autosave folder), of any file;
//   - beside each document of the recent list, the temporary files of that document and its backup only
//     (following a symbolic link to its target): the app never removes a file in a user's folder that
//     it cannot attribute to a document it saved itself.
// Only files whose writer no longer runs are removed (atomic-save.ts names each by its process id).

import * as path from 'node:path';
import { removeOrphanedTemps, removeOrphanedTempsOf, type AtomicFs } from './atomic-save.ts';

export interface StartCleanup {
  /** Folders that only the app writes: every orphaned temporary file in them goes. */
  appFolders: readonly string[];
  /** Documents (recent list): their own orphaned temporary files go. */
  documents: readonly string[];
  fs?: AtomicFs;
}

/** Removes the temporary files that interrupted saves left; returns the paths removed. Never throws:
 *  a folder that cannot be read (a drive not mounted) is passed over. */
export async function removeTempsAtStart({ appFolders, documents, fs }: StartCleanup): Promise<string[]> {
  const removed: string[] = [];
  for (const dir of new Set(appFolders.map((d) => path.resolve(d)))) removed.push(...(await removeOrphanedTemps(dir, fs).catch(() => [])));
  for (const doc of new Set(documents.map((d) => path.resolve(d)))) removed.push(...(await removeOrphanedTempsOf(doc, fs).catch(() => [])));
  return removed;
}
