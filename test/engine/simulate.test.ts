/**
 * Simulated runs (src/engine/simulate.ts) against the engine's own numbers: atoms drawn one by one must give each
 * detector's signal within their binomial standard error of the engine's frequency-by-frequency average and
 * polygon-clipped geometry, two methods that share only the line's model.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, type Plan } from '../../src/engine/index.ts';
import { simulate, testing } from '../../src/engine/simulate.ts';

function plan(name: string): Plan {
  const c = compile(readFileSync(new URL(`../../samples/${name}.spinyard`, import.meta.url), 'utf8'));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

describe('simulate', () => {
  for (const name of ['bench-c-roll-calibration', 'bench-e-metastable-helium-spin1', 'bench-g-silver-split']) {
    it(`${name}: every detector's simulated signal within 4.5 standard errors of the engine's`, () => {
      const p = plan(name);
      const r = evaluate(p);
      const s = simulate(p, { atoms: 100_000, seed: 7 });
      expect(s.detectors.map((d) => d.id)).toEqual(r.detectors.map((d) => d.id));
      for (const d of s.detectors) {
        const e = r.detectors.find((x) => x.id === d.id)!;
        expect(Math.abs(d.signal - e.signal), d.id).toBeLessThan(4.5 * d.signalSigma + 1e-9 * e.signal);
      }
      expect(s.atoms).toBe(100_000);
    });
  }

  it('bench G: the silver beam split in two halves that land apart, each hit map holding its hits', () => {
    const s = simulate(plan('bench-g-silver-split'), { atoms: 50_000, seed: 3, bins: 20 });
    const [u, l] = s.detectors;
    expect(u.hits).toBeGreaterThan(0);
    expect(Math.abs(u.hits - l.hits)).toBeLessThan(4 * Math.sqrt(u.hits + l.hits));
    expect(Math.sign(u.mean!.z)).toBe(-Math.sign(l.mean!.z));
    for (const d of s.detectors) expect(d.map!.counts.flat().reduce((a, b) => a + b, 0)).toBe(d.hits);
    expect(s.lost.clipped).toBeGreaterThan(0);
  });

  it('repeats itself for a seed, and its counts scatter as Poisson about (signal + background) × dwell', () => {
    const p = plan('bench-c-roll-calibration');
    const a = simulate(p, { atoms: 20_000, seed: 11 });
    expect(JSON.stringify(simulate(p, { atoms: 20_000, seed: 11 }))).toBe(JSON.stringify(a));
    expect(JSON.stringify(simulate(p, { atoms: 20_000, seed: 12 }))).not.toBe(JSON.stringify(a));
    for (const d of a.detectors) {
      const mu = (d.signal + d.background) * d.dwell;
      expect(Math.abs(d.counts - mu)).toBeLessThan(5 * Math.sqrt(mu) + 1);
    }
  });

  it('draws effusive speeds with the flux-weighted mean a·Γ(5/2)/Γ(2) = 1.32934 a', () => {
    // v³ e^{−v²/a²}: E[v] = a Γ(5/2)/Γ(2) = (3√π/4) a, σ(v) = a √(2 − 1.32934²) ≈ 0.4217 a
    const a = 350;
    const draw = testing.speedSampler({ kind: 'effusive', a }, 9);
    let sum = 0;
    const n = 200_000;
    for (let i = 0; i < n; i++) sum += draw();
    expect(Math.abs(sum / n / a - (3 * Math.sqrt(Math.PI)) / 4)).toBeLessThan((4 * 0.4217) / Math.sqrt(n));
  });

  it('refuses bad counts', () => {
    const p = plan('bench-c-roll-calibration');
    expect(() => simulate(p, { atoms: 0 })).toThrow(/atoms/);
    expect(() => simulate(p, { seed: -1 })).toThrow(/seed/);
  });
});
