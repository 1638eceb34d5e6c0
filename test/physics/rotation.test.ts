import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { wignerSmallD, wignerSmallDFormula, wignerD, rotationOperator, rotationToAxis, axisFromRoll, axisFromAngles } from '../../src/physics/rotation.ts';
import { spinOperators, spinAlong } from '../../src/physics/spin.ts';
import { cmatGet, cmatMul, cmatDagger, cmatMaxAbsDiff, cmatColumn } from '../../src/physics/cmat.ts';
import { eigh, spectralFunction, unitarityError } from '../../src/physics/eigh.ts';

const d = (j2: number, mp2: number, m2: number, b: number) => {
  const M = wignerSmallD(j2, b);
  const c = cmatGet(M, (j2 - mp2) / 2, (j2 - m2) / 2);
  expect(Math.abs(c.im)).toBeLessThan(1e-14);
  return c.re;
};

// Closed forms tabulated in the Particle Data Group review
// "Clebsch-Gordan coefficients, spherical harmonics, and d functions" (Review of Particle Physics).
const pdg: [number, number, number, (t: number) => number][] = [
  [1, 1, 1, (t) => Math.cos(t / 2)],
  [1, 1, -1, (t) => -Math.sin(t / 2)],
  [2, 2, 2, (t) => (1 + Math.cos(t)) / 2],
  [2, 2, 0, (t) => -Math.sin(t) / Math.SQRT2],
  [2, 2, -2, (t) => (1 - Math.cos(t)) / 2],
  [2, 0, 0, (t) => Math.cos(t)],
  [3, 3, 3, (t) => ((1 + Math.cos(t)) / 2) * Math.cos(t / 2)],
  [3, 3, 1, (t) => -Math.sqrt(3) * ((1 + Math.cos(t)) / 2) * Math.sin(t / 2)],
  [3, 3, -1, (t) => Math.sqrt(3) * ((1 - Math.cos(t)) / 2) * Math.cos(t / 2)],
  [3, 3, -3, (t) => -((1 - Math.cos(t)) / 2) * Math.sin(t / 2)],
  [3, 1, 1, (t) => ((3 * Math.cos(t) - 1) / 2) * Math.cos(t / 2)],
  [3, 1, -1, (t) => -((3 * Math.cos(t) + 1) / 2) * Math.sin(t / 2)],
  [4, 4, 4, (t) => ((1 + Math.cos(t)) / 2) ** 2],
  [4, 4, 2, (t) => -((1 + Math.cos(t)) / 2) * Math.sin(t)],
  [4, 4, 0, (t) => (Math.sqrt(6) / 4) * Math.sin(t) ** 2],
  [4, 4, -2, (t) => -((1 - Math.cos(t)) / 2) * Math.sin(t)],
  [4, 4, -4, (t) => ((1 - Math.cos(t)) / 2) ** 2],
  [4, 2, 2, (t) => ((1 + Math.cos(t)) / 2) * (2 * Math.cos(t) - 1)],
  [4, 2, 0, (t) => -Math.sqrt(1.5) * Math.sin(t) * Math.cos(t)],
  [4, 2, -2, (t) => ((1 - Math.cos(t)) / 2) * (2 * Math.cos(t) + 1)],
  [4, 0, 0, (t) => 1.5 * Math.cos(t) ** 2 - 0.5],
];

describe('wignerSmallD', () => {
  it('matches the PDG closed forms for j = 1/2, 1, 3/2, 2 to 1e-13', () => {
    for (const t of [0, 0.3, 1.1, Math.PI / 2, 2.5, Math.PI, 4.0]) {
      for (const [j2, mp2, m2, f] of pdg) expect(Math.abs(d(j2, mp2, m2, t) - f(t))).toBeLessThan(1e-13);
    }
  });
  it('obeys the PDG symmetry relations d_{m′m} = (−1)^{m−m′} d_{mm′} = d_{−m,−m′} for j up to 15', () => {
    for (const j2 of [1, 4, 7, 12, 19, 25, 30]) {
      const b = 0.7 + j2 * 0.05;
      const M = wignerSmallD(j2, b);
      const n = j2 + 1;
      for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) {
        const mp2 = j2 - 2 * r, m2 = j2 - 2 * c;
        const x = M.re[r * n + c];
        const sign = ((m2 - mp2) / 2) % 2 === 0 ? 1 : -1;
        expect(Math.abs(x - sign * M.re[c * n + r])).toBeLessThan(1e-12);
        expect(Math.abs(x - M.re[(n - 1 - c) * n + (n - 1 - r)])).toBeLessThan(1e-12);
      }
    }
  });
  it("agrees with Wigner's explicit sum formula (Sakurai Eq. 3.8.33) for j ≤ 6", () => {
    for (const j2 of [1, 2, 5, 8, 12]) for (const b of [0.2, 1.9]) {
      const M = wignerSmallD(j2, b);
      const n = j2 + 1;
      for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) {
        expect(Math.abs(M.re[r * n + c] - wignerSmallDFormula(j2, j2 - 2 * r, j2 - 2 * c, b))).toBeLessThan(1e-12);
      }
    }
  });
});

describe('wignerD', () => {
  it('composes: D(α,β,γ) is unitary and D(0,β,0) = d(β)', () => {
    const D = wignerD(5, 0.4, 1.2, -0.8);
    expect(unitarityError(D)).toBeLessThan(1e-13);
    expect(cmatMaxAbsDiff(wignerD(5, 0, 1.2, 0), wignerSmallD(5, 1.2))).toBeLessThan(1e-15);
  });
});

describe('rotationToAxis', () => {
  it('carries |j m⟩ along z to an eigenstate of n̂·J with eigenvalue m', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 12 }), fc.double({ min: 0, max: Math.PI, noNaN: true }), fc.double({ min: -3, max: 3, noNaN: true }), (j2, th, ph) => {
      const ops = spinOperators(j2);
      const n = axisFromAngles(th, ph);
      const R = rotationToAxis(ops, n);
      const nj = spinAlong(ops, n);
      for (let k = 0; k <= j2; k++) {
        const v = cmatColumn(R, k);
        const lhs = cmatMul(nj, v);
        const m = j2 / 2 - k;
        for (let i = 0; i <= j2; i++) {
          expect(Math.abs(lhs.re[i] - m * v.re[i])).toBeLessThan(1e-12 * (1 + j2 / 4));
          expect(Math.abs(lhs.im[i] - m * v.im[i])).toBeLessThan(1e-12 * (1 + j2 / 4));
        }
      }
    }), { numRuns: 30 });
  });
  it('reads a roll α as n̂ = (sin α, 0, cos α)', () => {
    const n = axisFromRoll(Math.PI / 3);
    expect(n.x).toBeCloseTo(Math.sqrt(3) / 2, 15);
    expect(n.y).toBe(0);
    expect(n.z).toBeCloseTo(0.5, 15);
  });
});

describe('rotationOperator', () => {
  it('is a 2π rotation of −1 for half-integer spin and +1 for integer spin (standard result, Sakurai §3.2)', () => {
    for (const j2 of [1, 2, 3, 4]) {
      const R = rotationOperator(spinOperators(j2), { x: 0.3, y: -0.5, z: 0.8 }, 2 * Math.PI);
      const s = j2 % 2 === 1 ? -1 : 1;
      for (let i = 0; i <= j2; i++) expect(R.re[i * (j2 + 1) + i]).toBeCloseTo(s, 12);
      expect(unitarityError(cmatMul(R, cmatDagger(R)))).toBeLessThan(1e-12);
    }
  });
});

describe('rotationOperator, its generator found once per spin and axis', () => {
  it('gives at every angle the numbers of the generator diagonalised afresh, bit for bit', () => {
    const ops = spinOperators(7);
    for (const n of [{ x: 0, y: 1, z: 0 }, { x: 0, y: 0, z: 1 }, { x: 1, y: 0, z: 0 }]) {
      for (const alpha of [0.1, 1.3, -2.2, 0.1]) {
        const fresh = spectralFunction(eigh(spinAlong(ops, n)), (l) => [Math.cos(alpha * l), -Math.sin(alpha * l)]);
        const got = rotationOperator(ops, n, alpha);
        expect(Array.from(got.re)).toEqual(Array.from(fresh.re));
        expect(Array.from(got.im)).toEqual(Array.from(fresh.im));
      }
    }
  });
});
