/**
 * Simulated runs against closed forms: the performance workload W3 (silver through a collimator and one magnet,
 * ../shared/peers/README.md "W3", written from its physics, not from its files): each port's mean deflection, its
 * share of the atoms and its histogram of z at the detector against the analytic profile; and the split of a run's
 * blocks over threads, which must not change a number.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, type Plan } from '../../src/engine/index.ts';
import { simulate, simulation, testing, type SimulationResult } from '../../src/engine/simulate.ts';
import { chiSquareSurvival } from '../../src/physics/special.ts';
import { W3_DOC } from '../fixtures/w3-line.ts';

// CODATA 2018 (NIST): the Bohr magneton, the atomic mass constant, the Boltzmann constant
const MU_B = 9.2740100783e-24, U = 1.6605390666e-27, K_B = 1.380649e-23;
const G_S = 2.00231930436, M = 106.905 * U, T = 1300;
const L = 0.035, D = 0.4, GRAD = 1000, Y_SLIT = 0.3, Y_DET = 0.835;
const ALPHA2 = (2 * K_B * T) / M;   // v² ~ Gamma(2, α²) for the flux-weighted v³ e^{−v²/α²}

const W3 = W3_DOC;

function plan(doc: unknown): Plan {
  const c = compile(doc as Parameters<typeof compile>[0]);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

/**
 * The fraction of a port's atoms below each edge: z = c0 z0 + c1 z1 + K/v², z0 and z1 uniform in the aperture's and
 * the slit's heights (their sum a trapezoid, its CDF in closed form), the speed by a midpoint rule in the CDF of
 * s = v²/α², q = 1 − (1 + s) e^{−s}.
 */
function expectedCdf(k: number, edges: number[], nodes = 8192): number[] {
  const c1 = Y_DET / Y_SLIT, c0 = 1 - c1;
  const a = (Math.abs(c0) * 2e-3) / 2, b = (c1 * 1e-3) / 2;
  const r = (u: number) => (u > 0 ? (u * u) / 2 : 0);
  const geo = (z: number) => (r(z + a + b) - r(z + a - b) - r(z - a + b) + r(z - a - b)) / (4 * a * b);
  const cdf = new Array<number>(edges.length).fill(0);
  let s = 1;
  for (let i = 0; i < nodes; i++) {
    const q = (i + 0.5) / nodes;
    for (let it = 0; it < 60; it++) {
      // Newton on (1 + s) e^{−s} = 1 − q, its derivative −s e^{−s}
      const f = (1 + s) * Math.exp(-s) - (1 - q), df = -s * Math.exp(-s);
      const next = Math.max(s - f / df, s / 10);
      if (Math.abs(next - s) < 1e-14 * s) break;
      s = next;
    }
    const d = k / (s * ALPHA2);
    edges.forEach((e, j) => (cdf[j] += geo(e - d) / nodes));
  }
  return cdf;
}

describe('simulate: workload W3 against its closed forms', () => {
  const atoms = 400_000;
  const edges = Array.from({ length: 41 }, (_, i) => -8e-3 + (16e-3 * i) / 40);
  const p = plan(W3);
  const z: number[][] = [[], []];
  const s = simulate(p, { atoms, seed: 7, onHit: (d, _x, zz) => z[d === 'DP' ? 0 : 1].push(zz) });

  it('sends half the atoms to each port, all of them inside the line', () => {
    expect(s.lost).toEqual({ spin: 0, clipped: 0 });
    const [dp, dm] = s.detectors;
    expect(dp.hits + dm.hits).toBe(atoms);
    expect(Math.abs(dp.hits - atoms / 2)).toBeLessThan(3 * Math.sqrt(atoms / 4));
  });

  it('deflects each port by ∓a L (L/2 + D) M/(2kT) = ∓3.7795 mm on average (Ramsey: ⟨1/v²⟩ = M/2kT), x centred', () => {
    const k = (G_S * MU_B * GRAD * L * (L / 2 + D)) / (2 * M);
    const mean = (k * M) / (2 * K_B * T);
    expect(mean).toBeCloseTo(3.779539e-3, 8);   // the peer's README quotes 3.779539 × 10⁻³ m
    s.detectors.forEach((d, i) => {
      const zs = z[i], n = zs.length;
      const m = zs.reduce((a, b) => a + b, 0) / n;
      const se = Math.sqrt(zs.reduce((a, b) => a + (b - m) ** 2, 0) / n / n);
      // 1/v² has a logarithmically divergent variance here: the sample SE is an estimate, hence 4 of them
      expect(Math.abs(m - (i === 0 ? -mean : mean)), d.id).toBeLessThan(4 * se);
      expect(d.mean!.z).toBeCloseTo(m, 15);
      expect(Math.abs(d.mean!.x)).toBeLessThan(4 * d.rms!.x / Math.sqrt(n));
    });
  });

  it('puts each port\'s atoms into 40 cells of z (and the two outside) as the analytic profile says: χ² p > 10⁻³', () => {
    const k = (G_S * MU_B * GRAD * L * (L / 2 + D)) / (2 * M);
    let chi2 = 0, dof = 0;
    [-k, k].forEach((kk, port) => {
      const cdf = expectedCdf(kk, edges);
      const frac = [cdf[0], ...cdf.slice(1).map((c, j) => c - cdf[j]), 1 - cdf[cdf.length - 1]];
      const cells = new Array<number>(frac.length).fill(0);
      for (const zz of z[port]) {
        const j = zz < edges[0] ? 0 : zz >= edges[40] ? 41 : 1 + Math.min(39, Math.floor((zz - edges[0]) / (edges[1] - edges[0])));
        cells[j]++;
      }
      const n = z[port].length;
      frac.forEach((f, j) => {
        const e = n * f;
        if (e < 5) return;
        chi2 += (cells[j] - e) ** 2 / e;
        dof++;
      });
      dof--;   // each port's count is fixed by its n
    });
    expect(dof).toBeGreaterThan(40);
    expect(chiSquareSurvival(chi2, dof)).toBeGreaterThan(1e-3);
  });
});

describe('simulation: blocks split over threads', () => {
  const text = (r: SimulationResult) => JSON.stringify(r);
  for (const name of ['bench-c-roll-calibration', 'bench-g-silver-split']) {
    it(`${name}: the tallies of any split of the blocks, in any order, give simulate's result and hits to the last bit`, () => {
      const p = plan(readFileSync(new URL(`../../samples/${name}.spinyard`, import.meta.url), 'utf8'));
      const atoms = 3 * testing.BLOCK + 1234;
      const hits: string[] = [];
      const whole = simulate(p, { atoms, seed: 21, onHit: (d, x, zz, v) => hits.push(`${d} ${x} ${zz} ${v}`) });
      const parts: string[] = [];
      const sim = simulation(p, { atoms, seed: 21, onHit: (d, x, zz, v) => parts.push(`${d} ${x} ${zz} ${v}`) });
      expect(sim.blocks).toBe(4);
      const t = [sim.run(0, 1), sim.run(1, 3), sim.run(3, 4)];
      expect(text(sim.finish([t[2], t[0], t[1]]))).toBe(text(whole));
      expect(parts).toEqual(hits);
      // a second thread's simulation of the same plan gives the same tallies
      const other = simulation(p, { atoms, seed: 21 });
      expect(text(sim.finish([other.run(0, 2), t[1].first === 1 ? other.run(2, 4) : t[2]]))).toBe(text(whole));
      expect(() => sim.finish([t[0], t[2]])).toThrow(/tallies/);
    });

    it(`${name}: a run without maps gives every other number to the last bit, and its hits per sub-block are onHit's`, () => {
      const p = plan(readFileSync(new URL(`../../samples/${name}.spinyard`, import.meta.url), 'utf8'));
      const atoms = 2 * testing.BLOCK + 777;
      const hits: string[] = [];
      const whole = simulate(p, { atoms, seed: 5, onHit: (d, x, zz) => hits.push(`${d} ${x} ${zz}`) });
      const streamed: string[] = [];
      const sim = simulation(p, { atoms, seed: 5, maps: false, onHits: (d, x, zz, from, n) => {
        for (let i = from; i < from + n; i++) streamed.push(`${d} ${x[i]} ${zz[i]}`);
      } });
      const t = [sim.run(0, 1), sim.run(1, sim.blocks)];
      expect(t.every((u) => u.hits.every((h) => h.x.length === 0 && h.z.length === 0))).toBe(true);
      const bare = sim.finish(t);
      expect(bare.detectors.every((d) => d.map === undefined)).toBe(true);
      expect(whole.detectors.some((d) => d.map !== undefined)).toBe(true);
      expect(text({ ...bare, detectors: bare.detectors.map((d) => ({ ...d, map: undefined })) }))
        .toBe(text({ ...whole, detectors: whole.detectors.map((d) => ({ ...d, map: undefined })) }));
      // onHits hands out each detector's hits of a sub-block together, onHit each atom's in turn: the same hits
      const key = (l: string[]) => [...l].sort();
      expect(streamed.length).toBe(hits.length);
      expect(key(streamed)).toEqual(key(hits));
      for (const id of whole.detectors.map((d) => d.id)) {
        expect(streamed.filter((h) => h.startsWith(`${id} `))).toEqual(hits.filter((h) => h.startsWith(`${id} `)));
      }
    });
  }
});
