import { describe, it, expect } from 'vitest';
import { effusiveDistribution, charFunction, inverseSpeedMoment, supersonicDistribution, tableDistribution, speedGrid, BOLTZMANN, effusiveCharInto } from '../../src/physics/velocity.ts';
import { integrateAdaptive } from '../../src/physics/quadrature.ts';

const U = 1.66053906660e-27; // CODATA 2018 atomic mass constant
const mCs = 132.905451958 * U; // AME2020 via reference-data.md

describe('effusive moments (N. F. Ramsey, Molecular Beams, ch. II)', () => {
  const T = 400;
  const d = effusiveDistribution(T, mCs);
  const a = Math.sqrt((2 * BOLTZMANN * T) / mCs);
  it('⟨1/v²⟩ = M/(2kT) to 1e-8', () => {
    expect(Math.abs(inverseSpeedMoment(d, 2) / (mCs / (2 * BOLTZMANN * T)) - 1)).toBeLessThan(1e-8);
  });
  it('⟨1/v⟩ = √π/(2a) to 1e-8', () => {
    expect(Math.abs(inverseSpeedMoment(d, 1) / (Math.sqrt(Math.PI) / (2 * a)) - 1)).toBeLessThan(1e-8);
  });
  it('the most probable flux speed is √(3kT/M)', () => {
    // maximise v³ exp(−v²/a²) on the density itself: derivative zero at v = a√(3/2)
    const vmp = Math.sqrt((3 * BOLTZMANN * T) / mCs);
    const f = (v: number) => v ** 3 * Math.exp(-(v * v) / (a * a));
    expect(f(vmp)).toBeGreaterThan(f(vmp * (1 + 1e-4)));
    expect(f(vmp)).toBeGreaterThan(f(vmp * (1 - 1e-4)));
    expect(Math.abs(vmp / (a * Math.sqrt(1.5)) - 1)).toBeLessThan(1e-15);
  });
  it('the rotated-contour χ agrees with direct real-axis integration where that converges', () => {
    for (const W of [0.1, 1, 5, 20, 60]) {
      const phi = W * a;
      const c = charFunction(d, phi, 0);
      const direct = integrateAdaptive((u) => {
        if (u <= 0) return [0, 0];
        const m = 2 * u ** 3 * Math.exp(-u * u);
        return [m * Math.cos(W / u), -m * Math.sin(W / u)];
      }, 0, 7, 1e-15, 1e-13, 20000);
      expect(Math.abs(c.re - direct.re)).toBeLessThan(1e-11);
      expect(Math.abs(c.im - direct.im)).toBeLessThan(1e-11);
    }
  });
  it('gives a vanishing average for a 9.19 GHz beat over 5 cm (phases of 10⁷ rad), with a small error', () => {
    const phi = 2 * Math.PI * 9.192631770e9 * 0.05;
    const c = charFunction(d, phi, 0);
    expect(Math.hypot(c.re, c.im)).toBeLessThan(1e-15);
    expect(c.error).toBeLessThan(1e-14);
  });
  it('is conjugate-symmetric in Φ', () => {
    const p = charFunction(d, 3 * a, 0), m = charFunction(d, -3 * a, 0);
    expect(p.re).toBe(m.re);
    expect(p.im).toBe(-m.im);
  });
});

describe('supersonic and table distributions', () => {
  it('a narrow supersonic beam averages e^{−iΦ/v} like a Gaussian spread in 1/v', () => {
    const d = supersonicDistribution(1500, 40);
    const c = charFunction(d, 0, 0);
    expect(c.re).toBeCloseTo(1, 12);
    // the mean transit phase at Φ = 1500 rad·m/s is about 1 rad
    const z = charFunction(d, 1500, 0);
    expect(Math.abs(Math.atan2(-z.im, z.re) - 1)).toBeLessThan(0.01);
    expect(Math.hypot(z.re, z.im)).toBeGreaterThan(0.99);
  });
  it('many turns of the phase across a supersonic beam: each χ_n(Φ) to 2e-14 of a dense real-axis reference, in a few thousand nodes', () => {
    // the reference: the density v³ e^{−((v−u)/α)²} normalised here, and the integral cut into 2000 pieces each
    // integrated adaptively (a phase of a few radians per piece)
    for (const [u, ratio] of [[842, 38], [600, 12]] as const) {
      const d = supersonicDistribution(u, ratio) as { u: number; alpha: number } & ReturnType<typeof supersonicDistribution>;
      const lo = Math.max(0, d.u - 12 * d.alpha), hi = d.u + 12 * d.alpha;
      const dens = (v: number) => v ** 3 * Math.exp(-(((v - d.u) / d.alpha) ** 2));
      const norm = integrateAdaptive((v) => [dens(v), 0], lo, hi, 0, 1e-15).re;
      for (const decay of [3, 8, 15]) for (const n of [0, 2]) {
        const phi = (decay * d.u * d.u) / d.alpha;
        let re = 0, im = 0;
        const K = 2000;
        for (let k = 0; k < K; k++) {
          const q = integrateAdaptive((v) => {
            const w = (dens(v) / norm) * v ** -n;
            return [w * Math.cos(phi / v), -w * Math.sin(phi / v)];
          }, lo + ((hi - lo) * k) / K, lo + ((hi - lo) * (k + 1)) / K, 1e-22, 1e-13);
          re += q.re;
          im += q.im;
        }
        const c = charFunction(d, phi, n);
        const scale = d.u ** -n;
        expect(Math.hypot(c.re - re, c.im - im) / scale, `u ${u}, ratio ${ratio}, decay ${decay}, n ${n}`).toBeLessThan(2e-14);
        expect(c.nodes).toBeLessThan(10_000);
      }
    }
  });
  it('a table is normalised by its weight sum and used as it is', () => {
    const d = tableDistribution([[100, 2], [200, 2]]);
    const c = charFunction(d, 100 * Math.PI, 0);
    // 0.5 e^{−iπ} + 0.5 e^{−iπ/2}
    expect(c.re).toBeCloseTo(-0.5, 14);
    expect(c.im).toBeCloseTo(-0.5, 14);
  });
  it('the geometry grid of the effusive beam holds all but 3e-6 of the flux', () => {
    const g = speedGrid(effusiveDistribution(1300, 107 * U));
    expect(g.excluded).toBeGreaterThan(0);
    expect(g.excluded).toBeLessThan(4e-6);
  });
});

describe('effusiveCharInto (the allocation-free read of the effusive panels)', () => {
  it('gives the values of charFunction(d, φ, 0), and declines where a direct integral is needed', () => {
    const d = effusiveDistribution(400, 132.905451958 * 1.66053906660e-27);
    const out = new Float64Array(3);
    for (const w of [3e-4, 0.01, 0.7, 1, 1.3, 17.25, 99.9, 419.9, 420, 1e4, 1.3e7]) {
      for (const sign of [1, -1]) {
        const phi = sign * w * (d as { a: number }).a;
        expect(effusiveCharInto((d as { a: number }).a, phi, out)).toBe(true);
        const c = charFunction(d, phi, 0);
        // the same numbers (±0 alike)
        expect(out[0] === c.re && out[1] === c.im && out[2] === c.error).toBe(true);
      }
    }
    // below the smallest panel (W < 2^-14) and at Φ = 0 the integral is evaluated directly
    out.fill(7);
    expect(effusiveCharInto(100, 100 * 2 ** -15, out)).toBe(false);
    expect(effusiveCharInto(100, 0, out)).toBe(false);
    expect([...out]).toEqual([7, 7, 7]);
  });
});
