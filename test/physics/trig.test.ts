import { describe, it, expect } from 'vitest';
import { reduceAngle, expNegI } from '../../src/physics/trig.ts';

describe('reduceAngle', () => {
  it('keeps cos and sin of phases up to 1e14 rad to within one ulp of the phase', () => {
    for (let i = 0; i < 20000; i++) {
      const x = (i % 2 ? -1 : 1) * 10 ** (Math.random() * 14);
      const e = Math.abs(Math.cos(reduceAngle(x)) - Math.cos(x));
      expect(e).toBeLessThanOrEqual(Math.max(2e-16, Math.abs(x) * 2.3e-16));
    }
  });
});


describe('expNegI', () => {
  const re = new Float64Array(1), im = new Float64Array(1);
  // the reference is the host's Math.cos / Math.sin (V8's port of fdlibm, exact argument reduction)
  const check = (x: number, tol: number) => {
    expNegI(x, re, im, 0);
    expect(Math.abs(re[0] - Math.cos(x))).toBeLessThanOrEqual(tol);
    expect(Math.abs(im[0] + Math.sin(x))).toBeLessThanOrEqual(tol);
  };
  it('agrees with Math.cos and Math.sin to 3e-16 where the reduction is exact (|x| < 1e6)', () => {
    for (let i = 0; i < 50000; i++) check((i % 2 ? -1 : 1) * 10 ** (Math.random() * 12 - 6), 3e-16);
    for (let q = -8; q <= 8; q++) for (const d of [0, 1e-9, -1e-9, 1e-15]) check(q * Math.PI / 4 + d, 3e-16);
  });
  it('keeps the error within one ulp of the phase up to 1e14 rad (slow path beyond 3e9)', () => {
    for (let i = 0; i < 50000; i++) {
      const x = (i % 2 ? -1 : 1) * 10 ** (6 + Math.random() * 8);
      check(x, Math.max(3e-16, Math.abs(x) * 2.3e-16));
    }
  });
  it('gives NaN for a phase that is not finite', () => {
    expNegI(Infinity, re, im, 0);
    expect(re[0]).toBeNaN();
    expNegI(NaN, re, im, 0);
    expect(im[0]).toBeNaN();
  });
});
