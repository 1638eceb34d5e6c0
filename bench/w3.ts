/**
 * `npm run bench -- w3 [--json OUT] [--no-peers]`: workload W3 of ../shared/peers (10⁶ silver atoms through a
 * collimator and one magnet to a detector plane), simulated by `simulate` (src/engine/simulate.ts), beside the
 * NumPy peer in the same run. Prints `W3 spinyard points=1000000 seconds=<best of 3> maxdiff_vs_expected=<x>`, x
 * the largest |mean z − analytic|/SE over the two ports as the peer defines it, and the χ² of the 2 × 202
 * (port, cell) counts against w3-expected.json (cells expecting ≥ 5 counts, the rest pooled).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { compile } from '../src/engine/index.ts';
import { simulate } from '../src/engine/simulate.ts';
import { chiSquareSurvival } from '../src/physics/special.ts';

/** W3's line as a document (the peer's constants; ../shared/peers/README.md, "W3"). */
const W3_DOC = {
  format: 'spinyard.beamline', version: 1, title: 'W3: silver through a collimator and one magnet (performance peer workload)',
  species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
  oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: '1300 K' },
    aperture: { width: '0.2 mm', height: '2 mm' }, to: 'S1' },
  elements: [
    { id: 'S1', kind: 'slit', gap: '30 cm', width: '0.1 mm', height: '1 mm', to: 'M1' },
    { id: 'M1', kind: 'magnet', gap: '10 cm', axis: { roll: '0 deg' }, gradient: '1000 T/m', length: '3.5 cm', ports: { '+1/2': 'DP', '-1/2': 'DM' } },
    { id: 'DP', kind: 'detector', gap: '40 cm' },
    { id: 'DM', kind: 'detector', gap: '40 cm' },
  ],
};

export function benchW3(peersDir: string, jsonOut: string | null, peers: boolean): string {
  const expected = JSON.parse(readFileSync(join(peersDir, 'w3-expected.json'), 'utf8')) as {
    ports: string[]; mean_z_m: number[]; bin_edges_m: number[]; fractions: number[][];
  };
  const c = compile(W3_DOC);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  const atoms = 1_000_000;
  const edges = expected.bin_edges_m;
  const lo = edges[0], hi = edges[edges.length - 1], nb = edges.length - 1;
  const port = (d: string) => (d === 'DP' ? 0 : 1);
  let hist: number[][] = [];
  let sum = [0, 0], sum2 = [0, 0], count = [0, 0];
  const run = () => {
    hist = [new Array(nb + 2).fill(0), new Array(nb + 2).fill(0)];
    sum = [0, 0];
    sum2 = [0, 0];
    count = [0, 0];
    simulate(c.plan, {
      atoms, seed: 7, onHit: (d, _x, z) => {
        const p = port(d);
        sum[p] += z;
        sum2[p] += z * z;
        count[p]++;
        const cell = z < lo ? 0 : z >= hi ? nb + 1 : 1 + Math.min(nb - 1, Math.floor(((z - lo) / (hi - lo)) * nb));
        hist[p][cell]++;
      },
    });
  };
  run();
  let best = Infinity;
  for (let i = 0; i < 3; i++) {
    const t0 = performance.now();
    run();
    best = Math.min(best, (performance.now() - t0) / 1000);
  }
  const mean = sum.map((s, p) => s / count[p]);
  const se = sum2.map((s2, p) => Math.sqrt((s2 / count[p] - mean[p] ** 2) / count[p]));
  const portIndex = (name: string) => expected.ports.indexOf(name);
  const order = [portIndex('+1/2'), portIndex('-1/2')];
  const x = Math.max(...[0, 1].map((p) => Math.abs(mean[p] - expected.mean_z_m[order[p]]) / se[p]));
  // Pearson χ² over (port, cell), expectation N · ½ · fraction, cells below 5 pooled into one
  let chi2 = 0, dof = -1, poolObs = 0, poolExp = 0;
  for (let p = 0; p < 2; p++) for (let k = 0; k < nb + 2; k++) {
    const e = atoms * 0.5 * expected.fractions[order[p]][k];
    if (e >= 5) {
      chi2 += (hist[p][k] - e) ** 2 / e;
      dof++;
    } else {
      poolObs += hist[p][k];
      poolExp += e;
    }
  }
  if (poolExp > 0) {
    chi2 += (poolObs - poolExp) ** 2 / poolExp;
    dof++;
  }
  const pValue = chiSquareSurvival(chi2, dof);
  if (jsonOut) writeFileSync(jsonOut, `${JSON.stringify({ counts: count, histogram: hist, mean_z_m: mean, se_mean_z_m: se, seconds: best }, null, 2)}\n`);
  const out = [
    `W3: mean z per port ${mean.map((m) => `${(m * 1e3).toFixed(5)} mm`).join(', ')} (analytic ${order.map((i) => `${(expected.mean_z_m[i] * 1e3).toFixed(5)} mm`).join(', ')}); χ² ${chi2.toFixed(1)} on ${dof} dof, p = ${pValue.toPrecision(2)}`,
  ];
  if (peers) {
    const r = spawnSync('/usr/bin/python3', [join(peersDir, 'peer_numpy_w3.py')], { encoding: 'utf8', env: { ...process.env, OPENBLAS_NUM_THREADS: '1' } });
    const line = (r.stdout ?? '').trim().split('\n').pop() ?? '';
    out.push(r.status === 0 ? line : `W3 numpy peer did not run: ${(r.stderr ?? '').trim().split('\n').pop()}`);
    const m = /seconds=([\d.]+)/.exec(line);
    if (m) out.push(`W3 ratio numpy/spinyard = ${(Number(m[1]) / best).toFixed(2)}`);
  }
  out.push(`W3 spinyard points=${atoms} seconds=${best.toFixed(4)} maxdiff_vs_expected=${x.toFixed(3)}`);
  return out.join('\n');
}
