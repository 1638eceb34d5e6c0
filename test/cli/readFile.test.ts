import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readBeamlineFile } from '../../src/cli/readFile.ts';

const dir = mkdtempSync(join(tmpdir(), 'spinyard-read-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('readBeamlineFile', () => {
  it('returns the UTF-8 text of a file', () => {
    const f = join(dir, 'a.spinyard');
    writeFileSync(f, '{"title": "Bench A, μ-metal shield"}');
    expect(readBeamlineFile(f)).toEqual({ ok: true, text: '{"title": "Bench A, μ-metal shield"}' });
  });

  it('refuses a file over the limit from its size, naming the file', () => {
    const f = join(dir, 'b.spinyard');
    writeFileSync(f, 'x'.repeat(2 * 1024 * 1024));
    const r = readBeamlineFile(f, 1024 * 1024);
    expect(r.ok).toBe(false);
    expect(!r.ok && r.message).toBe(`${f}: the file is 2.0 MB, over the 1.0 MB limit for a beamline document; it was not read`);
  });

  it('names an empty file name, a missing file and a path through a file', () => {
    expect(readBeamlineFile('')).toEqual({ ok: false, message: 'the file name is empty' });
    const f = join(dir, 'c.spinyard');
    writeFileSync(f, '{}');
    expect(readBeamlineFile(join(f, 'inner.spinyard'))).toEqual({ ok: false, message: `cannot read ${join(f, 'inner.spinyard')}: a part of the path is not a directory` });
  });

  it('refuses a device, which is not a regular file', () => {
    expect(readBeamlineFile('/dev/null')).toEqual({ ok: false, message: 'cannot read /dev/null: not a regular file' });
  });
});
