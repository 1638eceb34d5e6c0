import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { spinOperators, spinSquared, compositeSpin, mValues, assertJ2, spinAlong, formatHalfInteger } from '../../src/physics/spin.ts';
import { cmatCommutator, cmatScale, cmatMaxAbsDiff, cmatIdentity, cmatAnticommutator, cmatCombine, cmatAdd, cmatFrom } from '../../src/physics/cmat.ts';
import { expmiHermitian } from '../../src/physics/eigh.ts';
import { create, all } from 'mathjs';

const math = create(all, {});

describe('spinOperators', () => {
  it('orders m from +j to −j and validates 2j', () => {
    expect(mValues(3)).toEqual([1.5, 0.5, -0.5, -1.5]);
    expect(() => assertJ2(-1)).toThrow(/non-negative integer/);
    expect(() => assertJ2(1.5)).toThrow(/non-negative integer/);
    expect(() => assertJ2(32)).toThrow(/maximum/);
    expect(spinOperators(1).jz.re[0]).toBe(0.5);
  });
  it('satisfies [Jx, Jy] = iJz and cyclic, and J² = j(j+1), for j = 1/2 … 31/2 (standard SU(2) algebra, Sakurai §3.5)', () => {
    for (let j2 = 1; j2 <= 31; j2++) {
      const o = spinOperators(j2);
      const tol = 1e-12 * (j2 + 1) ** 2;
      expect(cmatMaxAbsDiff(cmatCommutator(o.jx, o.jy), cmatScale(o.jz, 0, 1))).toBeLessThan(tol);
      expect(cmatMaxAbsDiff(cmatCommutator(o.jy, o.jz), cmatScale(o.jx, 0, 1))).toBeLessThan(tol);
      expect(cmatMaxAbsDiff(cmatCommutator(o.jz, o.jx), cmatScale(o.jy, 0, 1))).toBeLessThan(tol);
      const j = j2 / 2;
      expect(cmatMaxAbsDiff(spinSquared(o), cmatScale(cmatIdentity(j2 + 1), j * (j + 1)))).toBeLessThan(tol);
    }
  });
  it('gives Pauli matrices σ = 2S with {σa, σb} = 2δab (standard result)', () => {
    const o = spinOperators(1);
    const s = [o.jx, o.jy, o.jz].map((m) => cmatScale(m, 2));
    expect(cmatMaxAbsDiff(s[1], cmatFrom([[0, [0, -1]], [[0, 1], 0]]))).toBeLessThan(1e-16);
    for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) {
      const want = cmatScale(cmatIdentity(2), a === b ? 2 : 0);
      expect(cmatMaxAbsDiff(cmatAnticommutator(s[a], s[b]), want)).toBeLessThan(1e-15);
    }
  });
  it('obeys the generalised Euler relation exp(iα n̂·σ) = cos α + i sin α n̂·σ for random n̂, α', () => {
    fc.assert(fc.property(fc.double({ min: -20, max: 20, noNaN: true }), fc.double({ min: 0, max: Math.PI, noNaN: true }), fc.double({ min: -Math.PI, max: Math.PI, noNaN: true }), (alpha, th, ph) => {
      const o = spinOperators(1);
      const n = { x: Math.sin(th) * Math.cos(ph), y: Math.sin(th) * Math.sin(ph), z: Math.cos(th) };
      const ns = cmatScale(spinAlong(o, n), 2);
      const lhs = expmiHermitian(ns, -alpha);
      const rhs = cmatAdd(cmatScale(cmatIdentity(2), Math.cos(alpha)), cmatScale(ns, 0, Math.sin(alpha)));
      expect(cmatMaxAbsDiff(lhs, rhs)).toBeLessThan(1e-13);
    }), { numRuns: 50 });
  });
  it("agrees with mathjs' expm (general-purpose library) on exp(−i t n̂·J) to 1e-12", () => {
    for (const j2 of [1, 2, 3, 5, 8]) {
      const o = spinOperators(j2);
      const n = { x: 0.48, y: -0.6, z: 0.64 };
      const t = 1.37;
      const g = spinAlong(o, n);
      const d = j2 + 1;
      const M = math.matrix(Array.from({ length: d }, (_, r) => Array.from({ length: d }, (_, c) => math.complex(t * g.im[r * d + c], -t * g.re[r * d + c]))));
      const E = math.expm(M).toArray() as any[][];
      const ours = expmiHermitian(g, t);
      for (let r = 0; r < d; r++) for (let c = 0; c < d; c++) {
        const z = math.complex(E[r][c]);
        expect(Math.abs(z.re - ours.re[r * d + c])).toBeLessThan(1e-12);
        expect(Math.abs(z.im - ours.im[r * d + c])).toBeLessThan(1e-12);
      }
    }
  });
});

describe('compositeSpin', () => {
  it('builds F = I + J with F² eigenvalues F(F+1) for F = |I−J| … I+J', () => {
    const c = compositeSpin(3, 1);
    const f2 = spinSquared(c.F);
    const tr = Array.from({ length: 8 }, (_, i) => f2.re[i * 8 + i]).reduce((a, b) => a + b, 0);
    // Σ (2F+1) F(F+1) over F = 1, 2: 3·2 + 5·6 = 36
    expect(tr).toBeCloseTo(36, 12);
    expect(cmatMaxAbsDiff(cmatCommutator(c.F.jx, c.F.jy), cmatScale(c.F.jz, 0, 1))).toBeLessThan(1e-13);
    expect(cmatMaxAbsDiff(cmatCommutator(c.I.jx, c.J.jy), cmatCombine([[0, c.I.jx]]))).toBe(0);
  });
});

describe('formatHalfInteger', () => {
  it('writes signed labels', () => {
    expect([1, -1, 2, 0, -4, 3].map((x) => formatHalfInteger(x))).toEqual(['+1/2', '-1/2', '+1', '0', '-2', '+3/2']);
  });
});
