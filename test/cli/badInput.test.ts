/**
 * Every bad input of issue 2 ("Bad input") through the command line: exit 2, every message on stderr
 * naming what and where, nothing on stdout, no stack trace, and no file written or changed.
 */
import { chmodSync, closeSync, mkdirSync, mkdtempSync, openSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync, ftruncateSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { bareLine } from '../beamline/examples.ts';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-cli-bad-'));
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
});

const mutated = (f: (d: Record<string, any>) => void): string => {
  const d = bareLine();
  f(d);
  return JSON.stringify(d, null, 2);
};

/** name, document text, what stderr must contain (the path and the gist of the message). */
const CASES: [string, string, RegExp[]][] = [
  ['malformed JSON', '{\n  "format": "spinyard.beamline",\n  "version": 1,\n  oops\n}\n', [/line 4, column 3/]],
  ['wrong format', mutated((d) => { d.format = 'other.format'; }), [/format: /, /"other\.format"/]],
  ['newer version', mutated((d) => { d.version = 99; }), [/version: /, /99/, /newer/]],
  ['unknown key', mutated((d) => { d.elements[0].colour = 'red'; }), [/elements\[0\]\.colour: unknown key/]],
  ['missing unit', mutated((d) => { d.oven.flux = '2e9'; }), [/oven\.flux: expected a rate/, /no unit/]],
  ['wrong dimension "pi/4 rad"', mutated((d) => { d.elements[1].axis = { roll: 'pi/4 rad' }; }), [/elements\[1\]\.axis\.roll: expected an angle/]],
  ['2j not an integer', mutated((d) => { d.species.spin = '1/3'; }), [/species\.spin: .*2j a non-negative integer/]],
  ['2j negative', mutated((d) => { d.species.spin = '-1/2'; }), [/species\.spin: .*non-negative/]],
  ['port label the species lacks', mutated((d) => { d.elements[0].ports['+3/2'] = 'stop'; }), [/elements\[0\]\.ports\["\+3\/2"\]: no port/]],
  ['unrouted port', mutated((d) => { delete d.elements[1].ports['-1/2']; }), [/elements\[1\]\.ports: unrouted port -1\/2/]],
  ['duplicate id', mutated((d) => { d.elements[3].id = 'D1'; }), [/elements\[3\]\.id: duplicate id "D1"/]],
  ['dangling target', mutated((d) => { d.elements[1].ports['+1/2'] = 'D9'; }), [/elements\[1\]\.ports\["\+1\/2"\]: target "D9"/]],
  ['cycle', mutated((d) => { d.elements[1].ports['-1/2'] = 'M1'; }), [/cycle M1 → M2 → M1/]],
  ['negative flux', mutated((d) => { d.oven.flux = '-2e9 /s'; }), [/oven\.flux: .*negative/]],
  ['efficiency above 1', mutated((d) => { d.elements[2].efficiency = 1.5; }), [/elements\[2\]\.efficiency: .*\[0, 1\]/]],
  ['efficiency below 0', mutated((d) => { d.elements[3].efficiency = -0.1; }), [/elements\[3\]\.efficiency: .*\[0, 1\]/]],
  ['empty file', '', [/empty/]],
  ['blank file', '  \n\n', [/empty/]],
];

function snapshot(file: string) {
  const st = statSync(file);
  return { bytes: readFileSync(file), mtimeMs: st.mtimeMs, size: st.size };
}

function expectUserError(out: ReturnType<typeof runCli>, patterns: RegExp[]) {
  expect(out.code).toBe(2);
  expect(out.stdout).toBe('');
  for (const p of patterns) expect(out.stderr).toMatch(p);
  expect(out.stderr).not.toMatch(/\n\s+at /); // no stack trace
  expect(out.stderr).not.toMatch(/internal error/);
}

describe('spinyard run / validate on bad input', () => {
  for (const [name, text, patterns] of CASES) {
    it(`rejects ${name} with exit 2 and changes no file`, () => {
      const sub = join(dir, name.replace(/\W+/g, '-'));
      mkdirSync(sub);
      const file = join(sub, 'line.spinyard');
      writeFileSync(file, text);
      const before = snapshot(file);
      for (const argv of [['run', file], ['run', file, '--json'], ['validate', file]]) {
        const out = runCli(argv);
        expectUserError(out, patterns);
        expect(out.stderr).toContain(file);
      }
      const after = snapshot(file);
      expect(after.bytes.equals(before.bytes)).toBe(true);
      expect(after.mtimeMs).toBe(before.mtimeMs);
      expect(readdirSync(sub)).toEqual(['line.spinyard']);
    });
  }

  it('lists every problem at once, each as "path: message"', () => {
    const file = join(dir, 'several.spinyard');
    writeFileSync(file, mutated((d) => {
      d.oven.flux = '-2e9 /s';
      d.elements[2].efficiency = 1.5;
      d.elements[0].colour = 'red';
    }));
    const out = runCli(['validate', file]);
    expect(out.code).toBe(2);
    const lines = out.stderr.trimEnd().split('\n');
    expect(lines[0]).toMatch(/3 problems/);
    expect(lines.slice(1).map((l) => l.trim().split(':')[0]).sort()).toEqual(['elements[0].colour', 'elements[2].efficiency', 'oven.flux']);
  });
});

describe('spinyard run on files that cannot be read', () => {
  it('names a missing file', () => {
    const file = join(dir, 'no-such.spinyard');
    expectUserError(runCli(['run', file]), [/cannot read .*no-such\.spinyard: no such file/]);
    expect(readdirSync(dir)).not.toContain('no-such.spinyard');
  });

  it('names a directory', () => {
    const sub = join(dir, 'a-folder.spinyard');
    mkdirSync(sub);
    expectUserError(runCli(['validate', sub]), [/a-folder\.spinyard: it is a directory/]);
    expect(readdirSync(sub)).toEqual([]);
  });

  it.skipIf(process.getuid?.() === 0)('names an unreadable file (not testable as root: root reads any file)', () => {
    const file = join(dir, 'locked.spinyard');
    writeFileSync(file, JSON.stringify(bareLine()));
    chmodSync(file, 0o000);
    try {
      expectUserError(runCli(['run', file]), [/locked\.spinyard: permission denied/]);
    } finally {
      chmodSync(file, 0o644);
    }
  });

  it('names a file that is not UTF-8', () => {
    const file = join(dir, 'latin1.spinyard');
    writeFileSync(file, Buffer.from([0x7b, 0x22, 0xe9, 0x22, 0x7d]));
    expectUserError(runCli(['run', file]), [/latin1\.spinyard: it is not UTF-8/]);
  });

  it('refuses a 50 MB file from its size, without reading it, and leaves it as it was', () => {
    const sub = join(dir, 'big');
    mkdirSync(sub);
    const file = join(sub, 'huge.spinyard');
    const fd = openSync(file, 'w');
    ftruncateSync(fd, 50 * 1024 * 1024); // sparse: no 50 MB written to disk
    closeSync(fd);
    const before = statSync(file);
    try {
      for (const argv of [['run', file], ['run', '--json', file], ['validate', file]]) {
        expectUserError(runCli(argv), [/huge\.spinyard: the file is 50\.0 MB, over the 20\.0 MB limit/, /not read/]);
      }
      const after = statSync(file);
      expect(after.size).toBe(before.size);
      expect(after.mtimeMs).toBe(before.mtimeMs);
      expect(readdirSync(sub)).toEqual(['huge.spinyard']);
    } finally {
      rmSync(file);
    }
  });
});
