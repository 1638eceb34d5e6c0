import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createAutosaveStore } from '../../../electron/main/autosave-store.ts';

let dir: string;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-autosave-'));
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('createAutosaveStore', () => {
  it('offers the drafts of a session that crashed (never finished)', async () => {
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s1.start();
    await s1.save('docA', '{"title":"A"}', 'a.spinyard', '/lab/a.spinyard');
    // no s1.finish(): the app crashed
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux' });
    await s2.start();
    const offered = await s2.recoverable();
    expect(offered.map((d) => [d.key, d.name, d.path, d.text, d.session])).toEqual([['docA', 'a.spinyard', '/lab/a.spinyard', '{"title":"A"}', 'run1']]);
  });

  it('does not offer this session its own drafts', async () => {
    const s = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s.start();
    await s.save('docA', 'x', 'a.spinyard');
    expect(await s.recoverable()).toEqual([]);
  });

  it('does not offer drafts once the session finished cleanly', async () => {
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s1.start();
    await s1.save('docA', 'x', 'a.spinyard');
    await s1.finish();
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux' });
    await s2.start();
    expect(await s2.recoverable()).toEqual([]);
  });

  it('keeps offering crashed drafts across sessions until removed', async () => {
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s1.start();
    await s1.save('docA', 'x', 'a.spinyard');
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux' });
    await s2.start();
    await s2.finish(); // the user ignored the offer
    const s3 = createAutosaveStore(dir, { session: 'run3', platform: 'linux' });
    await s3.start();
    expect((await s3.recoverable()).map((d) => d.key)).toEqual(['docA']);
    await s3.remove('docA');
    expect(await s3.recoverable()).toEqual([]);
  });

  it('forgets markers of clean sessions at start', async () => {
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s1.start();
    await s1.finish();
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux' });
    await s2.start();
    expect((await fs.readdir(path.join(dir, 'autosave'))).sort()).toEqual(['run2.session.json']);
  });

  it('ignores unreadable or mislabelled files in the folder', async () => {
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await s1.start();
    await fs.writeFile(path.join(dir, 'autosave', 'junk.draft.json'), '{ not json');
    await fs.writeFile(path.join(dir, 'autosave', 'other.draft.json'), JSON.stringify({ key: 'docZ', name: 'z.spinyard', text: '', savedAt: 1, session: 'x' }));
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux' });
    expect(await s2.recoverable()).toEqual([]);
  });

  it('refuses keys that are not file-name safe', async () => {
    const s = createAutosaveStore(dir, { session: 'run1', platform: 'linux' });
    await expect(s.save('../../evil', 'x', 'a.spinyard')).rejects.toThrow(/Autosave key/);
  });

  it('lists newest drafts first', async () => {
    let t = 1000;
    const s1 = createAutosaveStore(dir, { session: 'run1', platform: 'linux', now: () => t });
    await s1.start();
    await s1.save('old', 'x', 'o.spinyard');
    t = 2000;
    await s1.save('new', 'y', 'n.spinyard');
    const s2 = createAutosaveStore(dir, { session: 'run2', platform: 'linux', now: () => 3000 });
    expect((await s2.recoverable()).map((d) => d.key)).toEqual(['new', 'old']);
  });
});
