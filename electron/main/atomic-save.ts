// Atomic file writes: the file on disk is always either the previous version or the new one, whole, and
// so is its backup.
//
//   0. follow symbolic links to the file they name (the link stays a link; the target is replaced), and
//      remove the temporary files that an interrupted save of that file left beside it
//   1. write .NAME.PID.RANDOM.tmp in the same folder (same file system, so the rename is atomic), fsync it
//   2. when asked and when there is a previous NAME: copy it to .NAME.bak.PID.RANDOM.tmp, fsync that,
//      rename it over NAME.bak
//   3. rename the temporary file over NAME, then fsync the folder so both renames are durable
// Any failure before step 3 completes leaves NAME and NAME.bak untouched and removes the temporary files.
//
// A process killed during a save leaves at most its temporary files. Their names carry the writer's
// process id: a later save of the same file (or removeOrphanedTemps at start) removes those whose writer
// is no longer running, and never those of a save still in progress, in this process or another.

import * as nodeFs from 'node:fs/promises';
import * as path from 'node:path';
import { randomBytes } from 'node:crypto';

/** The file-system calls used, so tests can inject failures. Matches node:fs/promises. */
export interface AtomicFs {
  open(file: string, flags: string, mode?: number): Promise<{
    writeFile(data: string | Uint8Array): Promise<void>;
    sync(): Promise<void>;
    close(): Promise<void>;
  }>;
  rename(from: string, to: string): Promise<void>;
  unlink(file: string): Promise<void>;
  copyFile(from: string, to: string): Promise<void>;
  stat(file: string): Promise<{ mode: number; isFile(): boolean }>;
  lstat(file: string): Promise<{ isFile(): boolean; isSymbolicLink(): boolean }>;
  readlink(file: string): Promise<string>;
  readdir(dir: string): Promise<string[]>;
  chmod(file: string, mode: number): Promise<void>;
}

export interface AtomicWriteOptions {
  /** Keep the previous file as NAME.bak (default true). */
  backup?: boolean;
  fs?: AtomicFs;
  platform?: string;
}

/** Error of a failed save; `step` says which step failed, the message names the file. */
export class AtomicWriteError extends Error {
  constructor(
    message: string,
    readonly file: string,
    readonly step: 'temp' | 'backup' | 'rename',
    cause?: unknown,
  ) {
    super(message, { cause });
    this.name = 'AtomicWriteError';
  }
}

const realFs = nodeFs as unknown as AtomicFs;

/** Links followed before a save gives up (Linux's own limit is 40). */
const MAX_LINKS = 40;

/** Temporary files being written by saves of this process right now: never removed as orphans. */
const inFlight = new Set<string>();

/** The backup path of a file: NAME.bak beside it ("bench.spinyard" → "bench.spinyard.bak"). */
export function backupPath(file: string): string {
  return `${file}.bak`;
}

/** A temporary path beside `file`, hidden on POSIX, unique per call, naming the writing process:
 *  ".NAME.PID.RANDOM.tmp" with RANDOM 12 hex digits. */
export function tempPathFor(file: string, random: string = randomBytes(6).toString('hex'), pid: number = process.pid): string {
  return path.join(path.dirname(file), `.${path.basename(file)}.${pid}.${random}.tmp`);
}

const TEMP_NAME = /^\.(.+?)\.(?:(\d+)\.)?[0-9a-f]{12}\.tmp$/;

/** The file a temporary file name belongs to and the process that wrote it (null for the names of
 *  earlier versions, which had no process id), or null for any other name. */
export function parseTempName(name: string): { base: string; pid: number | null } | null {
  const m = TEMP_NAME.exec(name);
  if (!m) return null;
  return { base: m[1], pid: m[2] === undefined ? null : Number(m[2]) };
}

/** True while process `pid` runs. A process that cannot be signalled for lack of permission runs. */
function processRuns(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as { code?: string }).code === 'EPERM';
  }
}

/** True when the temporary file `file` (named `pid`) belongs to no save in progress. */
function isOrphan(file: string, pid: number | null): boolean {
  if (pid === null) return true; // written by an earlier version, which is not running beside this one
  if (pid === process.pid) return !inFlight.has(file);
  return pid <= 0 || !processRuns(pid);
}

async function removeTemps(dir: string, belongs: (base: string) => boolean, fs: AtomicFs): Promise<string[]> {
  let names: string[];
  try {
    names = await fs.readdir(dir);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names) {
    const t = parseTempName(name);
    if (!t || !belongs(t.base)) continue;
    const file = path.join(dir, name);
    if (!isOrphan(file, t.pid)) continue;
    try {
      if (!(await fs.lstat(file)).isFile()) continue; // never a folder or a link
      await fs.unlink(file);
      removed.push(file);
    } catch {
      /* gone already, or not ours to remove */
    }
  }
  return removed;
}

/** Removes the temporary files that interrupted saves left in the app's own folder `dir` (user data,
 *  autosave), of any file. Returns the paths removed; a missing folder removes nothing. */
export function removeOrphanedTemps(dir: string, fs: AtomicFs = realFs): Promise<string[]> {
  return removeTemps(dir, () => true, fs);
}

/** Removes the temporary files that interrupted saves of `file` (and of its backup) left beside it,
 *  following a symbolic link to its target. Returns the paths removed. */
export async function removeOrphanedTempsOf(file: string, fs: AtomicFs = realFs): Promise<string[]> {
  let target: string;
  try {
    target = await resolveLinks(file, fs);
  } catch {
    return [];
  }
  const base = path.basename(target);
  return removeTemps(path.dirname(target), (b) => b === base || b === path.basename(backupPath(target)), fs);
}

/** The file `file` names after following symbolic links (each relative to its own folder), which may not
 *  exist yet (a dangling link names the file a save creates). Rejects after MAX_LINKS links (a loop). */
export async function resolveLinks(file: string, fs: AtomicFs = realFs): Promise<string> {
  let p = path.resolve(file);
  for (let hops = 0; ; hops++) {
    let isLink: boolean;
    try {
      isLink = (await fs.lstat(p)).isSymbolicLink();
    } catch {
      return p; // a new file (or one the next step reports as unreadable)
    }
    if (!isLink) return p;
    if (hops >= MAX_LINKS) throw Object.assign(new Error(`more than ${MAX_LINKS} symbolic links`), { code: 'ELOOP' });
    p = path.resolve(path.dirname(p), await fs.readlink(p));
  }
}

function reason(e: unknown): string {
  const err = e as { code?: string; message?: string };
  return err?.code ?? err?.message ?? String(e);
}

async function unlinkQuietly(fs: AtomicFs, file: string): Promise<void> {
  try {
    await fs.unlink(file);
  } catch {
    /* already gone */
  }
}

/** Writes `data` to `file` atomically (see the top of this module). Resolves when the new file is
 *  durable; rejects with an AtomicWriteError naming the file, the original and its backup then unchanged. */
export async function atomicWriteFile(file: string, data: string | Uint8Array, options: AtomicWriteOptions = {}): Promise<void> {
  const fs: AtomicFs = options.fs ?? realFs;
  const backup = options.backup ?? true;
  const platform = options.platform ?? process.platform;

  let target: string;
  try {
    target = await resolveLinks(file, fs);
  } catch (e) {
    const why = reason(e) === 'ELOOP' ? 'it leads through a loop of symbolic links' : `its symbolic link cannot be read (${reason(e)})`;
    throw new AtomicWriteError(`Cannot save ${file}: ${why}; nothing was written.`, file, 'temp', e);
  }
  const shown = target === path.resolve(file) ? file : `${file} (a link to ${target})`;

  let previous: { mode: number } | null = null;
  try {
    const st = await fs.stat(target);
    if (!st.isFile()) throw new AtomicWriteError(`Cannot save ${shown}: it is not a regular file.`, file, 'temp');
    previous = st;
  } catch (e) {
    if (e instanceof AtomicWriteError) throw e;
    previous = null; // a new file
  }

  const tmp = tempPathFor(target);
  const bakTmp = tempPathFor(backupPath(target));
  inFlight.add(tmp);
  inFlight.add(bakTmp);
  try {
    await removeOrphanedTempsOf(target, fs);

    try {
      const fh = await fs.open(tmp, 'wx', previous ? previous.mode & 0o777 : 0o644);
      try {
        await fh.writeFile(data);
        await fh.sync();
      } finally {
        await fh.close();
      }
    } catch (e) {
      await unlinkQuietly(fs, tmp);
      throw new AtomicWriteError(`Cannot save ${shown}: writing the new version failed (${reason(e)}); the file on disk is unchanged.`, file, 'temp', e);
    }

    if (previous && backup) {
      try {
        await fs.copyFile(target, bakTmp);
        const bh = await fs.open(bakTmp, 'r+');
        try {
          await bh.sync();
        } finally {
          await bh.close();
        }
        await fs.rename(bakTmp, backupPath(target));
      } catch (e) {
        await unlinkQuietly(fs, bakTmp);
        await unlinkQuietly(fs, tmp);
        throw new AtomicWriteError(
          `Cannot save ${shown}: keeping the previous version as ${path.basename(backupPath(target))} failed (${reason(e)}); the file on disk is unchanged.`,
          file,
          'backup',
          e,
        );
      }
    }

    try {
      await fs.rename(tmp, target);
    } catch (e) {
      await unlinkQuietly(fs, tmp);
      throw new AtomicWriteError(`Cannot save ${shown}: replacing it failed (${reason(e)}); the file on disk is unchanged.`, file, 'rename', e);
    }
  } finally {
    inFlight.delete(tmp);
    inFlight.delete(bakTmp);
  }

  if (platform !== 'win32') {
    // Make the renames durable. Folders cannot be opened for fsync on Windows; elsewhere a failure
    // here does not undo the save, so it is not reported.
    try {
      const dir = await fs.open(path.dirname(target), 'r');
      try {
        await dir.sync();
      } finally {
        await dir.close();
      }
    } catch {
      /* durability of the folder entries only */
    }
  }
}
