// Where a document goes when the shell opens it: the window that already shows it, the window asking
// (when that holds only its untouched new document), or a new window. One document, one window.

import { sameDocumentId } from '../../src/host/recent-list.ts';

export interface WindowDocState {
  id: number;
  path?: string;
  dirty: boolean;
  /** True while the window holds the new document it was opened with, untouched. */
  replaceable: boolean;
}

export type Placement = { kind: 'focus'; id: number } | { kind: 'here'; id: number } | { kind: 'new' };

/** The placement of a document (its path, if it has one) opened from window `from` (or none). */
export function placeDocument(windows: readonly WindowDocState[], docPath: string | undefined, from: number | undefined, platform: string): Placement {
  if (docPath !== undefined) {
    const open = windows.find((w) => w.path !== undefined && sameDocumentId(w.path, docPath, platform));
    if (open) return { kind: 'focus', id: open.id };
  }
  const here = windows.find((w) => w.id === from);
  if (here && here.replaceable && !here.dirty && here.path === undefined) return { kind: 'here', id: here.id };
  return { kind: 'new' };
}

/** The file a save may write without asking: the window's own path, when the request names that one
 *  (or none) and is not a Save As. Any other path from the renderer is not trusted: the user picks. */
export function saveTargetWithoutDialog(windowPath: string | undefined, requested: string | undefined, saveAs: boolean, platform: string): string | null {
  if (saveAs || windowPath === undefined) return null;
  if (requested !== undefined && !sameDocumentId(requested, windowPath, platform)) return null;
  return windowPath;
}
