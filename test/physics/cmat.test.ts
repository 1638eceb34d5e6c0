import { describe, it, expect } from 'vitest';
import { zeroedF64, copyF64, cmatZeros, cmatClone, cmatMul, cmatIdentity, cmatDagger, cmatSandwichParts, cmatMulInto } from '../../src/physics/cmat.ts';

describe('block-carved arrays', () => {
  it('are zeroed, of the asked length, and independent of each other across many blocks', () => {
    const arrays: Float64Array[] = [];
    for (let i = 0; i < 5000; i++) {
      const n = 1 + (i % 40);
      const a = zeroedF64(n);
      expect(a.length).toBe(n);
      expect(a.every((x) => x === 0)).toBe(true);
      a.fill(i + 1);
      arrays.push(a);
    }
    arrays.forEach((a, i) => expect(a.every((x) => x === i + 1)).toBe(true));
  });
  it('gives large arrays their own buffer', () => {
    const a = zeroedF64(100000);
    expect(a.length).toBe(100000);
    expect(a.byteOffset).toBe(0);
    expect(a.buffer.byteLength).toBe(800000);
  });
  it('copies and clones without sharing storage', () => {
    const c = copyF64([1, 2, 3]);
    expect(Array.from(c)).toEqual([1, 2, 3]);
    const m = cmatZeros(3, 3);
    m.re[4] = 7;
    const k = cmatClone(m);
    k.re[4] = 8;
    expect(m.re[4]).toBe(7);
    expect(cmatMul(cmatIdentity(3), m).re[4]).toBe(7);
  });
});

describe('cmatSandwichParts', () => {
  it('gives W P W† as the product of three matrices does, for square and tall W', () => {
    let x = 3;
    const rnd = () => ((x = (x * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
    for (const [d, r] of [[1, 1], [3, 3], [5, 2], [16, 8]] as const) {
      const w = cmatZeros(d, r), p = cmatZeros(r, r);
      for (let i = 0; i < d * r; i++) { w.re[i] = rnd(); w.im[i] = rnd(); }
      for (let i = 0; i < r * r; i++) { p.re[i] = rnd(); p.im[i] = rnd(); }
      const ref = cmatMul(cmatMul(w, p), cmatDagger(w));
      const got = cmatSandwichParts(w.re, w.im, d, r, p);
      expect(got.rows).toBe(d);
      expect(got.cols).toBe(d);
      for (let i = 0; i < d * d; i++) {
        expect(Math.abs(got.re[i] - ref.re[i])).toBeLessThan(1e-14);
        expect(Math.abs(got.im[i] - ref.im[i])).toBeLessThan(1e-14);
      }
    }
  });
});

describe('cmatMulInto', () => {
  it('writes A·B into arrays of the caller, as cmatMul returns it, whatever they held before', () => {
    const a = cmatZeros(3, 2), b = cmatZeros(2, 4);
    [1, -2, 0, 3.5, 0.25, 7].forEach((x, i) => { a.re[i] = x; a.im[i] = x / 3; });
    [2, 0, -1, 4, 1, 1, 0.5, -3].forEach((x, i) => { b.re[i] = x; b.im[i] = -x / 2; });
    const ref = cmatMul(a, b);
    const cr = new Float64Array(12).fill(9), ci = new Float64Array(12).fill(-9);
    cmatMulInto(a.re, a.im, b.re, b.im, 3, 2, 4, cr, ci);
    expect([...cr]).toEqual([...ref.re]);
    expect([...ci]).toEqual([...ref.im]);
  });
});
