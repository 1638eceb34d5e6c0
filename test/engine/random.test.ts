/** The seeded generator (src/engine/random.ts). */
import { describe, expect, it } from 'vitest';
import { Random } from '../../src/engine/random.ts';

describe('Random', () => {
  it('is xoshiro128**: from the state (1, 2, 3, 4) the reference C code (Blackman and Vigna) gives 11520, 0, 5927040, 70819200, 2031721883', () => {
    // the values were printed by the authors' reference algorithm compiled with gcc on this machine
    const r = Random.fromState(1, 2, 3, 4);
    expect([0, 1, 2, 3, 4].map(() => r.nextUint32())).toEqual([11520, 0, 5927040, 70819200, 2031721883]);
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
