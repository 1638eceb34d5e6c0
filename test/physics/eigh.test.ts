import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { cmatZeros, cmatMul, cmatDagger, cmatMaxAbsDiff, cmatNorm, type CMat } from '../../src/physics/cmat.ts';
import { eigh, eigResidual, unitarityError, expmiHermitian, eigenprojectors } from '../../src/physics/eigh.ts';
import { spinOperators, spinAlong } from '../../src/physics/spin.ts';

function randomHermitian(n: number, seed: number): CMat {
  let s = seed >>> 0;
  const rnd = () => ((s = (s * 1664525 + 1013904223) >>> 0) / 4294967296) * 2 - 1;
  const h = cmatZeros(n, n);
  for (let i = 0; i < n; i++) {
    h.re[i * n + i] = rnd();
    for (let j = i + 1; j < n; j++) {
      const a = rnd(), b = rnd();
      h.re[i * n + j] = a; h.im[i * n + j] = b;
      h.re[j * n + i] = a; h.im[j * n + i] = -b;
    }
  }
  return h;
}

describe('eigh', () => {
  it('reaches residual ‖HV − VΛ‖ < 1e-12·‖H‖ and a unitary V for d ≤ 64', () => {
    for (const n of [1, 2, 3, 5, 8, 16, 32, 64]) {
      const h = randomHermitian(n, n * 7 + 1);
      const e = eigh(h);
      expect(eigResidual(h, e)).toBeLessThan(1e-12 * Math.max(1, cmatNorm(h)));
      expect(unitarityError(e.vectors)).toBeLessThan(1e-12);
      for (let k = 1; k < n; k++) expect(e.values[k]).toBeGreaterThanOrEqual(e.values[k - 1]);
    }
  });
  it('handles exact degeneracies (spin operators) to 1e-13', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 31 }), fc.double({ min: 0, max: Math.PI, noNaN: true }), fc.double({ min: -Math.PI, max: Math.PI, noNaN: true }), (j2, th, ph) => {
      const ops = spinOperators(j2);
      const n = { x: Math.sin(th) * Math.cos(ph), y: Math.sin(th) * Math.sin(ph), z: Math.cos(th) };
      const h = spinAlong(ops, n);
      const e = eigh(h);
      expect(eigResidual(h, e)).toBeLessThan(1e-12 * (j2 + 1));
      for (let k = 0; k <= j2; k++) expect(Math.abs(e.values[k] - (k - j2 / 2))).toBeLessThan(1e-12);
    }), { numRuns: 40 });
  });
  it('builds exp(−iHt) that is unitary and composes: U(t)U(s) = U(t+s)', () => {
    const h = randomHermitian(10, 99);
    const a = expmiHermitian(h, 0.7), b = expmiHermitian(h, 1.3), c = expmiHermitian(h, 2.0);
    expect(unitarityError(a)).toBeLessThan(1e-13);
    expect(cmatMaxAbsDiff(cmatMul(a, b), c)).toBeLessThan(1e-13);
  });
  it('returns eigenprojectors in descending order that sum to 1', () => {
    const ops = spinOperators(3);
    const ps = eigenprojectors(ops.jz);
    expect(ps.map((p) => p.value)).toEqual([1.5, 0.5, -0.5, -1.5]);
    const s = ps.reduce((acc, p) => { for (let i = 0; i < acc.re.length; i++) { acc.re[i] += p.projector.re[i]; acc.im[i] += p.projector.im[i]; } return acc; }, cmatZeros(4, 4));
    for (let i = 0; i < 4; i++) expect(s.re[i * 4 + i]).toBeCloseTo(1, 14);
    const p0 = ps[0].projector;
    expect(cmatMaxAbsDiff(cmatMul(p0, p0), p0)).toBeLessThan(1e-14);
    expect(cmatMaxAbsDiff(cmatDagger(p0), p0)).toBe(0);
  });
});
