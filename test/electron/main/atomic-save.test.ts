import { spawn } from 'node:child_process';
import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import {
  AtomicWriteError,
  atomicWriteFile,
  backupPath,
  parseTempName,
  removeOrphanedTemps,
  removeOrphanedTempsOf,
  resolveLinks,
  tempPathFor,
  type AtomicFs,
} from '../../../electron/main/atomic-save.ts';

let dir: string;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-atomic-'));
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

const listing = async () => (await fs.readdir(dir)).sort();

/** The real file system with one call made to fail. */
function failing(call: keyof AtomicFs, when: (args: unknown[]) => boolean = () => true): AtomicFs {
  const real = fs as unknown as AtomicFs;
  const wrap = <K extends keyof AtomicFs>(k: K): AtomicFs[K] =>
    (async (...args: unknown[]) => {
      if (k === call && when(args)) throw Object.assign(new Error(`${k} failed`), { code: 'EIO' });
      return (real[k] as (...a: unknown[]) => unknown)(...args);
    }) as AtomicFs[K];
  const open: AtomicFs['open'] = async (file, flags, mode) => {
    if (call === 'open' && when([file, flags])) throw Object.assign(new Error('open failed'), { code: 'EACCES' });
    const fh = await real.open(file, flags, mode);
    return {
      writeFile: async (d) => {
        if ((call as string) === 'writeFile') {
          await fh.writeFile(typeof d === 'string' ? d.slice(0, 3) : d); // a partial write, then the disk fills
          throw Object.assign(new Error('no space'), { code: 'ENOSPC' });
        }
        return fh.writeFile(d);
      },
      sync: async () => {
        if ((call as string) === 'sync' && flags === 'wx') throw Object.assign(new Error('sync failed'), { code: 'EIO' });
        return fh.sync();
      },
      close: () => fh.close(),
    };
  };
  return {
    open,
    rename: wrap('rename'),
    unlink: wrap('unlink'),
    copyFile: wrap('copyFile'),
    stat: wrap('stat'),
    lstat: wrap('lstat'),
    readlink: wrap('readlink'),
    readdir: wrap('readdir'),
    chmod: wrap('chmod'),
  };
}

describe('atomicWriteFile', () => {
  it('writes a new file and leaves no temporary file', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await atomicWriteFile(f, '{"v":1}\n');
    expect(await fs.readFile(f, 'utf8')).toBe('{"v":1}\n');
    expect(await listing()).toEqual(['bench.spinyard']);
  });

  it('replaces a file and keeps the previous version as NAME.bak', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'old');
    await atomicWriteFile(f, 'new');
    expect(await fs.readFile(f, 'utf8')).toBe('new');
    expect(await fs.readFile(backupPath(f), 'utf8')).toBe('old');
    expect(await listing()).toEqual(['bench.spinyard', 'bench.spinyard.bak']);
    await atomicWriteFile(f, 'newer');
    expect(await fs.readFile(backupPath(f), 'utf8')).toBe('new');
  });

  it('keeps no backup when asked not to', async () => {
    const f = path.join(dir, 'recent.json');
    await fs.writeFile(f, 'old');
    await atomicWriteFile(f, 'new', { backup: false });
    expect(await listing()).toEqual(['recent.json']);
  });

  it('keeps the permissions of the file it replaces', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'old');
    await fs.chmod(f, 0o600);
    await atomicWriteFile(f, 'new');
    expect((await fs.stat(f)).mode & 0o777).toBe(0o600);
  });

  for (const call of ['writeFile', 'sync', 'copyFile', 'rename'] as const) {
    it(`leaves the original intact and no temporary file when ${call} fails`, async () => {
      const f = path.join(dir, 'bench.spinyard');
      await fs.writeFile(f, 'precious');
      const err = await atomicWriteFile(f, 'replacement', { fs: failing(call as keyof AtomicFs) }).catch((e) => e);
      expect(err).toBeInstanceOf(AtomicWriteError);
      expect(err.message).toContain(f);
      expect(err.message).toMatch(/unchanged/);
      expect(await fs.readFile(f, 'utf8')).toBe('precious');
      const left = await listing();
      expect(left.filter((n) => n.endsWith('.tmp'))).toEqual([]);
      expect(left).toContain('bench.spinyard');
    });
  }

  it('fails when the temporary file cannot be created, leaving the original', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'precious');
    await expect(atomicWriteFile(f, 'x', { fs: failing('open') })).rejects.toMatchObject({ step: 'temp' });
    expect(await fs.readFile(f, 'utf8')).toBe('precious');
  });

  it('refuses to replace a folder (a real failure, not injected)', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.mkdir(f);
    await fs.writeFile(path.join(f, 'inside'), 'keep');
    await expect(atomicWriteFile(f, 'x')).rejects.toThrow(/not a regular file/);
    expect(await fs.readFile(path.join(f, 'inside'), 'utf8')).toBe('keep');
    expect(await listing()).toEqual(['bench.spinyard']);
  });

  it('fails cleanly in a folder that does not exist', async () => {
    await expect(atomicWriteFile(path.join(dir, 'missing', 'b.spinyard'), 'x')).rejects.toMatchObject({ step: 'temp' });
  });

  it('puts the temporary file beside the target, named after the file and the writing process', () => {
    expect(path.dirname(tempPathFor('/lab/b.spinyard', 'abcdef012345', 4242))).toBe('/lab');
    expect(path.basename(tempPathFor('/lab/b.spinyard', 'abcdef012345', 4242))).toBe('.b.spinyard.4242.abcdef012345.tmp');
    expect(path.basename(tempPathFor('/lab/b.spinyard'))).toMatch(new RegExp(`^\\.b\\.spinyard\\.${process.pid}\\.[0-9a-f]{12}\\.tmp$`));
  });
});

describe('temporary file names', () => {
  it('read back the file, the writer and the random part', () => {
    expect(parseTempName('.b.spinyard.4242.abcdef012345.tmp')).toEqual({ base: 'b.spinyard', pid: 4242 });
    expect(parseTempName('.b.spinyard.bak.17.abcdef012345.tmp')).toEqual({ base: 'b.spinyard.bak', pid: 17 });
    expect(parseTempName('.run.7.spinyard.99.abcdef012345.tmp')).toEqual({ base: 'run.7.spinyard', pid: 99 });
  });
  it('read the names of earlier versions (no writer in the name)', () => {
    expect(parseTempName('.b.spinyard.abcdef012345.tmp')).toEqual({ base: 'b.spinyard', pid: null });
  });
  it('refuse every other name', () => {
    for (const n of ['b.spinyard', '.b.spinyard.tmp', 'b.spinyard.4242.abcdef012345.tmp', '.b.spinyard.4242.ABCDEF012345.tmp', '.b.spinyard.4242.abcdef01234.tmp', '.b.spinyard.4242.abcdef012345.tmp.x', 'notes.tmp']) {
      expect(parseTempName(n), n).toBeNull();
    }
  });
});

/** The pid of a process that has ended (spawned, waited for). */
async function deadPid(): Promise<number> {
  const child = spawn(process.execPath, ['-e', '0'], { stdio: 'ignore' });
  await new Promise((resolve) => child.once('exit', resolve));
  return child.pid!;
}

describe('temporary files left by an interrupted save', () => {
  it('are removed at the next save of that file, and only those of that file', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'v1');
    const gone = await deadPid();
    const orphans = [`.bench.spinyard.${gone}.0123456789ab.tmp`, '.bench.spinyard.0123456789ab.tmp', `.bench.spinyard.bak.${gone}.0123456789ab.tmp`];
    const others = [`.other.spinyard.${gone}.0123456789ab.tmp`, 'notes.tmp', `.bench.spinyard.${gone}.tmp`];
    for (const n of [...orphans, ...others]) await fs.writeFile(path.join(dir, n), 'partial');
    await atomicWriteFile(f, 'v2');
    expect(await listing()).toEqual(['bench.spinyard', 'bench.spinyard.bak', ...others].sort());
    expect(await fs.readFile(f, 'utf8')).toBe('v2');
  });

  it('are kept while their writer runs (another process, or a save of this one still going)', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'v1');
    const live = [`.bench.spinyard.${process.ppid}.0123456789ab.tmp`];
    const mineButIdle = `.bench.spinyard.${process.pid}.0123456789ab.tmp`; // no save of this process writes it
    for (const n of [...live, mineButIdle]) await fs.writeFile(path.join(dir, n), 'partial');
    await atomicWriteFile(f, 'v2');
    expect(await listing()).toEqual(['bench.spinyard', 'bench.spinyard.bak', ...live].sort());
  });

  it('a save does not remove the temporary file of another save of the same file still writing', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'v0');
    // The first save stops inside its write until the second save has run to the end.
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    let writing!: () => void;
    const started = new Promise<void>((r) => (writing = r));
    const real = fs as unknown as AtomicFs;
    const slow: AtomicFs = {
      ...failing('chmod', () => false),
      open: async (file, flags, mode) => {
        const fh = await real.open(file, flags, mode);
        return { ...fh, sync: () => fh.sync(), close: () => fh.close(), writeFile: async (d) => { writing(); await held; return fh.writeFile(d); } };
      },
    };
    const first = atomicWriteFile(f, 'first', { fs: slow });
    await started;
    expect((await listing()).filter((n) => n.endsWith('.tmp'))).toHaveLength(1);
    await atomicWriteFile(f, 'second');
    release();
    await first;
    expect(await fs.readFile(f, 'utf8')).toBe('first');
    expect(await fs.readFile(backupPath(f), 'utf8')).toBe('second');
    expect((await listing()).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  });

  it('are removed from a whole folder at start (removeOrphanedTemps), the rest left alone', async () => {
    const gone = await deadPid();
    const orphans = [`.recent.json.${gone}.0123456789ab.tmp`, '.window-state.json.0123456789ab.tmp', `.k1.draft.json.${gone}.00000000000a.tmp`];
    const keep = ['recent.json', 'notes.tmp', `.k2.draft.json.${process.ppid}.00000000000b.tmp`];
    for (const n of [...orphans, ...keep]) await fs.writeFile(path.join(dir, n), 'x');
    await fs.mkdir(path.join(dir, `.folder.${gone}.0123456789ab.tmp`)); // not a file: never removed
    const removed = await removeOrphanedTemps(dir);
    expect(removed.map((p) => path.basename(p)).sort()).toEqual([...orphans].sort());
    expect(await listing()).toEqual([...keep, `.folder.${gone}.0123456789ab.tmp`].sort());
    expect(await removeOrphanedTemps(path.join(dir, 'missing'))).toEqual([]);
  });

  it('are removed for one document at start (removeOrphanedTempsOf), through its link', async () => {
    const gone = await deadPid();
    await fs.mkdir(path.join(dir, 'data'));
    const target = path.join(dir, 'data', 'line.spinyard');
    await fs.writeFile(target, 'v1');
    await fs.symlink(target, path.join(dir, 'link.spinyard'));
    await fs.writeFile(path.join(dir, 'data', `.line.spinyard.${gone}.0123456789ab.tmp`), 'x');
    await fs.writeFile(path.join(dir, 'data', `.line.spinyard.bak.${gone}.0123456789ab.tmp`), 'x');
    await fs.writeFile(path.join(dir, 'data', `.other.spinyard.${gone}.0123456789ab.tmp`), 'x');
    const removed = await removeOrphanedTempsOf(path.join(dir, 'link.spinyard'));
    expect(removed).toHaveLength(2);
    expect((await fs.readdir(path.join(dir, 'data'))).sort()).toEqual([`.other.spinyard.${gone}.0123456789ab.tmp`, 'line.spinyard']);
  });
});

describe('the backup', () => {
  it('is replaced whole by a rename, never rewritten in place', async () => {
    const f = path.join(dir, 'bench.spinyard');
    await fs.writeFile(f, 'v2');
    await fs.writeFile(backupPath(f), 'v1');
    await fs.link(backupPath(f), path.join(dir, 'reader-of-v1')); // a reader holding the old backup
    await atomicWriteFile(f, 'v3');
    expect(await fs.readFile(backupPath(f), 'utf8')).toBe('v2');
    expect(await fs.readFile(path.join(dir, 'reader-of-v1'), 'utf8')).toBe('v1');
    expect((await listing()).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  });

  for (const [what, fsys] of [
    ['copying it', () => failing('copyFile')],
    ['making it durable', () => failingBackupSync()],
    ['renaming it into place', () => failing('rename', (args) => String(args[1]).endsWith('.bak'))],
  ] as const) {
    it(`when ${what} fails, leaves the file and the previous backup whole and no temporary file`, async () => {
      const f = path.join(dir, 'bench.spinyard');
      await fs.writeFile(f, 'v2');
      await fs.writeFile(backupPath(f), 'v1');
      const err = await atomicWriteFile(f, 'v3', { fs: fsys() }).catch((e) => e);
      expect(err).toMatchObject({ step: 'backup' });
      expect(err.message).toContain('bench.spinyard.bak');
      expect(await fs.readFile(f, 'utf8')).toBe('v2');
      expect(await fs.readFile(backupPath(f), 'utf8')).toBe('v1');
      expect(await listing()).toEqual(['bench.spinyard', 'bench.spinyard.bak']);
    });
  }
});

/** The real file system whose fsync of the backup's temporary file fails. */
function failingBackupSync(): AtomicFs {
  const base = failing('chmod', () => false);
  return {
    ...base,
    open: async (file, flags, mode) => {
      const fh = await base.open(file, flags, mode);
      if (flags !== 'r+') return fh;
      return { ...fh, writeFile: fh.writeFile, close: fh.close, sync: async () => Promise.reject(Object.assign(new Error('sync failed'), { code: 'EIO' })) };
    },
  };
}

describe.skipIf(process.platform === 'win32')('saving through a symbolic link', () => {
  async function linked(linkTo: (target: string) => string = (t) => t) {
    await fs.mkdir(path.join(dir, 'data'));
    const target = path.join(dir, 'data', 'line.spinyard');
    await fs.writeFile(target, 'v1');
    await fs.chmod(target, 0o640);
    const link = path.join(dir, 'line.spinyard');
    await fs.symlink(linkTo(target), link);
    return { target, link };
  }

  it('writes the target and leaves the link a link', async () => {
    const { target, link } = await linked();
    await atomicWriteFile(link, 'v2');
    expect((await fs.lstat(link)).isSymbolicLink()).toBe(true);
    expect(await fs.readlink(link)).toBe(target);
    expect(await fs.readFile(target, 'utf8')).toBe('v2');
    expect((await fs.stat(target)).mode & 0o777).toBe(0o640);
    expect(await fs.readFile(backupPath(target), 'utf8')).toBe('v1'); // the backup sits beside the data
    expect(await listing()).toEqual(['data', 'line.spinyard']);
    expect((await fs.readdir(path.join(dir, 'data'))).sort()).toEqual(['line.spinyard', 'line.spinyard.bak']);
  });

  it('follows a relative link and a chain of links', async () => {
    const { target, link } = await linked(() => 'data/line.spinyard');
    const outer = path.join(dir, 'outer.spinyard');
    await fs.symlink('line.spinyard', outer);
    expect(await resolveLinks(outer)).toBe(target);
    await atomicWriteFile(outer, 'v2');
    expect(await fs.readFile(target, 'utf8')).toBe('v2');
    expect((await fs.lstat(outer)).isSymbolicLink()).toBe(true);
    expect((await fs.lstat(link)).isSymbolicLink()).toBe(true);
  });

  it('creates the missing target of a dangling link', async () => {
    await fs.mkdir(path.join(dir, 'data'));
    const link = path.join(dir, 'line.spinyard');
    await fs.symlink(path.join(dir, 'data', 'new.spinyard'), link);
    await atomicWriteFile(link, 'v1');
    expect(await fs.readFile(path.join(dir, 'data', 'new.spinyard'), 'utf8')).toBe('v1');
    expect((await fs.lstat(link)).isSymbolicLink()).toBe(true);
  });

  it('refuses a loop of links, changing nothing', async () => {
    await fs.symlink(path.join(dir, 'b'), path.join(dir, 'a'));
    await fs.symlink(path.join(dir, 'a'), path.join(dir, 'b'));
    const err = await atomicWriteFile(path.join(dir, 'a'), 'x').catch((e) => e);
    expect(err).toBeInstanceOf(AtomicWriteError);
    expect(err.message).toMatch(/symbolic links/);
    expect(err.message).toContain(path.join(dir, 'a'));
    expect(await listing()).toEqual(['a', 'b']);
    expect((await fs.lstat(path.join(dir, 'a'))).isSymbolicLink()).toBe(true);
  });
});
