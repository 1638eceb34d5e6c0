/** Counting statistics (src/engine/counting.ts): one formula for each quantity, used by every view. */
import { describe, expect, it } from 'vitest';
import { countSigma, countsIn, signalToBackground, timeToPrecision } from '../../src/engine/counting.ts';

describe('counting statistics', () => {
  it('time to precision is (S + B)/(S² ε²): S = 100 /s over B = 300 /s to 1 % takes 400 s; without background 1/(S ε²)', () => {
    expect(timeToPrecision(100, 300, 0.01)).toBeCloseTo(400, 9);
    expect(timeToPrecision(100, 0, 0.01)).toBeCloseTo(100, 10);
    expect(timeToPrecision(1e4, 0, 0.001)).toBeCloseTo(100, 8);
  });
  it('no signal or no precision asked: an unbounded time', () => {
    expect(timeToPrecision(0, 3, 0.01)).toBe(Infinity);
    expect(timeToPrecision(-1, 3, 0.01)).toBe(Infinity);
    expect(timeToPrecision(100, 3, 0)).toBe(Infinity);
  });
  it('counts N = R t with σ = √N (Poisson)', () => {
    expect(countsIn(6.75e8, 10)).toBe(6.75e9);
    expect(countSigma(1e6)).toBe(1000);
  });
  it('S/B: a ratio, unbounded without background, 0 without signal', () => {
    expect(signalToBackground(30, 3)).toBe(10);
    expect(signalToBackground(30, 0)).toBe(Infinity);
    expect(signalToBackground(0, 0)).toBe(0);
  });
});
