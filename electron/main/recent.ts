// The recent-documents list of the desktop app: newest first, deduplicated, at most RECENT_LIMIT,
// kept as JSON in the user-data folder (recent.json) and written atomically.

import * as nodeFs from 'node:fs/promises';
import * as path from 'node:path';
import { RECENT_LIMIT, type RecentDocument } from '../../src/host/contract.ts';
import { addRecent, parseRecentList, removeRecent } from '../../src/host/recent-list.ts';
import { atomicWriteFile, type AtomicFs } from './atomic-save.ts';

export const RECENT_FILE = 'recent.json';

/** The entry for an absolute path opened or saved at `now`. */
export function recentEntry(file: string, now: number): RecentDocument {
  return { id: file, name: path.basename(file), path: file, openedAt: now };
}

export interface RecentStoreOptions {
  platform?: string;
  fs?: AtomicFs & { readFile(file: string, enc: 'utf8'): Promise<string> };
  limit?: number;
}

/** The recent list stored in `userData`/recent.json. Reading a missing or broken file gives []. */
export function createRecentStore(userData: string, options: RecentStoreOptions = {}) {
  const file = path.join(userData, RECENT_FILE);
  const platform = options.platform ?? process.platform;
  const fs = options.fs ?? (nodeFs as unknown as NonNullable<RecentStoreOptions['fs']>);
  const limit = options.limit ?? RECENT_LIMIT;

  const load = async (): Promise<RecentDocument[]> => {
    try {
      return parseRecentList(await fs.readFile(file, 'utf8'), platform, limit);
    } catch {
      return [];
    }
  };
  const save = async (list: RecentDocument[]) => {
    await atomicWriteFile(file, `${JSON.stringify({ version: 1, recent: list }, null, 2)}\n`, { fs, backup: false, platform });
    return list;
  };
  return {
    file,
    load,
    /** Puts `documentPath` first and persists; returns the new list. */
    async add(documentPath: string, now: number): Promise<RecentDocument[]> {
      return save(addRecent(await load(), recentEntry(documentPath, now), platform, limit));
    },
    /** Drops an entry (a file that no longer opens) and persists. */
    async remove(id: string): Promise<RecentDocument[]> {
      return save(removeRecent(await load(), id, platform));
    },
    async clear(): Promise<RecentDocument[]> {
      return save([]);
    },
  };
}
