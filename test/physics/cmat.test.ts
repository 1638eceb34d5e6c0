import { describe, it, expect } from 'vitest';
import { zeroedF64, copyF64, cmatZeros, cmatClone, cmatMul, cmatIdentity } from '../../src/physics/cmat.ts';

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
