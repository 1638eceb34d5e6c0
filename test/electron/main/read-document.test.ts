import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readDocumentFile } from '../../../electron/main/read-document.ts';
import { MAX_DOCUMENT_BYTES } from '../../../src/host/document-text.ts';

let dir: string;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-open-'));
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe('readDocumentFile', () => {
  it('reads a UTF-8 document', async () => {
    const f = path.join(dir, 'bench-a.spinyard');
    await fs.writeFile(f, '{"title": "Bench A, μ-metal shield"}');
    expect(await readDocumentFile(f)).toEqual({ path: f, name: 'bench-a.spinyard', text: '{"title": "Bench A, μ-metal shield"}' });
  });

  it('refuses invalid UTF-8 instead of replacing it, naming the file', async () => {
    const f = path.join(dir, 'latin1.spinyard');
    await fs.writeFile(f, Uint8Array.from([0x7b, 0x22, 0xb5, 0x22, 0x7d])); // {"µ"} in Latin-1
    await expect(readDocumentFile(f)).rejects.toThrow(`Cannot open ${f}: it is not UTF-8 text (a beamline file is UTF-8 JSON).`);
  });

  it('reads a file of exactly the limit and refuses one byte more from its size', async () => {
    const f = path.join(dir, 'table.spinyard');
    await fs.writeFile(f, 'x'.repeat(MAX_DOCUMENT_BYTES));
    expect((await readDocumentFile(f)).text.length).toBe(MAX_DOCUMENT_BYTES);
    await fs.appendFile(f, 'x');
    await expect(readDocumentFile(f)).rejects.toThrow(`Cannot open ${f}: the file is 20.0 MB, over the 20.0 MB limit for a beamline document; it was not read.`);
  });

  it('refuses a file that grew past the limit after its size was taken', async () => {
    const f = path.join(dir, 'growing.spinyard');
    await fs.writeFile(f, 'x'.repeat(1000));
    const growing = { ...fs, stat: async (p: string) => ({ ...(await fs.stat(p)), isFile: () => true, isDirectory: () => false, size: 10 }) };
    await expect(readDocumentFile(f, { fs: growing, maxBytes: 100 })).rejects.toThrow(/over the 0\.0 MB limit/);
  });

  it('names a missing file, a folder and a device', async () => {
    await expect(readDocumentFile(path.join(dir, 'none.spinyard'))).rejects.toThrow(`Cannot open ${path.join(dir, 'none.spinyard')}: no such file.`);
    await expect(readDocumentFile(dir)).rejects.toThrow(`Cannot open ${dir}: it is a folder, not a beamline file.`);
    if (process.platform !== 'win32') await expect(readDocumentFile('/dev/null')).rejects.toThrow('Cannot open /dev/null: not a regular file.');
  });
});
