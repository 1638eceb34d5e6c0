// Atomic file writes: the file on disk is always either the previous version or the new one, whole.
//
//   1. write NAME.<random>.tmp in the same folder (same file system, so the rename is atomic), fsync it
//   2. copy the previous NAME to NAME.bak (when asked and when there is one)
//   3. rename the temporary file over NAME, then fsync the folder so the rename itself is durable
// Any failure before step 3 completes leaves NAME untouched and removes the temporary file.

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

/** The backup path of a file: NAME.bak beside it ("bench.spinyard" → "bench.spinyard.bak"). */
export function backupPath(file: string): string {
  return `${file}.bak`;
}

/** A temporary path beside `file`, hidden on POSIX, unique per call. */
export function tempPathFor(file: string, random: string = randomBytes(6).toString('hex')): string {
  return path.join(path.dirname(file), `.${path.basename(file)}.${random}.tmp`);
}

function reason(e: unknown): string {
  const err = e as { code?: string; message?: string };
  return err?.code ?? err?.message ?? String(e);
}

/** Writes `data` to `file` atomically (see the top of this module). Resolves when the new file is
 *  durable; rejects with an AtomicWriteError naming the file, the original then unchanged. */
export async function atomicWriteFile(file: string, data: string | Uint8Array, options: AtomicWriteOptions = {}): Promise<void> {
  const fs: AtomicFs = options.fs ?? (nodeFs as unknown as AtomicFs);
  const backup = options.backup ?? true;
  const platform = options.platform ?? process.platform;
  const tmp = tempPathFor(file);

  let previous: { mode: number } | null = null;
  try {
    const st = await fs.stat(file);
    if (!st.isFile()) throw new AtomicWriteError(`Cannot save ${file}: it is not a regular file.`, file, 'temp');
    previous = st;
  } catch (e) {
    if (e instanceof AtomicWriteError) throw e;
    previous = null; // a new file
  }

  const removeTemp = async () => {
    try {
      await fs.unlink(tmp);
    } catch {
      /* already gone */
    }
  };

  try {
    const fh = await fs.open(tmp, 'wx', previous ? previous.mode & 0o777 : 0o644);
    try {
      await fh.writeFile(data);
      await fh.sync();
    } finally {
      await fh.close();
    }
  } catch (e) {
    await removeTemp();
    throw new AtomicWriteError(`Cannot save ${file}: writing the new version failed (${reason(e)}); the file on disk is unchanged.`, file, 'temp', e);
  }

  if (previous && backup) {
    try {
      await fs.copyFile(file, backupPath(file));
    } catch (e) {
      await removeTemp();
      throw new AtomicWriteError(`Cannot save ${file}: keeping the previous version as ${path.basename(backupPath(file))} failed (${reason(e)}); the file on disk is unchanged.`, file, 'backup', e);
    }
  }

  try {
    await fs.rename(tmp, file);
  } catch (e) {
    await removeTemp();
    throw new AtomicWriteError(`Cannot save ${file}: replacing it failed (${reason(e)}); the file on disk is unchanged.`, file, 'rename', e);
  }

  if (platform !== 'win32') {
    // Make the rename durable. Folders cannot be opened for fsync on Windows; elsewhere a failure
    // here does not undo the save, so it is not reported.
    try {
      const dir = await fs.open(path.dirname(file), 'r');
      try {
        await dir.sync();
      } finally {
        await dir.close();
      }
    } catch {
      /* durability of the folder entry only */
    }
  }
}
