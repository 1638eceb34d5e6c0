/** The seeded generator (src/engine/random.ts). */
import { describe, expect, it } from 'vitest';
import { Random, exponentialOf } from '../../src/engine/random.ts';

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

describe('Random.jump', () => {
  // xoshiro128** is linear over GF(2): one step is a 128 × 128 bit matrix T, read off the steps of the 128 unit states;
  // 2⁶⁴ steps are T^(2^64), 64 squarings. The jump must give that matrix's image of any state (Blackman and Vigna:
  // "equivalent to 2^64 calls to next()").
  type Vec = Uint32Array;   // 4 words, bit k of word i is state bit 32 i + k
  const step = (v: Vec): Vec => {
    const r = Random.fromState(v[0], v[1], v[2], v[3]);
    r.nextUint32();
    return Uint32Array.from(r.state());
  };
  /** A matrix as its 128 columns: M·e_j. */
  const apply = (m: Vec[], v: Vec): Vec => {
    const out = new Uint32Array(4);
    for (let j = 0; j < 128; j++) {
      if ((v[j >>> 5] >>> (j & 31)) & 1) for (let i = 0; i < 4; i++) out[i] ^= m[j][i];
    }
    return out;
  };

  it('moves the state 2⁶⁴ steps on: the image of the state under T^(2^64)', () => {
    let m: Vec[] = Array.from({ length: 128 }, (_, j) => {
      const e = new Uint32Array(4);
      e[j >>> 5] = 1 << (j & 31);
      return step(e);
    });
    for (let k = 0; k < 64; k++) m = m.map((col) => apply(m, col));   // M ← M·M, column by column
    for (const s of [[1, 2, 3, 4], [0x9e3779b9, 0x7f4a7c15, 0xdeadbeef, 0x12345678]]) {
      const r = Random.fromState(s[0], s[1], s[2], s[3]);
      r.jump();
      expect(r.state()).toEqual(Array.from(apply(m, Uint32Array.from(s))));
    }
  });

  it('leaves a clone where it was, and two jumps differ from one', () => {
    const a = new Random(3), b = a.clone();
    a.jump();
    expect(b.state()).toEqual(new Random(3).state());
    const c = a.clone();
    c.jump();
    expect(c.state()).not.toEqual(a.state());
    expect(a.state()).not.toEqual(b.state());
  });
});

describe('exponentialOf', () => {
  it('gives exponentialFrom\'s numbers and leaves the generator where exponentialFrom does', () => {
    const a = new Random(77), b = new Random(77);
    const words = new Int32Array(20_000);
    new Random(5).fillWords(words, words.length);
    for (const w of words) expect(exponentialOf(a, w)).toBe(b.exponentialFrom(w));
    expect(a.state()).toEqual(b.state());
    // some of these words were rejected (the generator moved on), most not
    expect(a.state()).not.toEqual(new Random(77).state());
  });
});
