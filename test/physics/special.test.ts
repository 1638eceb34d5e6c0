/** ln Γ and the χ² upper tail (src/physics/special.ts) against published values. */
import { describe, expect, it } from 'vitest';
import { chiSquareSurvival, gammaQ, lnGamma } from '../../src/physics/special.ts';

describe('lnGamma', () => {
  it('gives Γ(½) = √π, Γ(n) = (n − 1)! and Γ(1) = Γ(2) = 1', () => {
    expect(lnGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14);
    expect(lnGamma(10)).toBeCloseTo(Math.log(362880), 12);
    expect(lnGamma(1)).toBeCloseTo(0, 14);
    expect(lnGamma(2)).toBeCloseTo(0, 14);
    // ln Γ(171) = ln(170!) = Σ ln k for k = 2 … 170 (summed here); the relative error stays at the 1e-15 level
    let lnFactorial = 0;
    for (let k = 2; k <= 170; k++) lnFactorial += Math.log(k);
    expect(lnGamma(171) / lnFactorial).toBeCloseTo(1, 13);
  });
});

describe('chiSquareSurvival', () => {
  it('meets the table of χ² critical values (NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.4)', () => {
    // upper-tail 5 % points: k = 1: 3.841, k = 10: 18.307, k = 30: 43.773; 1 % point of k = 5: 15.086
    expect(chiSquareSurvival(3.841, 1)).toBeCloseTo(0.05, 4);
    expect(chiSquareSurvival(18.307, 10)).toBeCloseTo(0.05, 4);
    expect(chiSquareSurvival(43.773, 30)).toBeCloseTo(0.05, 4);
    expect(chiSquareSurvival(15.086, 5)).toBeCloseTo(0.01, 4);
  });

  it('is exp(−x/2) for two degrees of freedom, in both branches of Q', () => {
    for (const x of [0.1, 1, 2.9, 3.1, 10, 50]) expect(chiSquareSurvival(x, 2) / Math.exp(-x / 2)).toBeCloseTo(1, 12);
    expect(gammaQ(3, 0)).toBe(1);
  });
});
