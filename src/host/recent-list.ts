// The recent-documents list as plain data: newest first, one entry per document, at most RECENT_LIMIT.

import { RECENT_LIMIT, isRecentDocument, type RecentDocument } from './contract.ts';

/** Whether two ids name the same document. Paths on darwin and win32 compare case-insensitively
 *  (their usual file systems do), and win32 treats "/" as "\\". */
export function sameDocumentId(a: string, b: string, platform: string): boolean {
  if (platform === 'win32') return a.replace(/\//g, '\\').toLowerCase() === b.replace(/\//g, '\\').toLowerCase();
  if (platform === 'darwin') return a.toLowerCase() === b.toLowerCase();
  return a === b;
}

/** The list with `entry` put first, earlier entries for the same document removed, cut to `limit`. */
export function addRecent<T extends RecentDocument>(
  list: readonly T[],
  entry: T,
  platform: string,
  limit: number = RECENT_LIMIT,
): T[] {
  return [entry, ...list.filter((e) => !sameDocumentId(e.id, entry.id, platform))].slice(0, limit);
}

/** The list without the document `id`. */
export function removeRecent<T extends RecentDocument>(list: readonly T[], id: string, platform: string): T[] {
  return list.filter((e) => !sameDocumentId(e.id, id, platform));
}

/** The recent list stored as JSON text; anything unreadable gives an empty list, bad entries are dropped,
 *  and duplicates and overflow are removed as addRecent would. */
export function parseRecentList(text: string | null | undefined, platform: string, limit: number = RECENT_LIMIT): RecentDocument[] {
  if (!text) return [];
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch {
    return [];
  }
  const entries = Array.isArray(data) ? data : (data as { recent?: unknown } | null)?.recent;
  if (!Array.isArray(entries)) return [];
  const out: RecentDocument[] = [];
  for (const e of entries) {
    if (!isRecentDocument(e)) continue;
    if (out.some((x) => sameDocumentId(x.id, e.id, platform))) continue;
    out.push({ id: e.id, name: e.name, ...(e.path !== undefined ? { path: e.path } : {}), openedAt: e.openedAt });
    if (out.length >= limit) break;
  }
  return out;
}
