/**
 * `npm run bench -- planning`: the planning tools on the samples, in one thread (best of 3 after a warm-up run),
 * and a scan through the built command line in 1 and 2 worker threads (start-up included). Figures go into
 * docs/bench.md by hand.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { budget, compile, scan, type Plan } from '../src/engine/index.ts';
import { fit } from '../src/engine/fit.ts';
import { readMeasurements } from '../src/engine/measurements.ts';
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

export function benchPlanning(root: string): string {
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
