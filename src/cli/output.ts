/**
 * The one file the command line writes: `spinyard sheet FILE -o OUT.pdf|OUT.html`. The output is written
 * atomically (a temporary file beside it, flushed, then renamed over OUT), so OUT is either the old file or
 * the complete new one, and nothing is left behind when a step fails. The input document is never the output.
 */
import { closeSync, fsyncSync, openSync, realpathSync, renameSync, rmSync, writeSync } from 'node:fs';
import { basename, dirname, extname, join, resolve } from 'node:path';

export type Paper = 'a4' | 'letter';
export type OutputFormat = 'pdf' | 'html';

/** The format an output path asks for by its extension, or undefined. */
export function outputFormatOf(path: string): OutputFormat | undefined {
  const ext = extname(path).toLowerCase();
  if (ext === '.pdf') return 'pdf';
  if (ext === '.html' || ext === '.htm') return 'html';
  return undefined;
}

function real(path: string): string {
  const abs = resolve(path);
  try {
    return realpathSync(abs);
  } catch {
    // a file that does not exist yet: its folder's real path and its name
    try {
      return join(realpathSync(dirname(abs)), basename(abs));
    } catch {
      return abs;
    }
  }
}

/** True when writing `output` would replace `input` (the same file, also through links or another spelling). */
export function isSameFile(input: string, output: string): boolean {
  return real(input) === real(output);
}

/** The temporary file a write of `path` goes through: hidden, beside it, unique to this process. */
export function tempPathFor(path: string): string {
  const abs = resolve(path);
  return join(dirname(abs), `.${basename(abs)}.${process.pid}.${Date.now().toString(36)}.part`);
}

/** Writes `data` to `path` atomically; on any failure the temporary file is removed and the error rethrown. */
export function writeFileAtomic(path: string, data: string | Uint8Array): void {
  const tmp = tempPathFor(path);
  let fd: number | undefined;
  try {
    fd = openSync(tmp, 'wx', 0o644);
    const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
    let off = 0;
    while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off);
    fsyncSync(fd);
    closeSync(fd);
    fd = undefined;
    renameSync(tmp, path);
  } catch (e) {
    if (fd !== undefined) closeSync(fd);
    rmSync(tmp, { force: true });
    throw e;
  }
}

/** A message for a failed write of `path`, in the words of the command line. */
export function writeFailure(path: string, err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  const why =
    code === 'ENOENT' ? 'the folder does not exist'
    : code === 'EACCES' || code === 'EPERM' ? 'permission denied'
    : code === 'EISDIR' ? 'it is a directory'
    : code === 'ENOSPC' ? 'no space left on the device'
    : code === 'EROFS' ? 'the file system is read-only'
    : (err as Error).message;
  return `cannot write ${path}: ${why}`;
}
