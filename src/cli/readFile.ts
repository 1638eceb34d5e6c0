/**
 * Reading a beamline file for the command line, read-only: the size is checked with stat before any
 * byte is read (a 50 MB file is refused at once), and a file that is missing, a directory, not a
 * regular file, unreadable or not UTF-8 gets a message that names it. Nothing is ever written.
 */
import { closeSync, fstatSync, openSync, readSync, statSync } from 'node:fs';
import { DEFAULT_MAX_BYTES, checkSize } from '../beamline/index.ts';

export type FileText = { ok: true; text: string } | { ok: false; message: string };

function reason(err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  if (code === 'ENOENT') return 'no such file';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'EISDIR') return 'it is a directory, not a beamline file';
  if (code === 'ENOTDIR') return 'a part of the path is not a directory';
  if (code === 'ELOOP') return 'too many symbolic links';
  if (code === 'ENAMETOOLONG') return 'the name is too long';
  return (err as Error).message;
}

function sizeProblem(file: string, bytes: number, maxBytes: number): string | undefined {
  const p = checkSize(bytes, maxBytes);
  return p && `${file}: ${p.message}`;
}

/** The text of `file` (UTF-8, strict), or a message naming the file and what is wrong. */
export function readBeamlineFile(file: string, maxBytes: number = DEFAULT_MAX_BYTES): FileText {
  if (file === '') return { ok: false, message: 'the file name is empty' };
  let size: number;
  try {
    const st = statSync(file);
    if (st.isDirectory()) return { ok: false, message: `cannot read ${file}: it is a directory, not a beamline file` };
    if (!st.isFile()) return { ok: false, message: `cannot read ${file}: not a regular file` };
    size = st.size;
  } catch (err) {
    return { ok: false, message: `cannot read ${file}: ${reason(err)}` };
  }
  const big = sizeProblem(file, size, maxBytes);
  if (big) return { ok: false, message: big };
  let fd: number | undefined;
  try {
    fd = openSync(file, 'r');
    // The file may have grown since stat: read at most one byte past the limit and check again.
    const now = fstatSync(fd).size;
    const cap = Math.min(Math.max(now, size), maxBytes + 1);
    const buf = Buffer.alloc(cap);
    let n = 0;
    while (n < cap) {
      const got = readSync(fd, buf, n, cap - n, n);
      if (got === 0) break;
      n += got;
    }
    const grown = sizeProblem(file, n, maxBytes);
    if (grown) return { ok: false, message: grown };
    try {
      return { ok: true, text: new TextDecoder('utf-8', { fatal: true }).decode(buf.subarray(0, n)) };
    } catch {
      return { ok: false, message: `cannot read ${file}: it is not UTF-8 text (a beamline file is UTF-8 JSON)` };
    }
  } catch (err) {
    return { ok: false, message: `cannot read ${file}: ${reason(err)}` };
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}
