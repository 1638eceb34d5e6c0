import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AtomicWriteError, atomicWriteFile, backupPath, tempPathFor, type AtomicFs } from '../../../electron/main/atomic-save.ts';

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
  return { open, rename: wrap('rename'), unlink: wrap('unlink'), copyFile: wrap('copyFile'), stat: wrap('stat'), chmod: wrap('chmod') };
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

  it('puts the temporary file beside the target', () => {
    expect(path.dirname(tempPathFor('/lab/b.spinyard', 'abc'))).toBe('/lab');
    expect(path.basename(tempPathFor('/lab/b.spinyard', 'abc'))).toBe('.b.spinyard.abc.tmp');
  });
});
