// Opening a document file in the shell: the command line's rules (src/host/document-text.ts): the size
// is checked before any byte is read and again after (the file may grow meanwhile), and the text is
// strict UTF-8. Every refusal names the file; nothing is replaced or guessed.

import * as nodeFs from 'node:fs/promises';
import * as path from 'node:path';
import type { HostDocument } from '../../src/host/contract.ts';
import { MAX_DOCUMENT_BYTES, NOT_UTF8, decodeUtf8Strict, documentSizeProblem } from '../../src/host/document-text.ts';

export interface ReadFs {
  stat(file: string): Promise<{ size: number; isFile(): boolean; isDirectory(): boolean }>;
  open(file: string, flags: string): Promise<{
    read(buffer: Uint8Array, offset: number, length: number, position: number): Promise<{ bytesRead: number }>;
    close(): Promise<void>;
  }>;
}

export interface ReadOptions {
  fs?: ReadFs;
  maxBytes?: number;
}

function why(e: unknown): string {
  const code = (e as { code?: string }).code;
  if (code === 'ENOENT') return 'no such file';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'ENOTDIR') return 'a part of the path is not a folder';
  if (code === 'ELOOP') return 'too many symbolic links';
  return code ?? (e as Error).message;
}

/** The document at `file`, or an Error whose message names the file and what is wrong. */
export async function readDocumentFile(file: string, options: ReadOptions = {}): Promise<HostDocument> {
  const fs = options.fs ?? (nodeFs as unknown as ReadFs);
  const maxBytes = options.maxBytes ?? MAX_DOCUMENT_BYTES;
  const refuse = (reason: string) => new Error(`Cannot open ${file}: ${reason}.`);
  let size: number;
  try {
    const st = await fs.stat(file);
    if (st.isDirectory()) throw refuse('it is a folder, not a beamline file');
    if (!st.isFile()) throw refuse('not a regular file');
    size = st.size;
  } catch (e) {
    throw e instanceof Error && e.message.startsWith('Cannot open') ? e : refuse(why(e));
  }
  const big = documentSizeProblem(size, maxBytes);
  if (big) throw refuse(big);

  let bytes: Uint8Array;
  let fh: Awaited<ReturnType<ReadFs['open']>> | undefined;
  try {
    fh = await fs.open(file, 'r');
    // Reads until the end, or one byte past the limit when the file grew since stat.
    let buf = new Uint8Array(Math.min(Math.max(size, 64 * 1024), maxBytes + 1));
    let n = 0;
    for (;;) {
      if (n === buf.length) {
        if (buf.length > maxBytes) break;
        const bigger = new Uint8Array(Math.min(buf.length * 2, maxBytes + 1));
        bigger.set(buf);
        buf = bigger;
      }
      const { bytesRead } = await fh.read(buf, n, buf.length - n, n);
      if (bytesRead === 0) break;
      n += bytesRead;
    }
    bytes = buf.subarray(0, n);
  } catch (e) {
    throw refuse(why(e));
  } finally {
    await fh?.close().catch(() => {});
  }
  const late = documentSizeProblem(bytes.length, maxBytes);
  if (late) throw refuse(late);
  const text = decodeUtf8Strict(bytes);
  if (text === null) throw refuse(NOT_UTF8);
  return { path: file, name: path.basename(file), text };
}
