import { describe, expect, it } from 'vitest';
import { listSamples, readSample, titleOfDocument, type SamplesFs } from '../../../electron/main/samples.ts';

const fakeFs = (files: Record<string, string>): SamplesFs => ({
  readdir: async () => Object.keys(files),
  readFile: async (f) => {
    const name = f.split(/[\\/]/).pop()!;
    if (!(name in files)) throw Object.assign(new Error('ENOENT'), { code: 'ENOENT' });
    return files[name];
  },
});

describe('listSamples', () => {
  it('lists .spinyard samples sorted, with titles where the document has one', async () => {
    const fs = fakeFs({ 'b.spinyard': '{"title":"Bench B"}', 'a.spinyard': 'not json', 'notes.txt': 'x', '.hidden.spinyard': '{}' });
    expect(await listSamples('/app/samples', fs)).toEqual([{ name: 'a.spinyard' }, { name: 'b.spinyard', title: 'Bench B' }]);
  });
  it('gives [] when the folder is missing', async () => {
    const fs: SamplesFs = { readdir: async () => Promise.reject(new Error('ENOENT')), readFile: async () => '' };
    expect(await listSamples('/nope', fs)).toEqual([]);
  });
});

describe('readSample', () => {
  it('reads a sample as a document without a path', async () => {
    expect(await readSample('/app/samples', 'b.spinyard', fakeFs({ 'b.spinyard': '{}' }))).toEqual({ name: 'b.spinyard', text: '{}' });
  });
  it('refuses names that leave the folder and reports missing samples', async () => {
    await expect(readSample('/app/samples', '../package.json', fakeFs({}))).rejects.toThrow(/not a sample name/);
    await expect(readSample('/app/samples', 'gone.spinyard', fakeFs({}))).rejects.toThrow(/gone\.spinyard/);
  });
});

describe('titleOfDocument', () => {
  it('reads the title only from JSON with a string title', () => {
    expect(titleOfDocument('{"title":"Bench B"}')).toBe('Bench B');
    expect(titleOfDocument('{"title":3}')).toBeUndefined();
    expect(titleOfDocument('nope')).toBeUndefined();
  });
});
