/**
 * `spinyard sheet FILE -o OUT.pdf|OUT.html [--paper a4|letter]`: runCli only says what to write; deliver
 * writes it atomically, prints PDFs with the found browser, and leaves nothing behind when that fails.
 */
import { chmodSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { deliver } from '../../src/cli/deliver.ts';
import { BrowserMissingError } from '../../src/cli/find-browser.ts';
import { isSameFile, outputFormatOf, writeFileAtomic } from '../../src/cli/output.ts';
import { withPaper } from '../../src/cli/pdf.ts';
import { DESIGN_V1 } from '../beamline/examples.ts';

let dir: string;
let doc: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-sheet-out-'));
  doc = join(dir, 'roll.spinyard');
  writeFileSync(doc, DESIGN_V1);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const files = () => readdirSync(dir).sort();

describe('spinyard sheet -o (runCli: what to write, nothing written)', () => {
  it('-o OUT.pdf and --output=OUT.html return the sheet to write with its format, and write nothing', () => {
    const before = files();
    const pdf = runCli(['sheet', doc, '-o', join(dir, 'roll.pdf')]);
    expect(pdf.code).toBe(0);
    expect(pdf.stdout).toBe('');
    expect(pdf.file).toMatchObject({ path: join(dir, 'roll.pdf'), format: 'pdf', input: doc });
    expect(pdf.file?.html).toContain('@page { size: A4 portrait; }');
    const html = runCli(['sheet', doc, `--output=${join(dir, 'Roll.HTML')}`, '--paper', 'letter']);
    expect(html.file).toMatchObject({ format: 'html' });
    expect(html.file?.html).toContain('@page { size: letter portrait; }');
    expect(files()).toEqual(before);
  });

  it('without -o the HTML goes to stdout as before, on A4', () => {
    const out = runCli(['sheet', doc]);
    expect(out.file).toBeUndefined();
    expect(out.stdout).toContain('@page { size: A4 portrait; }');
  });

  it('refuses an unknown paper, an output that is neither .pdf nor .html, an empty name, and the input itself', () => {
    const cases: [string[], string][] = [
      [['sheet', doc, '--paper', 'a3', '-o', join(dir, 'x.pdf')], 'spinyard sheet: --paper: expected a4 or letter, got "a3"\n'],
      [['sheet', doc, '-o', join(dir, 'x.txt')], `spinyard sheet: -o ${join(dir, 'x.txt')}: the output must end in .pdf or .html (the sheet is printed to PDF or written as HTML)\n`],
      [['sheet', doc, '-o', ''], 'spinyard sheet: -o: the output file name is empty\n'],
      [['sheet', doc, '-o'], 'spinyard sheet: --output needs a value\nRun "spinyard sheet --help" for its use.\n'],
    ];
    for (const [argv, stderr] of cases) {
      const out = runCli(argv);
      expect(out, argv.join(' ')).toEqual({ code: 2, stdout: '', stderr });
    }
  });

  it('never writes over the input document, also when it is named .html or reached through a link', () => {
    const asHtml = join(dir, 'line.html');
    writeFileSync(asHtml, DESIGN_V1);
    const link = join(dir, 'link.pdf');
    symlinkSync(asHtml, link);
    for (const [input, output] of [[asHtml, asHtml], [asHtml, join(dir, '.', 'line.html')], [asHtml, link]]) {
      const out = runCli(['sheet', input, '-o', output]);
      expect(out.code, output).toBe(2);
      expect(out.stderr).toContain('is the input document');
      expect(out.file).toBeUndefined();
    }
    expect(readFileSync(asHtml, 'utf8')).toBe(DESIGN_V1);
    rmSync(link);
    rmSync(asHtml);
  });

  it('an invalid document gives its problems and no file to write', () => {
    const bad = join(dir, 'bad.spinyard');
    writeFileSync(bad, DESIGN_V1.replace('"600 m/s"', '"600 m"'));
    const out = runCli(['sheet', bad, '-o', join(dir, 'bad.pdf')]);
    expect(out.code).toBe(2);
    expect(out.file).toBeUndefined();
    expect(out.stderr).toContain('oven.velocity.speed');
    rmSync(bad);
  });
});

describe('deliver: the write', () => {
  it('writes the HTML atomically and says where', async () => {
    const target = join(dir, 'sheet.html');
    const out = await deliver(runCli(['sheet', doc, '-o', target]));
    expect(out).toEqual({ code: 0, stdout: `${target}: setup sheet of ${doc} (HTML)\n`, stderr: '' });
    expect(readFileSync(target, 'utf8')).toMatch(/^<!DOCTYPE html>/);
    expect(files().filter((f) => f.endsWith('.part'))).toEqual([]);
    rmSync(target);
  });

  it('a missing browser: one line, exit 2, no file and no temporary file, an old OUT untouched', async () => {
    const target = join(dir, 'old.pdf');
    writeFileSync(target, 'the previous sheet');
    const before = files();
    const missing = async () => {
      throw new BrowserMissingError('no Chromium or Chrome found: set SPINYARD_BROWSER to a browser executable');
    };
    const out = await deliver(runCli(['sheet', doc, '-o', target]), { find: missing });
    expect(out).toEqual({ code: 2, stdout: '', stderr: 'spinyard sheet: no Chromium or Chrome found: set SPINYARD_BROWSER to a browser executable\n' });
    expect(files()).toEqual(before);
    expect(readFileSync(target, 'utf8')).toBe('the previous sheet');
    rmSync(target);
  });

  it.runIf(process.platform !== 'win32')('a browser that fails to start: one line naming it, exit 1, nothing left behind', async () => {
    const broken = join(dir, 'broken-browser');
    writeFileSync(broken, '#!/bin/sh\necho "cannot open display" >&2\nexit 3\n');
    chmodSync(broken, 0o755);
    const before = files();
    const found = async () => ({ executablePath: broken, source: 'environment' as const, description: `browser from SPINYARD_BROWSER: ${broken}` });
    const out = await deliver(runCli(['sheet', doc, '-o', join(dir, 'never.pdf')]), { find: found });
    expect(out.code).toBe(1);
    expect(out.stdout).toBe('');
    expect(out.stderr).toMatch(new RegExp(`^spinyard sheet: cannot print the PDF with the browser from SPINYARD_BROWSER: ${broken}: .+\\n$`));
    expect(out.stderr.split('\n')).toHaveLength(2);
    expect(files()).toEqual(before);
    rmSync(broken);
  });

  it('a folder that does not exist: exit 1 with the reason, nothing written', async () => {
    const out = await deliver(runCli(['sheet', doc, '-o', join(dir, 'no-such-folder', 'x.html')]));
    expect(out).toEqual({ code: 1, stdout: '', stderr: `spinyard sheet: cannot write ${join(dir, 'no-such-folder', 'x.html')}: the folder does not exist\n` });
  });
});

describe('output helpers', () => {
  it('outputFormatOf reads the extension, any case', () => {
    expect(outputFormatOf('a/b.PDF')).toBe('pdf');
    expect(outputFormatOf('b.htm')).toBe('html');
    expect(outputFormatOf('b.pdf.txt')).toBeUndefined();
    expect(outputFormatOf('pdf')).toBeUndefined();
  });

  it('isSameFile sees one file through another spelling and a link, and two files as two', () => {
    const a = join(dir, 'a.txt');
    writeFileSync(a, 'a');
    expect(isSameFile(a, join(dir, '..', dir.split('/').pop()!, 'a.txt'))).toBe(true);
    expect(isSameFile(a, join(dir, 'b.txt'))).toBe(false);
    rmSync(a);
  });

  it('writeFileAtomic replaces the whole file, and a failed write leaves the old one and no temporary file', () => {
    const p = join(dir, 'w.html');
    writeFileAtomic(p, 'first');
    writeFileAtomic(p, new Uint8Array([0x73, 0x65, 0x63]));
    expect(readFileSync(p, 'utf8')).toBe('sec');
    expect(() => writeFileAtomic(join(dir, 'missing', 'w.html'), 'x')).toThrow();
    expect(files().filter((f) => f.endsWith('.part'))).toEqual([]);
    rmSync(p);
  });

  it('withPaper puts the paper rule before </head> (after the sheet\'s own rules) or in front', () => {
    expect(withPaper('<html><head><style>@page{size:A4}</style></head><body></body></html>', 'letter')).toBe(
      '<html><head><style>@page{size:A4}</style><style>@page { size: letter portrait; }</style></head><body></body></html>',
    );
    expect(withPaper('<p>x</p>', 'a4')).toBe('<style>@page { size: A4 portrait; }</style><p>x</p>');
  });
});
