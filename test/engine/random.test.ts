/** The seeded generator (src/engine/random.ts). */
import { describe, expect, it } from 'vitest';
import { Random } from '../../src/engine/random.ts';

describe('Random', () => {
  it('is xoshiro128**: from the state (1, 2, 3, 4) the reference C code (Blackman and Vigna) gives 11520, 0, 5927040, 70819200, 2031721883', () => {
    // the values were printed by the authors' reference algorithm compiled with gcc on this machine
    const r = Random.fromState(1, 2, 3, 4);
    expect([0, 1, 2, 3, 4].map(() => r.nextUint32())).toEqual([11520, 0, 5927040, 70819200, 2031721883]);
  });

  it('fills 32-bit uniforms with the reference sequence (11520, 0, 5927040, … from the state 1, 2, 3, 4), then goes on as nextUint32', () => {
    const r = Random.fromState(1, 2, 3, 4);
    const out = new Float64Array(5);
    r.fillUniform32(out, 4);
    expect(Array.from(out.subarray(0, 4), (u) => u * 2 ** 32)).toEqual([11520, 0, 5927040, 70819200]);
    expect(r.nextUint32()).toBe(2031721883);
    // the open form never gives 0: (x + 1)·2⁻³²
    const q = Random.fromState(1, 2, 3, 4);
    q.fillUniform32(out, 2, true);
    expect(Array.from(out.subarray(0, 2), (u) => u * 2 ** 32)).toEqual([11521, 1]);
    // a long fill equals the same number of single steps
    const a = new Random(99), b = new Random(99);
    const many = new Float64Array(10_000);
    a.fillUniform32(many, many.length);
    for (let i = 0; i < many.length; i++) expect(many[i]).toBe(b.nextUint32() / 2 ** 32);
    // and the words themselves, as signed integers
    const c = new Random(5), e = new Random(5);
    const words = new Int32Array(1000);
    c.fillWords(words, words.length);
    for (let i = 0; i < words.length; i++) expect(words[i] >>> 0).toBe(e.nextUint32());
  });

  it('draws unit exponentials by the ziggurat: mean, variance, the tail beyond its edge, and a χ² over 40 cells', () => {
    // the exponential law P(x > t) = e^{−t}; its mean and variance 1 (any probability text)
    const r = new Random(2024);
    const n = 1_000_000;
    let s = 0, s2 = 0, tail = 0;
    const edges = Array.from({ length: 41 }, (_, i) => (i === 40 ? Infinity : -Math.log(1 - i / 40)));   // equal-probability cells
    const cells = new Array<number>(40).fill(0);
    for (let i = 0; i < n; i++) {
      const x = r.exponentialFrom(r.nextUint32());
      s += x;
      s2 += x * x;
      if (x > 7.697117470131487) tail++;
      let lo = 0, hi = 40;
      while (hi - lo > 1) {
        const m = (lo + hi) >> 1;
        if (x >= edges[m]) lo = m;
        else hi = m;
      }
      cells[lo]++;
    }
    const mean = s / n, variance = s2 / n - mean * mean;
    expect(Math.abs(mean - 1)).toBeLessThan(5 * Math.sqrt(1 / n));
    expect(Math.abs(variance - 1)).toBeLessThan(5 * Math.sqrt(8 / n));
    // the tail the base layer hands to the exact −ln(u) branch: e^{−r} = 4.54e-4 of the draws
    const pTail = Math.exp(-7.697117470131487);
    expect(Math.abs(tail - n * pTail)).toBeLessThan(5 * Math.sqrt(n * pTail));
    // χ² with 39 degrees of freedom; 72.05 is its 0.1 % point (scipy.stats.chi2.ppf(0.999, 39)); a fixed seed, so a false alarm never repeats
    const e = n / 40;
    const chi2 = cells.reduce((a, c) => a + (c - e) ** 2 / e, 0);
    expect(chi2).toBeLessThan(72.05);
  });

  it('repeats itself for a seed and differs between seeds', () => {
    const a = new Random(7), b = new Random(7), c = new Random(8);
    const xs = Array.from({ length: 5 }, () => a.uniform());
    expect(Array.from({ length: 5 }, () => b.uniform())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c.uniform())).not.toEqual(xs);
  });

  it('draws uniform numbers in [0, 1) and standard normal ones with the right moments', () => {
    const r = new Random(1);
    const n = 200_000;
    let su = 0, sn = 0, sn2 = 0, min = 1, max = 0;
    for (let i = 0; i < n; i++) {
      const u = r.uniform();
      min = Math.min(min, u);
      max = Math.max(max, u);
      su += u;
      const z = r.normal();
      sn += z;
      sn2 += z * z;
    }
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    // standard errors: uniform mean 0.29/√n ≈ 6.5e-4, normal mean 1/√n ≈ 2.2e-3, variance √(2/n) ≈ 3.2e-3
    expect(Math.abs(su / n - 0.5)).toBeLessThan(4 * 6.5e-4);
    expect(Math.abs(sn / n)).toBeLessThan(4 * 2.3e-3);
    expect(Math.abs(sn2 / n - 1)).toBeLessThan(4 * 3.2e-3);
  });
});
