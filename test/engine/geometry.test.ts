import { describe, it, expect } from 'vitest';
import { transmit, fractionBelow, polygonCdf, cdfAt, clipHalfPlane, polygonMoments, type Collimator1D } from '../../src/engine/geometry.ts';

describe('transmit', () => {
  it('gives the trapezoid of umbra and penumbra: mean and variance of the sum of two uniforms (standard collimator geometry)', () => {
    // oven aperture 1 mm at y = 0, slit 0.5 mm at 0.3 m; at 0.6 m: x = −p + 2q, widths 1 mm and 1 mm
    const c: Collimator1D = { p0: -0.5e-3, p1: 0.5e-3, q0: -0.25e-3, q1: 0.25e-3, ys: 0.3 };
    const r = transmit(c, [], 0.6);
    expect(r.transmission).toBeCloseTo(1, 14);
    expect(r.mean).toBeCloseTo(0, 15);
    // var = (1 mm)²/12 + (1 mm)²/12
    expect(r.variance).toBeCloseTo(2 * (1e-3) ** 2 / 12, 16);
  });
  it('clips by a strip: a centred strip of half the beam width at the slit passes half', () => {
    const c: Collimator1D = { p0: -0.5e-3, p1: 0.5e-3, q0: -0.25e-3, q1: 0.25e-3, ys: 0.3 };
    const r = transmit(c, [{ y: 0.3, lo: -0.125e-3, hi: 0.125e-3 }], 0.6);
    expect(r.transmission).toBeCloseTo(0.5, 14);
  });
});

describe('polygonCdf', () => {
  it('agrees with clipping the polygon at every t (the direct construction)', () => {
    const c: Collimator1D = { p0: -0.4e-3, p1: 0.6e-3, q0: -0.2e-3, q1: 0.3e-3, ys: 0.25 };
    const r = transmit(c, [{ y: 0.4, lo: -0.2e-3, hi: 0.5e-3 }, { y: 0.1, lo: -1, hi: 0.2e-3 }], 0.7);
    const cdf = polygonCdf(c, r, 0.7);
    for (let i = 0; i <= 200; i++) {
      const t = -2e-3 + (4e-3 * i) / 200;
      expect(Math.abs(cdfAt(cdf, t) - fractionBelow(c, r, 0.7, t))).toBeLessThan(1e-13);
    }
    expect(cdfAt(cdf, 1)).toBeCloseTo(r.transmission, 13);
  });
  it('polygon moments of a unit square: area 1, centroid ½, ∫p² = 1/3 (standard area moments)', () => {
    const m = polygonMoments([[0, 0], [1, 0], [1, 1], [0, 1]]);
    expect(m.a).toBeCloseTo(1, 15);
    expect(m.p / m.a).toBeCloseTo(0.5, 15);
    expect(m.pp).toBeCloseTo(1 / 3, 15);
    expect(clipHalfPlane([[0, 0], [1, 0], [1, 1], [0, 1]], 1, 0, 0.25).length).toBe(4);
  });
});
