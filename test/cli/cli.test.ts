/** The command line in-process: runCli(argv) → {code, stdout, stderr} for every command. */
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { version } from '../../src/cli/quick.ts';
import { runDocumentText, levelsListing } from '../../src/engine/index.ts';
import { DESIGN_V1, bareLine } from '../beamline/examples.ts';

let dir: string;
let v1: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-cli-'));
  v1 = join(dir, 'roll.spinyard');
  writeFileSync(v1, DESIGN_V1);
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
});

describe('spinyard run FILE', () => {
  it('prints the leaves and detectors as aligned tables', () => {
    const out = runCli(['run', v1]);
    expect(out.code).toBe(0);
    expect(out.stderr).toBe('');
    const lines = out.stdout.split('\n');
    expect(lines[0]).toContain('Bench B, roll scan');
    const head = lines.findIndex((l) => l.startsWith('path'));
    expect(lines[head]).toMatch(/^path\s+target\s+yield\s+rate \(\/s\)$/);
    // the two-magnet reference document of docs/design.md: D1 = ½·cos²(30°) = 0.375, rate 2e9 × 0.375 × 0.9
    const d1 = lines[head + 1];
    expect(d1).toMatch(/^M1:\+1\/2 M2:\+1\/2\s+D1\s+0\.375\s+6\.75e8$/);
    // columns line up: every row of the table has the rate column ending at the same place
    const rows = lines.slice(head, head + 4);
    expect(new Set(rows.map((r) => r.length)).size).toBe(1);
    const det = lines.findIndex((l) => l.startsWith('detector'));
    expect(lines[det]).toMatch(/detector\s+yield\s+rate \(\/s\)\s+counts ± σ\s+S\/B\s+time to 1 %/);
    // D1: rate 6.75e8 + 3 /s background, counts for 10 s, σ = √counts = 82158.5 to 2 figures and the counts to its place
    expect(lines[det + 1]).toMatch(/^D1\s+0\.375\s+6\.75e8\s+6\.750000e9 ± 8\.2e4 in 10 s/);
    expect(out.stdout).toMatch(/lost: 0 of the oven flux \(2e9 \/s\)/);
    expect(out.stdout).toMatch(/quadrature: single speed/);
  });

  it('--json prints result format v1 exactly and nothing else', () => {
    const out = runCli(['run', v1, '--json']);
    expect(out.code).toBe(0);
    expect(out.stderr).toBe('');
    const expected = runDocumentText(DESIGN_V1);
    if (!expected.ok) throw new Error('the design example must run');
    expect(out.stdout).toBe(`${JSON.stringify(expected.result, null, 2)}\n`);
    const r = JSON.parse(out.stdout);
    expect(r.format).toBe('spinyard.result');
    expect(r.version).toBe(1);
    expect(r.leaves[0]).toMatchObject({ path: ['M1:+1/2', 'M2:+1/2'], target: 'D1' });
    expect(r.leaves[0].yield).toBeCloseTo(0.375, 12);
  });

  it('takes --json before the file too', () => {
    expect(runCli(['run', '--json', v1]).stdout).toBe(runCli(['run', v1, '--json']).stdout);
  });

  it('prints warnings after the tables', () => {
    const d = bareLine();
    d.elements[1].axis = { theta: '60 deg', phi: '90 deg' };
    const f = join(dir, 'tilted.spinyard');
    writeFileSync(f, JSON.stringify(d));
    const out = runCli(['run', f]);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/\nwarning: elements\[1\]\.axis: has a component along the beam/);
    expect(out.stdout.indexOf('warning:')).toBeGreaterThan(out.stdout.indexOf('Detectors'));
  });

  it('prints displacement, spread and captured for a line with geometry, in mm', () => {
    const out = runCli(['run', 'samples/bench-g-silver-split.spinyard']);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/path\s+target\s+yield\s+rate \(\/s\)\s+x \(mm\)\s+z \(mm\)\s+rms x \(mm\)\s+rms z \(mm\)\s+captured/);
    expect(out.stdout).toMatch(/resolved along z/);
    expect(out.stdout).toMatch(/Cautions\n {2}- Silver oven/);
  });

  it('without a file or with two files is a usage error', () => {
    for (const argv of [['run'], ['run', 'a', 'b']]) {
      const out = runCli(argv);
      expect(out.code).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr).toMatch(/spinyard run: (missing FILE|unexpected argument "b")/);
    }
  });

  it('rejects an unknown option', () => {
    const out = runCli(['run', v1, '--jsn']);
    expect(out).toMatchObject({ code: 2, stdout: '' });
    expect(out.stderr).toMatch(/unknown option --jsn: run takes --json, --accept-cost, --help/);
  });
});

describe('spinyard validate FILE', () => {
  it('prints "FILE: valid"', () => {
    expect(runCli(['validate', v1])).toEqual({ code: 0, stdout: `${v1}: valid\n`, stderr: '' });
  });

  it('prints the warnings of a valid file', () => {
    const d = bareLine();
    d.oven.state = { kind: 'populations', axis: { roll: '0 deg' }, p: { '+1/2': 0.7, '-1/2': 0.5 } };
    const f = join(dir, 'pops.spinyard');
    writeFileSync(f, JSON.stringify(d));
    const out = runCli(['validate', f]);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(new RegExp(`^${f.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: valid\nwarning: oven\\.state`));
  });

  it('--json is not an option of validate', () => {
    expect(runCli(['validate', v1, '--json']).code).toBe(2);
  });
});

describe('spinyard levels NAME --field B', () => {
  it('--json prints the levels listing of docs/design.md exactly', () => {
    const out = runCli(['levels', 'Rb-87', '--field', '0.5 T', '--json']);
    expect(out.code).toBe(0);
    expect(out.stderr).toBe('');
    expect(out.stdout).toBe(`${JSON.stringify(levelsListing('Rb-87', 0.5), null, 2)}\n`);
    const l = JSON.parse(out.stdout);
    expect(l.species).toBe('Rb-87');
    expect(l.field).toBe(0.5);
    expect(l.levels).toHaveLength(8);
    expect(Object.keys(l.levels[0])).toEqual(['lowField', 'highField', 'energy', 'moment']);
    expect(l.levels[0]).toMatchObject({ lowField: 'F=2,mF=+2', highField: 'mJ=+1/2,mI=+3/2' });
  });

  it('reads the field with units through the document layer (gauss, mT, --field=…)', () => {
    const a = JSON.parse(runCli(['levels', 'Cs-133', '--field', '50 G', '--json']).stdout);
    const b = JSON.parse(runCli(['levels', 'Cs-133', '--field=5 mT', '--json']).stdout);
    expect(a.field).toBeCloseTo(0.005, 15);
    expect(b).toEqual(a);
  });

  it('refuses a field beyond the documents\' range instead of printing Infinity', () => {
    const out = runCli(['levels', 'Rb-87', '--field', '1e300 T']);
    expect(out).toEqual({ code: 2, stdout: '', stderr: 'spinyard levels: --field: the field size must be at most 1000 T, got 1e300 T\n' });
    expect(runCli(['levels', 'Rb-87', '--field', '1000 T']).stdout).not.toMatch(/NaN|Infinity/);
  });

  it('prints a table without --json', () => {
    const out = runCli(['levels', 'Rb-87', '--field', '0.5 T']);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/^Rb-87 at B = 0\.5 T/);
    expect(out.stdout).toMatch(/F=2,mF=\+2\s+mJ=\+1\/2,mI=\+3\/2\s+9558\.\d+\s+-0\.9996/);
  });

  it('rejects a missing, unitless, wrongly dimensioned or negative field, and an unknown species', () => {
    const cases: [string[], RegExp][] = [
      [['levels', 'Rb-87'], /missing --field/],
      [['levels', 'Rb-87', '--field'], /--field needs a value/],
      [['levels', 'Rb-87', '--field', '0.5'], /--field: expected a magnetic field, got "0\.5" with no unit/],
      [['levels', 'Rb-87', '--field', '0.5 m'], /--field: expected a magnetic field/],
      [['levels', 'Rb-87', '--field', '-0.5 T'], /--field: .*≥ 0 T/],
      [['levels', 'Rb-88', '--field', '0.5 T'], /unknown species "Rb-88"; known species: .*Rb-87/],
      [['levels', '--field', '0.5 T'], /missing species NAME/],
    ];
    for (const [argv, re] of cases) {
      const out = runCli(argv);
      expect(out.code, argv.join(' ')).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr).toMatch(re);
    }
  });
});

describe('spinyard species [NAME]', () => {
  it('lists the library without a name', () => {
    const out = runCli(['species']);
    expect(out.code).toBe(0);
    for (const n of ['Rb-87', 'Cs-133', 'Ag-107', 'He-4*']) expect(out.stdout).toContain(n);
  });

  it('prints one species with its sources and cautions', () => {
    const out = runCli(['species', 'Cs-133']);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/Cautions:/);
  });

  it('names the known species for an unknown one, exit 2', () => {
    const out = runCli(['species', 'Unobtainium']);
    expect(out.code).toBe(2);
    expect(out.stdout).toBe('');
    expect(out.stderr).toMatch(/unknown species "Unobtainium"; known species: H, D/);
  });
});

describe('help, version and unknown commands', () => {
  it('--help and help print the usage on stdout', () => {
    for (const argv of [['--help'], ['-h'], ['help']]) {
      const out = runCli(argv);
      expect(out.code).toBe(0);
      expect(out.stdout).toMatch(/^spinyard: /);
      for (const c of ['run FILE [--json]', 'validate FILE', 'levels NAME --field B', 'species [NAME]']) expect(out.stdout).toContain(c);
    }
  });

  it('COMMAND --help and help COMMAND print that command\'s help', () => {
    for (const c of ['run', 'validate', 'levels', 'species']) {
      const a = runCli([c, '--help']);
      expect(a.code).toBe(0);
      expect(a.stdout).toMatch(new RegExp(`^Usage: spinyard ${c}`));
      expect(runCli(['help', c])).toEqual(a);
    }
  });

  it('--version prints the package version', () => {
    expect(runCli(['--version'])).toEqual({ code: 0, stdout: `spinyard ${version()}\n`, stderr: '' });
    expect(version()).toMatch(/^\d+\.\d+\.\d+/);
  });

  it('no arguments, an unknown command or an unknown top-level option: usage error on stderr', () => {
    for (const [argv, re] of [[[], /Usage:/], [['optimise'], /unknown command "optimise"/], [['--verbose'], /unknown option --verbose/], [['help', 'optimise'], /unknown command "optimise"/]] as const) {
      const out = runCli(argv);
      expect(out.code).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr).toMatch(re);
    }
  });

  it('writes no file in the working directory', () => {
    const before = readdirSync('.').sort();
    const inDir = readdirSync(dir).sort();
    runCli(['run', v1]);
    runCli(['run', v1, '--json']);
    runCli(['levels', 'Rb-87', '--field', '1 T', '--json']);
    expect(readdirSync('.').sort()).toEqual(before);
    expect(readdirSync(dir).sort()).toEqual(inDir);
  });
});
