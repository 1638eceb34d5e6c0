/**
 * `npm run bench -- planning`: the planning tools on the samples, in one thread (best of 3 after a warm-up run),
 * and a scan through the built command line in 1 and 2 worker threads (start-up included). Figures go into
 * docs/bench.md by hand. The long items (bench H's 100 × 100 map, its budget of 10 tolerances with 10⁴ draws)
 * are timed once after a warm-up on a smaller case; `--quick` leaves them out.
 */

const deg = Math.PI / 180;

/** A spin-1 tomography bench of this project: an idealised analyser turned to five axes, D1–D3 on its ports. */
function tomographyDoc(state: unknown): object {
  return {
    format: 'spinyard.beamline', version: 1, title: 'Tomography bench T: a spin-1 oven behind one analyser turned to each axis in turn',
    species: { spin: '1', g: 2, mass: '4.0026 u' },
    oven: { state, flux: '2e4 /s', velocity: { kind: 'fixed', speed: '1000 m/s' }, to: 'M1' },
    elements: [
      { id: 'M1', kind: 'magnet', axis: { theta: '0 deg', phi: '0 deg' }, ports: { '+1': 'D1', '0': 'D2', '-1': 'D3' } },
      ...['D1', 'D2', 'D3'].map((id) => ({ id, kind: 'detector', efficiency: 1, background: '0 /s', dwell: '10 s' })),
    ],
  };
}

/** Readings of the tomography bench in a known mixed state along x, y, z and two oblique axes: 10⁶ counts in all. */
function tomographyData(): { plan: Plan; text: string } {
  const re = [[0.4, 0.1, 0.05], [0.1, 0.35, -0.08], [0.05, -0.08, 0.25]];
  const im = [[0, 0.06, -0.02], [-0.06, 0, 0.04], [0.02, -0.04, 0]];
  const c = compile(tomographyDoc({ kind: 'density', axis: { theta: '0 deg', phi: '0 deg' }, basis: ['+1', '0', '-1'], re, im }));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  const rng = new Random(15);
  const rows = ['detector,counts,dwell [s],M1.axis.theta [deg],M1.axis.phi [deg]'];
  for (const [th, ph] of [[90, 0], [90, 90], [0, 0], [55, 30], [120, 250]]) {
    for (const d of evaluate(c.plan, { 'M1.axis.theta': th * deg, 'M1.axis.phi': ph * deg }).detectors) rows.push(`${d.id},${rng.poisson(d.rate * 10)},10,${th},${ph}`);
  }
  const start = compile(tomographyDoc({ kind: 'unpolarized' }));
  if (!start.ok) throw new Error(start.problems.join('\n'));
  return { plan: start.plan, text: rows.join('\n') };
}

/** Ten tolerances on bench H: both magnets' rolls, fields and gradients, the slit, a gap, the oven, a window. */
function benchHTolerances(H: Plan): ToleranceStudy[] {
  const t = (name: string, halfWidth: number, distribution: 'uniform' | 'normal' = 'normal'): ToleranceStudy => ({ name, path: parameter(H, name).path, halfWidth, distribution });
  return [
    t('M1.axis.roll', 0.5 * deg), t('M2.axis.roll', 0.5 * deg), t('M1.field', 0.005), t('M2.field', 0.0002),
    t('M1.gradient', 2), t('M2.gradient', 1), t('S1.width', 1e-5, 'uniform'), t('M2.gap', 5e-4, 'uniform'),
    t('oven.velocity.temperature', 5), t('D1.window.z', 5e-5, 'uniform'),
  ];
}

function once(warm: () => void, fn: () => void): number {
  warm();
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
}
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { budget, compile, evaluate, parameter, scan, type Plan } from '../src/engine/index.ts';
import { fit } from '../src/engine/fit.ts';
import { readMeasurements } from '../src/engine/measurements.ts';
import { Random } from '../src/engine/random.ts';
import type { ToleranceStudy } from '../src/beamline/types.ts';
import { simulate } from '../src/engine/simulate.ts';

function best(fn: () => void): number {
  fn();
  let b = Infinity;
  for (let i = 0; i < 3; i++) {
    const t0 = performance.now();
    fn();
    b = Math.min(b, performance.now() - t0);
  }
  return b;
}

export function benchPlanning(root: string, quick = false): string {
  const plan = (name: string): Plan => {
    const c = compile(readFileSync(join(root, 'samples', `${name}.spinyard`), 'utf8'));
    if (!c.ok) throw new Error(c.problems.join('\n'));
    return c.plan;
  };
  const C = plan('bench-c-roll-calibration'), G = plan('bench-g-silver-split'), H = plan('bench-h-rb87-mj-then-eigenstate');
  const out: string[] = [];
  const row = (what: string, ms: number) => out.push(`${what.padEnd(64)} ${ms >= 1000 ? `${(ms / 1000).toFixed(2)} s` : `${ms.toFixed(1)} ms`}`);
  row('scan, bench C, M2.axis.roll, 2000 points', best(() => scan(C, [{ name: 'M2.axis.roll', from: 0, to: Math.PI, points: 2000 }])));
  row('scan, bench H, M1.axis.roll, 100 points', best(() => scan(H, [{ name: 'M1.axis.roll', from: 0, to: Math.PI / 2, points: 100 }])));
  row('budget, bench C, 5 tolerances, 1000 draws', best(() => budget(C, { draws: 1000 })));
  const data = readMeasurements(readFileSync(join(root, 'samples', 'bench-c-roll-calibration.counts.csv'), 'utf8'), C);
  row('fit, bench C, M2.axis.roll and oven.flux to 30 readings', best(() => fit(C, data, { free: [{ name: 'M2.axis.roll' }, { name: 'oven.flux' }] })));
  const tomo = tomographyData();
  const tomoData = readMeasurements(tomo.text, tomo.plan);
  const counts = tomoData.readings.reduce((s, r) => s + r.counts, 0);
  row(`fit, spin-1 state (ρ, 8 parameters), 5 axes × 3 detectors, ${(counts / 1e6).toFixed(2)}e6 counts`, best(() => fit(tomo.plan, tomoData, { free: [], state: true })));
  if (!quick) {
    const map = (n: number) => scan(H, [{ name: 'M2.field', from: 0.005, to: 0.05, points: n }, { name: 'M2.axis.roll', from: 0, to: Math.PI / 2, points: n }]);
    row('map, bench H, M2.field 5–50 mT × M2.axis.roll 0–90°, 100 × 100', once(() => map(10), () => map(100)));
    const tol = benchHTolerances(H);
    row('budget, bench H, 10 tolerances, 10⁴ Monte Carlo draws', once(() => budget(H, { draws: 100 }, tol), () => budget(H, { draws: 10_000 }, tol)));
  }
  row('simulate, bench C, 100000 atoms', best(() => simulate(C, { atoms: 100_000 })));
  row('simulate, bench G, 100000 atoms', best(() => simulate(G, { atoms: 100_000 })));
  row('simulate, bench H, 100000 atoms', best(() => simulate(H, { atoms: 100_000 })));
  const bin = join(root, 'bin', 'spinyard.js');
  for (const w of [1, 2]) {
    const args = [bin, 'scan', join(root, 'samples', 'bench-h-rb87-mj-then-eigenstate.spinyard'), '--param', 'M1.axis.roll', '--from', '0 deg', '--to', '90 deg', '--points', '400', '--csv', '--workers', String(w)];
    spawnSync(process.execPath, args);
    row(`spinyard scan, bench H, 400 points, --workers ${w} (whole command)`, best(() => {
      const r = spawnSync(process.execPath, args);
      if (r.status !== 0) throw new Error(r.stderr.toString());
    }));
  }
  return out.join('\n');
}
