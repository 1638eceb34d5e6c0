import { spawn } from 'node:child_process';
import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { removeTempsAtStart } from '../../../electron/main/temp-cleanup.ts';

let dir: string;
let gone: number;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-cleanup-'));
  const child = spawn(process.execPath, ['-e', '0'], { stdio: 'ignore' });
  await new Promise((resolve) => child.once('exit', resolve));
  gone = child.pid!; // a writer that no longer runs
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

const orphan = (base: string) => `.${base}.${gone}.0123456789ab.tmp`;
const touch = async (...parts: string[]) => {
  await fs.mkdir(path.join(dir, ...parts.slice(0, -1)), { recursive: true });
  await fs.writeFile(path.join(dir, ...parts), 'x');
};
const list = async (...parts: string[]) => (await fs.readdir(path.join(dir, ...parts))).sort();

describe('removeTempsAtStart', () => {
  it('empties the app folders of orphans and, beside each recent document, removes only that document\'s', async () => {
    await touch('user', 'recent.json');
    await touch('user', orphan('recent.json'));
    await touch('user', orphan('window-state.json'));
    await touch('user', 'autosave', orphan('k1.draft.json'));
    await touch('user', 'autosave', 'k1.draft.json');
    await touch('lab', 'a.spinyard');
    await touch('lab', orphan('a.spinyard'));
    await touch('lab', orphan('a.spinyard.bak'));
    await touch('lab', orphan('colleague.spinyard')); // not a document of this list: left alone
    await touch('lab', 'report.tmp');
    const removed = await removeTempsAtStart({
      appFolders: [path.join(dir, 'user'), path.join(dir, 'user', 'autosave')],
      documents: [path.join(dir, 'lab', 'a.spinyard'), path.join(dir, 'gone', 'b.spinyard')],
    });
    expect(removed).toHaveLength(5);
    expect(await list('user')).toEqual(['autosave', 'recent.json']);
    expect(await list('user', 'autosave')).toEqual(['k1.draft.json']);
    expect(await list('lab')).toEqual([orphan('colleague.spinyard'), 'a.spinyard', 'report.tmp'].sort());
  });

  it('carries on past a folder it cannot read', async () => {
    await touch('lab', orphan('a.spinyard'));
    const removed = await removeTempsAtStart({
      appFolders: [path.join(dir, 'missing')],
      documents: [path.join(dir, 'lab', 'a.spinyard'), path.join(dir, 'lab', 'a.spinyard'), path.join(dir, 'missing', 'c.spinyard')],
    });
    expect(removed).toEqual([path.join(dir, 'lab', orphan('a.spinyard'))]);
  });
});
