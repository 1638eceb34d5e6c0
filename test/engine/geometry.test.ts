import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  transmit, fractionBelow, fractionInside, polygonCdf, cdfAt, clipFlat, areaFlat,
  fractionInsideFlat, projectionRange, type Collimator1D,
} from '../../src/engine/geometry.ts';

// The array-of-points form of the polygon operations: a plain reference the engine's flat,
// buffer-reusing versions are checked against, operation for operation.
type Pt = readonly [number, number];

/** Sutherland–Hodgman clip of a convex polygon by c·(p, q) ≤ h. */
function clipHalfPlane(poly: readonly Pt[], cp: number, cq: number, h: number): Pt[] {
  const out: Pt[] = [];
  const n = poly.length;
  for (let i = 0; i < n; i++) {
    const a = poly[i], b = poly[(i + 1) % n];
    const fa = cp * a[0] + cq * a[1] - h, fb = cp * b[0] + cq * b[1] - h;
    if (fa <= 0) out.push(a);
    if ((fa < 0 && fb > 0) || (fa > 0 && fb < 0)) {
      const t = fa / (fa - fb);
      out.push([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]);
    }
  }
  return out;
}

/** Area and the moments ∫p, ∫q, ∫p², ∫pq, ∫q² of a polygon (counter-clockwise). */
function polygonMoments(poly: readonly Pt[]): { a: number; p: number; q: number; pp: number; pq: number; qq: number } {
  let a = 0, p = 0, q = 0, pp = 0, pq = 0, qq = 0;
  const n = poly.length;
  for (let i = 0; i < n; i++) {
    const [x0, y0] = poly[i];
    const [x1, y1] = poly[(i + 1) % n];
    const c = x0 * y1 - x1 * y0;
    a += c;
    p += (x0 + x1) * c;
    q += (y0 + y1) * c;
    pp += (x0 * x0 + x0 * x1 + x1 * x1) * c;
    qq += (y0 * y0 + y0 * y1 + y1 * y1) * c;
    pq += (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c;
  }
  return { a: a / 2, p: p / 6, q: q / 6, pp: pp / 12, pq: pq / 24, qq: qq / 12 };
}


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

describe('flat polygons', () => {
  const toPts = (b: Float64Array): Pt[] => Array.from({ length: b.length / 2 }, (_, i) => [b[2 * i], b[2 * i + 1]] as const);
  const beam = fc.record({
    p0: fc.double({ min: -1e-3, max: 0, noNaN: true }), wp: fc.double({ min: 1e-5, max: 2e-3, noNaN: true }),
    q0: fc.double({ min: -1e-3, max: 0, noNaN: true }), wq: fc.double({ min: 1e-5, max: 2e-3, noNaN: true }),
    ys: fc.double({ min: 0.05, max: 0.5, noNaN: true }), y: fc.double({ min: 0.05, max: 1, noNaN: true }),
    lo: fc.double({ min: -2e-3, max: 2e-3, noNaN: true }), w: fc.double({ min: 0, max: 3e-3, noNaN: true }),
  });
  it('clip and area give the same vertices and area as the Pt[] construction', () => {
    fc.assert(fc.property(beam, (b) => {
      const c: Collimator1D = { p0: b.p0, p1: b.p0 + b.wp, q0: b.q0, q1: b.q0 + b.wq, ys: b.ys };
      const r = transmit(c, [{ y: b.y, lo: b.lo, hi: b.lo + b.w }], 0.7);
      if (r.poly.length === 0) return;
      const al = 1 - b.y / b.ys, be = b.y / b.ys;
      const out = new Float64Array(4 * r.poly.length);
      const n = clipFlat(r.poly, 0, r.poly.length / 2, al, be, b.lo + b.w / 2, out, 0);
      expect(toPts(out.slice(0, 2 * n))).toEqual(clipHalfPlane(toPts(r.poly), al, be, b.lo + b.w / 2));
      expect(areaFlat(r.poly, 0, r.poly.length / 2)).toBe(polygonMoments(toPts(r.poly)).a);
    }));
  });
  it('a window that holds or misses the whole polygon gives exactly what clipping by it gives', () => {
    fc.assert(fc.property(beam, fc.double({ min: -3e-3, max: 3e-3, noNaN: true }), fc.double({ min: 0, max: 5e-3, noNaN: true }), (b, lo, w) => {
      const c: Collimator1D = { p0: b.p0, p1: b.p0 + b.wp, q0: b.q0, q1: b.q0 + b.wq, ys: b.ys };
      const r = transmit(c, [{ y: b.y, lo: b.lo, hi: b.lo + b.w }], 0.7);
      const n = r.poly.length / 2;
      if (n < 3) return;
      const al = 1 - 0.7 / b.ys, be = 0.7 / b.ys;
      const rg = new Float64Array(2);
      projectionRange(r.poly, 0, n, al, be, rg);
      // the direct construction: two half-plane clips of the Pt[] polygon
      let p = clipHalfPlane(toPts(r.poly), al, be, lo + w);
      p = p.length < 3 ? [] : clipHalfPlane(p, -al, -be, -lo);
      const direct = p.length < 3 ? 0 : polygonMoments(p).a / r.area0;
      expect(fractionInsideFlat(r.poly, 0, n, r.area0, al, be, lo, lo + w, rg[0], rg[1])).toBe(direct);
      expect(fractionInside(c, r, 0.7, lo, lo + w)).toBe(direct);
      // windows holding and missing the polygon
      expect(fractionInsideFlat(r.poly, 0, n, r.area0, al, be, rg[0], rg[1], rg[0], rg[1])).toBe(r.transmission);
      expect(fractionInsideFlat(r.poly, 0, n, r.area0, al, be, rg[1] + 1e-9, rg[1] + 1e-3, rg[0], rg[1])).toBe(0);
    }));
  });
});
