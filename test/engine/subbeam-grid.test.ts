/**
 * The speed grid of the detector plane's average (src/engine/subbeam.ts): the Gauss–Kronrod 3/7 pair on a panel. The 7 Kronrod nodes integrate x^k on [−1, 1] exactly to k = 11 and the 3 Gauss nodes among them to
 * k = 5 (the degrees of the rule, A. S. Kronrod 1965); past those both fail, which is what makes their difference an
 * estimate of the Gauss rule's error.
 */
import { describe, expect, it } from 'vitest';
import { GK_WG, GK_WK, GK_X } from '../../src/engine/subbeam.ts';

function rule(w: Float64Array, k: number): number {
  let s = 0;
  for (let i = 0; i < GK_X.length; i++) s += w[i] * GK_X[i] ** k;
  return s;
}

describe('the Gauss–Kronrod 3/7 pair', () => {
  it('has its nodes in increasing order inside (−1, 1), the Gauss nodes among them', () => {
    for (let i = 1; i < 7; i++) expect(GK_X[i]).toBeGreaterThan(GK_X[i - 1]);
    expect(GK_X[0]).toBeGreaterThan(-1);
    expect(GK_X[6]).toBeLessThan(1);
    // the 3-point Gauss–Legendre nodes: 0, ±√(3/5), weights 8/9 and 5/9
    expect(GK_X[1]).toBeCloseTo(-Math.sqrt(0.6), 15);
    expect(GK_WG[1]).toBeCloseTo(5 / 9, 15);
    expect(GK_WG[3]).toBeCloseTo(8 / 9, 15);
    expect([GK_WG[0], GK_WG[2], GK_WG[4], GK_WG[6]]).toEqual([0, 0, 0, 0]);
  });

  it('integrates x^k exactly to k = 11 (Kronrod) and k = 5 (Gauss), and not past them', () => {
    for (let k = 0; k <= 11; k++) expect(Math.abs(rule(GK_WK, k) - (k % 2 ? 0 : 2 / (k + 1))), `K7 x^${k}`).toBeLessThan(1e-15);
    for (let k = 0; k <= 5; k++) expect(Math.abs(rule(GK_WG, k) - (k % 2 ? 0 : 2 / (k + 1))), `G3 x^${k}`).toBeLessThan(1e-15);
    expect(Math.abs(rule(GK_WK, 12) - 2 / 13)).toBeGreaterThan(1e-5);
    expect(Math.abs(rule(GK_WG, 6) - 2 / 7)).toBeGreaterThan(1e-3);
  });
});
