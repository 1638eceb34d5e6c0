/** `spinyard simulate`: the table beside the engine's numbers, JSON, messages. */
import { describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';

const G = new URL('../../samples/bench-g-silver-split.spinyard', import.meta.url).pathname;

describe('spinyard simulate FILE', () => {
  it('prints each detector\'s atoms, simulated and engine signals, and one run\'s counts', () => {
    const out = runCli(['simulate', G, '--atoms', '20000', '--seed', '4']);
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/20000 atoms drawn \(seed 4\) from an oven flux of 1e9 \/s/);
    expect(out.stdout).toMatch(/^DL\s+\d+\s+[\d.e]+ ± [\d.e]+\s+8\.488e7\s+-?[\d.]+ σ\s+\d+ in 30 s/m);
  });

  it('gives JSON with hit maps that repeats for a seed', () => {
    const a = runCli(['simulate', G, '--atoms', '5000', '--json']);
    const j = JSON.parse(a.stdout);
    expect(j.format).toBe('spinyard.simulation');
    expect(j.detectors[0].map.counts).toHaveLength(40);
    expect(runCli(['simulate', G, '--atoms', '5000', '--json']).stdout).toBe(a.stdout);
  });

  it('takes a count of atoms in exponent form, as the issue writes it (--atoms 1e6)', () => {
    const j = JSON.parse(runCli(['simulate', G, '--atoms', '4e3', '--seed', '7', '--json']).stdout);
    expect(j.atoms).toBe(4000);
    expect(JSON.parse(runCli(['simulate', G, '--atoms', '2.5e3', '--json']).stdout).atoms).toBe(2500);
    expect(runCli(['simulate', G, '--atoms', '2.5e0']).stderr).toMatch(/--atoms: a whole number/);
    expect(runCli(['simulate', G, '--atoms', '1e-3']).stderr).toMatch(/--atoms: a whole number/);
  });

  it('names what is wrong', () => {
    expect(runCli(['simulate', G, '--atoms', 'lots']).stderr).toMatch(/--atoms: a whole number/);
    expect(runCli(['simulate', G, '--seed', '1.5']).stderr).toMatch(/--seed: a whole number/);
    expect(runCli(['simulate', G, '-o', G]).stderr).toMatch(/never written over its document/);
  });
});

describe('spinyard simulate FILE with a simulation kept in the document', () => {
  it('takes the kept atoms and seed unless given, and names a number past the list', () => {
    // bench G keeps 200000 atoms, seed 1; --atoms overrides the atoms and keeps nothing else of it
    const out = runCli(['simulate', G, '--stored', '1', '--atoms', '3000', '--json']);
    const j = JSON.parse(out.stdout);
    expect([j.atoms, j.seed]).toEqual([3000, 1]);
    expect(runCli(['simulate', G, '--stored', '2']).stderr).toMatch(/--stored 2: .* keeps 1 simulation:\n {2}1: collector check, 200000 atoms/);
  });
});

describe('spinyard simulate --hits CSV', () => {
  it('writes one row per hit (detector, x and z in mm, speed) and keeps the report on stdout', async () => {
    const { deliver } = await import('../../src/cli/deliver.ts');
    const { mkdtempSync, readFileSync, rmSync } = await import('node:fs');
    const { join } = await import('node:path');
    const { tmpdir } = await import('node:os');
    const dir = mkdtempSync(join(tmpdir(), 'spinyard-hits-'));
    try {
      const target = join(dir, 'hits.csv');
      const json = JSON.parse(runCli(['simulate', G, '--atoms', '3000', '--json']).stdout);
      const out = await deliver(runCli(['simulate', G, '--atoms', '3000', '--json', '--hits', target]));
      expect(out.code).toBe(0);
      expect(out.stdout).toContain('"format": "spinyard.simulation"');
      const rows = readFileSync(target, 'utf8').trimEnd().split('\r\n');
      expect(rows[0]).toBe('detector,x [mm],z [mm],speed [m/s]');
      const hits = json.detectors.reduce((n: number, d: { hits: number }) => n + d.hits, 0);
      expect(rows).toHaveLength(hits + 1);
      // each row's detector is one of the line's and its z lies on that collector's side (DL below, DU above)
      for (const r of rows.slice(1, 200)) {
        const [d, , z] = r.split(',');
        expect(Math.sign(Number(z))).toBe(d === 'DL' ? -1 : 1);
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('refuses -o beside --hits', () => {
    expect(runCli(['simulate', G, '--hits', '/tmp/x.csv', '-o', '/tmp/y.txt']).stderr).toMatch(/-o and --hits/);
  });
});
