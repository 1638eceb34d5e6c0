import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createRecentStore, recentEntry } from '../../../electron/main/recent.ts';

let dir: string;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-recent-'));
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('createRecentStore', () => {
  it('starts empty, adds newest first, dedupes, and persists to recent.json', async () => {
    const store = createRecentStore(dir, { platform: 'linux' });
    expect(await store.load()).toEqual([]);
    await store.add('/lab/a.spinyard', 1);
    await store.add('/lab/b.spinyard', 2);
    await store.add('/lab/a.spinyard', 3);
    const again = createRecentStore(dir, { platform: 'linux' });
    expect((await again.load()).map((r) => [r.id, r.openedAt])).toEqual([
      ['/lab/a.spinyard', 3],
      ['/lab/b.spinyard', 2],
    ]);
    const stored = JSON.parse(await fs.readFile(path.join(dir, 'recent.json'), 'utf8'));
    expect(stored.version).toBe(1);
  });

  it('caps the list at 10', async () => {
    const store = createRecentStore(dir, { platform: 'linux' });
    for (let i = 0; i < 13; i++) await store.add(`/lab/f${i}.spinyard`, i);
    const list = await store.load();
    expect(list).toHaveLength(10);
    expect(list[0].name).toBe('f12.spinyard');
  });

  it('removes and clears', async () => {
    const store = createRecentStore(dir, { platform: 'linux' });
    await store.add('/lab/a.spinyard', 1);
    await store.add('/lab/b.spinyard', 2);
    expect((await store.remove('/lab/b.spinyard')).map((r) => r.id)).toEqual(['/lab/a.spinyard']);
    expect(await store.clear()).toEqual([]);
  });

  it('reads a corrupt recent.json as empty and recovers on the next add', async () => {
    await fs.writeFile(path.join(dir, 'recent.json'), '{ broken');
    const store = createRecentStore(dir, { platform: 'linux' });
    expect(await store.load()).toEqual([]);
    await store.add('/lab/a.spinyard', 1);
    expect(await store.load()).toHaveLength(1);
  });
});

describe('recentEntry', () => {
  it('names the entry by the file name', () => {
    expect(recentEntry('/lab/bench b.spinyard', 7)).toEqual({ id: '/lab/bench b.spinyard', name: 'bench b.spinyard', path: '/lab/bench b.spinyard', openedAt: 7 });
  });
});
