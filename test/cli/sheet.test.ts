/** `spinyard sheet FILE`: the setup sheet as HTML on stdout, problems on stderr, no file written. */
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { COMMAND_HELP, USAGE } from '../../src/cli/usage.ts';
import { DESIGN_V1 } from '../beamline/examples.ts';

let dir: string;
let good: string;
let badFile: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-sheet-'));
  good = join(dir, 'roll.spinyard');
  writeFileSync(good, DESIGN_V1);
  badFile = join(dir, 'typo.spinyard');
  const doc = JSON.parse(DESIGN_V1);
  doc.elements[0].gradiant = '250 T/m';
  writeFileSync(badFile, JSON.stringify(doc, null, 2));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('spinyard sheet FILE', () => {
  it('prints one complete HTML document of the sheet and exits 0', () => {
    const out = runCli(['sheet', good]);
    expect(out.code).toBe(0);
    expect(out.stderr).toBe('');
    expect(out.stdout.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(out.stdout.trimEnd().endsWith('</html>')).toBe(true);
    expect(out.stdout).toContain('<h1>Bench B, roll scan</h1>');
    for (const id of ['M1', 'M2', 'D1', 'D2']) expect(out.stdout).toContain(`<th scope="row">${id}</th>`);
    expect(out.stdout).toContain('local rules and licensed practice take precedence');
    expect(out.stdout).toMatch(/generated \d{4}-\d\d-\d\d \d\d:\d\d UTC from /);
  });

  it('writes no file and leaves the input as it was', () => {
    const before = readdirSync(dir).sort();
    runCli(['sheet', good]);
    runCli(['sheet', badFile]);
    expect(readdirSync(dir).sort()).toEqual(before);
    expect(readFileSync(good, 'utf8')).toBe(DESIGN_V1);
  });

  it('an invalid file: every problem on stderr with its path, nothing on stdout, exit 2', () => {
    const out = runCli(['sheet', badFile]);
    expect(out.code).toBe(2);
    expect(out.stdout).toBe('');
    expect(out.stderr).toContain('not a valid beamline');
    expect(out.stderr).toContain('elements[0].gradiant');
  });

  it('a missing file or a wrong number of arguments: exit 2, nothing on stdout', () => {
    for (const argv of [['sheet', join(dir, 'none.spinyard')], ['sheet'], ['sheet', good, good], ['sheet', '--bogus', good]]) {
      const out = runCli(argv);
      expect(out.code, argv.join(' ')).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr.length).toBeGreaterThan(10);
    }
  });

  it('--help and `help sheet` print its use; the overview lists it', () => {
    for (const argv of [['sheet', '--help'], ['help', 'sheet']]) {
      const out = runCli(argv);
      expect(out.code).toBe(0);
      expect(out.stdout).toBe(COMMAND_HELP.sheet);
    }
    expect(COMMAND_HELP.sheet).toMatch(/^Usage: spinyard sheet FILE/);
    expect(COMMAND_HELP.sheet).toContain('Without -o the sheet is one self-contained HTML document on stdout and no file is written');
    expect(USAGE).toMatch(/spinyard sheet FILE \[-o OUT\.pdf\|OUT\.html\] \[--paper a4\|letter\]\s+the setup sheet/);
  });
});
