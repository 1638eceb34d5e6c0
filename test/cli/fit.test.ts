/** `spinyard fit`: the report, the fitted document, and messages. */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { deliver } from '../../src/cli/deliver.ts';
import { parseBeamlineText } from '../../src/beamline/index.ts';

const C = new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url).pathname;
const DATA = new URL('../../samples/bench-c-roll-calibration.counts.csv', import.meta.url).pathname;
let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-fit-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('spinyard fit FILE --data CSV --free …', () => {
  it('finds the roll and flux the demonstration data were made with (31.2 deg, 1.93e9 /s) within 3σ', () => {
    const out = runCli(['fit', C, '--data', DATA, '--free', 'M2.axis.roll,oven.flux', '--json']);
    expect(out.stderr).toBe('');
    const f = JSON.parse(out.stdout);
    expect(f.format).toBe('spinyard.fit');
    const [roll, flux] = f.parameters;
    expect(Math.abs(roll.value * 180 / Math.PI - 31.2)).toBeLessThan(3 * roll.sigma * 180 / Math.PI);
    expect(Math.abs(flux.value - 1.93e9)).toBeLessThan(3 * flux.sigma);
    expect(f.pValue).toBeGreaterThan(0.001);
    const text = runCli(['fit', C, '--data', DATA, '--free', 'M2.axis.roll,oven.flux']).stdout;
    expect(text).toMatch(/M2\.axis\.roll\s+31\.\d+ deg\s+0\.000\d+ deg/);
    expect(text).toMatch(/Goodness of fit: deviance [\d.]+ on 28 degrees of freedom, p = /);
  });

  it('writes the fitted document with -o, which reads and keeps everything else', async () => {
    const target = join(dir, 'fitted.spinyard');
    const out = await deliver(runCli(['fit', C, '--data', DATA, '--free', 'M2.axis.roll=25 deg..35 deg', '-o', target]));
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(new RegExp(`${target}: fitted document of `));
    const doc = JSON.parse(readFileSync(target, 'utf8'));
    expect(doc.elements[1].axis.roll).toMatch(/^31\.\d+ deg$/);
    expect(doc.tolerances).toEqual(JSON.parse(readFileSync(C, 'utf8')).tolerances);
    expect(parseBeamlineText(readFileSync(target, 'utf8')).ok).toBe(true);
  });

  it('names what is wrong', () => {
    const badData = join(dir, 'bad.csv');
    writeFileSync(badData, 'detector,counts\nD7,3\n');
    for (const [argv, msg] of [
      [['fit', C, '--free', 'M2.axis.roll'], /missing --data/],
      [['fit', C, '--data', DATA], /missing --free/],
      [['fit', C, '--data', DATA, '--free', 'M2.axis.rol'], /no parameter "M2\.axis\.rol"/],
      [['fit', C, '--data', DATA, '--free', 'M2.axis.roll=1 mm..2 mm'], /lower bound.*expected an angle/],
      [['fit', C, '--data', DATA, '--free', 'M3.axis.roll'], /column of the data/],
      [['fit', C, '--data', badData, '--free', 'M2.axis.roll'], /bad\.csv line 2: detector "D7"/],
      [['fit', C, '--data', join(dir, 'none.csv'), '--free', 'M2.axis.roll'], /cannot read .*none\.csv: no such file/],
      [['fit', C, '--data', DATA, '--free', 'M2.axis.roll', '-o', C], /never written over it/],
      [['fit', C, '--data', DATA, '--free', 'M2.axis.roll', '-o', DATA], /is the data file/],
    ] as [string[], RegExp][]) {
      const out = runCli(argv);
      expect(out.code, argv.join(' ')).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr).toMatch(msg);
    }
  });
});

describe('spinyard fit FILE with a fit kept in the document', () => {
  it('runs the kept fit, its data found beside the document', () => {
    const out = runCli(['fit', C, '--json']);
    expect(out.stderr).toBe('');
    const f = JSON.parse(out.stdout);
    expect(f.parameters.map((p: { name: string }) => p.name)).toEqual(['M2.axis.roll', 'oven.flux']);
    expect(f.parameters[0].lower).toBeCloseTo((20 * Math.PI) / 180, 15);
    expect(Math.abs(f.parameters[0].value * 180 / Math.PI - 31.2)).toBeLessThan(3 * f.parameters[0].sigma * 180 / Math.PI);
  });

  it('refuses --stored beside --data', () => {
    expect(runCli(['fit', C, '--stored', '1', '--data', DATA]).stderr).toMatch(/--stored and --data\/--free/);
  });
});
