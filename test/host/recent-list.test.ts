import { describe, expect, it } from 'vitest';
import type { RecentDocument } from '../../src/host/contract.ts';
import { addRecent, parseRecentList, removeRecent, sameDocumentId } from '../../src/host/recent-list.ts';

const e = (id: string, openedAt = 0): RecentDocument => ({ id, name: id.split('/').pop()!, path: id, openedAt });

describe('addRecent', () => {
  it('puts the entry first and removes its earlier occurrence', () => {
    const list = addRecent([e('/a.spinyard'), e('/b.spinyard')], e('/b.spinyard', 9), 'linux');
    expect(list.map((x) => x.id)).toEqual(['/b.spinyard', '/a.spinyard']);
    expect(list[0].openedAt).toBe(9);
  });
  it('caps the list at 10', () => {
    let list: RecentDocument[] = [];
    for (let i = 0; i < 14; i++) list = addRecent(list, e(`/f${i}.spinyard`), 'linux');
    expect(list).toHaveLength(10);
    expect(list[0].id).toBe('/f13.spinyard');
    expect(list[9].id).toBe('/f4.spinyard');
  });
  it('dedupes case-insensitively on darwin and win32, not on linux', () => {
    expect(addRecent([e('/Lab/A.spinyard')], e('/lab/a.spinyard'), 'darwin')).toHaveLength(1);
    expect(addRecent([e('C:\\Lab\\A.spinyard')], e('c:/lab/a.spinyard'), 'win32')).toHaveLength(1);
    expect(addRecent([e('/Lab/A.spinyard')], e('/lab/a.spinyard'), 'linux')).toHaveLength(2);
  });
});

describe('removeRecent / sameDocumentId', () => {
  it('removes the entry', () => {
    expect(removeRecent([e('/a.spinyard'), e('/b.spinyard')], '/a.spinyard', 'linux').map((x) => x.id)).toEqual(['/b.spinyard']);
    expect(sameDocumentId('/a', '/A', 'linux')).toBe(false);
  });
});

describe('parseRecentList', () => {
  it('reads {recent:[…]} and bare arrays, dropping bad entries and duplicates', () => {
    const text = JSON.stringify({ version: 1, recent: [e('/a.spinyard'), { id: 3 }, e('/a.spinyard'), e('/b.spinyard')] });
    expect(parseRecentList(text, 'linux').map((x) => x.id)).toEqual(['/a.spinyard', '/b.spinyard']);
    expect(parseRecentList(JSON.stringify([e('/c.spinyard')]), 'linux')).toHaveLength(1);
  });
  it('gives [] for missing or broken text', () => {
    expect(parseRecentList(null, 'linux')).toEqual([]);
    expect(parseRecentList('{not json', 'linux')).toEqual([]);
    expect(parseRecentList('{"recent": 5}', 'linux')).toEqual([]);
  });
});
