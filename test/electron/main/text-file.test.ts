import { describe, expect, it } from 'vitest';
import { textFileDialog, textFileTarget } from '../../../electron/main/text-file.ts';

describe('textFileDialog', () => {
  it('suggests the export beside the window\'s document, filtered to its type', () => {
    expect(textFileDialog('bench-c-ports.csv', '/lab/lines/bench-c.spinyard', '/home/lab/Documents')).toEqual({
      title: 'Save bench-c-ports.csv',
      defaultPath: '/lab/lines/bench-c-ports.csv',
      filters: [{ name: 'CSV (comma-separated values)', extensions: ['csv'] }, { name: 'All files', extensions: ['*'] }],
      properties: ['showOverwriteConfirmation', 'createDirectory'],
    });
  });
  it('suggests the documents folder for an untitled line', () => {
    expect(textFileDialog('untitled-ports.csv', undefined, '/home/lab/Documents').defaultPath).toBe('/home/lab/Documents/untitled-ports.csv');
    expect(textFileDialog('notes.TXT', undefined, '/d').filters[0]).toEqual({ name: 'Text', extensions: ['txt'] });
  });
});

describe('textFileTarget', () => {
  it('keeps the path picked, adding the export\'s extension when the name has none', () => {
    expect(textFileTarget('/lab/out/ports.csv', 'a-ports.csv')).toBe('/lab/out/ports.csv');
    expect(textFileTarget('/lab/out/ports', 'a-ports.csv')).toBe('/lab/out/ports.csv');
    expect(textFileTarget('/lab/out/ports.txt', 'a-ports.csv')).toBe('/lab/out/ports.txt');
  });
  it('refuses to write an export over a beamline document', () => {
    expect(() => textFileTarget('/lab/lines/bench-c.spinyard', 'bench-c-ports.csv')).toThrow(/bench-c\.spinyard.*beamline document.*\.csv/);
    expect(() => textFileTarget('/lab/lines/B.SPINYARD', 'b-ports.csv')).toThrow(/beamline document/);
  });
});
