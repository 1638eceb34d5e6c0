/**
 * `spinyard run` and `sheet` stop a line whose estimated cost is above the ask limit (src/engine/cost.ts) before any
 * work, with exit 2, the estimate and the element that makes it expensive; --accept-cost is their way to go on.
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';

const SAMPLES = resolve(import.meta.dirname, '..', '..', 'samples');

/** Bench J with a field twist on M2's m_J = −1/2 port: its subtree speed by speed over the effusive beam (minutes). */
function twistFile(): string {
  const d = JSON.parse(readFileSync(join(SAMPLES, 'bench-j-cs-precession-coil.spinyard'), 'utf8'));
  d.elements.find((e: { id: string }) => e.id === 'M2').ports['mJ=-1/2'] = 'T1';
  d.elements.push({ id: 'T1', kind: 'twist', gap: '5 cm', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm', to: 'D2' });
  d.elements.find((e: { id: string }) => e.id === 'D2').gap = '40 cm';
  const file = join(mkdtempSync(join(tmpdir(), 'spinyard-cost-')), 'twist.spinyard');
  writeFileSync(file, JSON.stringify(d, null, 2));
  return file;
}

describe('the command line and the cost estimate', () => {
  it('run stops an expensive line at once, naming the twist, and says how to go on', () => {
    const file = twistFile();
    const out = runCli(['run', file]);
    expect(out.code).toBe(2);
    expect(out.stdout).toBe('');
    expect(out.stderr).toContain(`${file}: not run: its estimated cost is above what the engine starts without --accept-cost`);
    expect(out.stderr).toMatch(/elements\[5\] \(T1\): this run would take about \d+ (s|min)/);
    const sheet = runCli(['sheet', file]);
    expect(sheet.code).toBe(2);
    expect(sheet.stderr).toMatch(/--accept-cost/);
  });

  it('takes --accept-cost on run and sheet, and documents it', () => {
    const file = join(SAMPLES, 'bench-c-roll-calibration.spinyard');
    const plain = runCli(['run', file, '--json']);
    const accepted = runCli(['run', file, '--json', '--accept-cost']);
    expect(accepted.code).toBe(0);
    expect(accepted.stdout).toBe(plain.stdout);
    expect(runCli(['sheet', file, '--accept-cost']).code).toBe(0);
    expect(runCli(['run', '--help']).stdout).toMatch(/--accept-cost +run even where the estimated time is above 10 s/);
  });
});

describe('the planning commands and the cost estimate', () => {
  it('scan, budget, fit and simulate stop an expensive line before their first point, and take --accept-cost', () => {
    const file = twistFile();
    const counts = join(mkdtempSync(join(tmpdir(), 'spinyard-cost-')), 'counts.csv');
    writeFileSync(counts, 'detector,counts\nD1,1000\nD2,2000\n');
    const commands = [
      ['scan', file, '--param', 'C1.field.x', '--from', '0 uT', '--to', '1 uT', '--points', '3'],
      ['budget', file],
      ['fit', file, '--data', counts, '--free', 'oven.flux'],
      ['simulate', file, '--atoms', '10'],
    ];
    for (const argv of commands) {
      const out = runCli(argv);
      expect(out.code, argv[0]).toBe(2);
      expect(out.stderr, argv[0]).toContain(`${file}: not run: its estimated cost is above what the engine starts without --accept-cost`);
      expect(runCli([argv[0], '--help']).stdout, argv[0]).toMatch(/--accept-cost/);
    }
    // on a line below the ask limit the option changes nothing
    const c = join(SAMPLES, 'bench-c-roll-calibration.spinyard');
    for (const argv of [
      ['scan', c, '--param', 'M2.axis.roll', '--from', '0 deg', '--to', '90 deg', '--points', '3', '--json'],
      ['budget', c, '--draws', '20', '--json'],
      ['fit', c, '--data', join(SAMPLES, 'bench-c-roll-calibration.counts.csv'), '--free', 'oven.flux', '--json'],
      ['simulate', c, '--atoms', '200', '--json'],
    ]) {
      const plain = runCli(argv), accepted = runCli([...argv, '--accept-cost']);
      expect(plain.code, argv[0]).toBe(0);
      expect(accepted.stdout, argv[0]).toBe(plain.stdout);
    }
  });
});
