/**
 * Beam geometry: straight trajectories through the collimator, Stern–Gerlach deflections, clipping.
 *
 * A trajectory is fixed by where it crosses the oven aperture (p, at y = 0) and the first slit
 * (q, at y = y_s); with uniform illumination of both, (p, q) is uniform on the rectangle A × S, per
 * transverse axis (x and z are independent for rectangular apertures). At a plane y its offset is
 *   x(y) = p (1 − y/y_s) + q y/y_s + δ(y, v),
 * which gives the familiar trapezoid (umbra and penumbra) at any plane. Without a slit the beam is the
 * aperture carried parallel. The deflection of magnet k (docs/design.md): a_k L_k (L_k/2 + D)/v² along n̂_k,
 * a_k = μ_eff,k G_k/M, D the distance past its exit; deflections of successive magnets add as vectors.
 * Clipping by a later slit or a magnet's aperture is a strip lo ≤ x(y) ≤ hi, i.e. a half-plane pair in
 * (p, q): the transmitted set is a convex polygon, its area the transmission, its moments the mean and
 * rms at any plane, and its area inside a detector window the captured fraction — all exact for the
 * model, per speed.
 */

/** One transverse axis of the collimator: source interval [p0, p1] at y = 0, slit [q0, q1] at ys. */
export interface Collimator1D {
  readonly p0: number;
  readonly p1: number;
  readonly q0: number;
  readonly q1: number;
  /** Slit position (m along the beam); Infinity means no slit (parallel beam). */
  readonly ys: number;
}

/** A strip lo ≤ x(y) ≤ hi at plane y (x without deflection; the deflection is subtracted by the caller). */
export interface Strip {
  readonly y: number;
  readonly lo: number;
  readonly hi: number;
}

/** Minimum width used for a point source or a pencil slit, so that the (p, q) polygon keeps an area. */
const MIN_WIDTH = 1e-9;

/**
 * A polygon in flat form: vertex i at (buf[2i], buf[2i + 1]), counter-clockwise; the clipping, area,
 * moment and CDF functions below work on it without allocating and give the same numbers, operation
 * for operation, as the array-of-points reference versions in test/engine/geometry.test.ts.
 */
export type FlatPoly = Float64Array;

/** The (p, q) rectangle A × S of a collimator axis, flat (4 vertices). */
export function basePolygonFlat(c: Collimator1D): FlatPoly {
  let { p0, p1, q0, q1 } = c;
  if (p1 - p0 < MIN_WIDTH) { const m = 0.5 * (p0 + p1); p0 = m - MIN_WIDTH / 2; p1 = m + MIN_WIDTH / 2; }
  if (q1 - q0 < MIN_WIDTH) { const m = 0.5 * (q0 + q1); q0 = m - MIN_WIDTH / 2; q1 = m + MIN_WIDTH / 2; }
  return Float64Array.of(p0, q0, p1, q0, p1, q1, p0, q1);
}

/**
 * Sutherland–Hodgman clip of the convex flat polygon src[2·so …] (n vertices) by cp·p + cq·q ≤ h into
 * dst[2·do …]; returns the vertex count. dst needs room for 2n vertices.
 */
export function clipFlat(src: Float64Array, so: number, n: number, cp: number, cq: number, h: number, dst: Float64Array, dOff: number): number {
  let m = dOff;
  let ax = src[2 * so], ay = src[2 * so + 1];
  let fa = cp * ax + cq * ay - h;
  for (let i = 0; i < n; i++) {
    const j = i + 1 === n ? so : so + i + 1;
    const bx = src[2 * j], by = src[2 * j + 1];
    const fb = cp * bx + cq * by - h;
    if (fa <= 0) { dst[2 * m] = ax; dst[2 * m + 1] = ay; m++; }
    if ((fa < 0 && fb > 0) || (fa > 0 && fb < 0)) {
      const t = fa / (fa - fb);
      dst[2 * m] = ax + t * (bx - ax);
      dst[2 * m + 1] = ay + t * (by - ay);
      m++;
    }
    ax = bx; ay = by; fa = fb;
  }
  return m - dOff;
}

/** Area of the flat polygon buf[2·o …] (n vertices), the shoelace sum. */
export function areaFlat(buf: Float64Array, o: number, n: number): number {
  let a = 0;
  for (let i = 0; i < n; i++) {
    const k = o + i, l = i + 1 === n ? o : k + 1;
    a += buf[2 * k] * buf[2 * l + 1] - buf[2 * l] * buf[2 * k + 1];
  }
  return a / 2;
}

/** Area and the moments ∫p, ∫q, ∫p², ∫pq, ∫q² of a flat polygon (counter-clockwise) into out[0..5]. */
export function momentsFlat(buf: Float64Array, o: number, n: number, out: Float64Array): void {
  let a = 0, p = 0, q = 0, pp = 0, pq = 0, qq = 0;
  for (let i = 0; i < n; i++) {
    const k = o + i, l = i + 1 === n ? o : k + 1;
    const x0 = buf[2 * k], y0 = buf[2 * k + 1], x1 = buf[2 * l], y1 = buf[2 * l + 1];
    const c = x0 * y1 - x1 * y0;
    a += c;
    p += (x0 + x1) * c;
    q += (y0 + y1) * c;
    pp += (x0 * x0 + x0 * x1 + x1 * x1) * c;
    qq += (y0 * y0 + y0 * y1 + y1 * y1) * c;
    pq += (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c;
  }
  out[0] = a / 2; out[1] = p / 6; out[2] = q / 6; out[3] = pp / 12; out[4] = pq / 24; out[5] = qq / 12;
}

/** Smallest and largest α p + β q over the vertices of a flat polygon, into out[0], out[1]. */
export function projectionRange(buf: Float64Array, o: number, n: number, al: number, be: number, out: Float64Array): void {
  let mn = Infinity, mx = -Infinity;
  for (let i = o; i < o + n; i++) {
    const t = al * buf[2 * i] + be * buf[2 * i + 1];
    if (t < mn) mn = t;
    if (t > mx) mx = t;
  }
  out[0] = mn; out[1] = mx;
}

// scratch polygons for the clipping chains (grown on demand; no result keeps a reference to them)
let scrA = new Float64Array(128), scrB = new Float64Array(128);
const range = new Float64Array(2);
function scratchFor(n: number): void {
  if (scrA.length < 4 * n + 8) {
    scrA = new Float64Array(8 * n + 16);
    scrB = new Float64Array(8 * n + 16);
  }
}

/** A sequence of strips lo_i ≤ α_i p + β_i q ≤ hi_i, flat. */
export interface FlatStrips {
  readonly al: Float64Array;
  readonly be: Float64Array;
  lo: Float64Array;
  hi: Float64Array;
  readonly count: number;
}

/**
 * Clips the flat polygon src[2·so …] (n vertices) by strips [from, to) in order, a strip holding the
 * whole polygon clipping nothing; the result (vertex count returned, 0 when fewer than 3 remain) is left
 * in clipResult(), valid until the next call of any function of this module.
 */
export function clipStrips(src: Float64Array, so: number, n: number, s: FlatStrips, from: number, to: number): number {
  scratchFor(n);
  let cur = scrA, other = scrB;
  for (let i = 0; i < 2 * n; i++) cur[i] = src[2 * so + i];
  for (let i = from; i < to; i++) {
    const al = s.al[i], be = s.be[i];
    projectionRange(cur, 0, n, al, be, range);
    if (range[0] >= s.lo[i] && range[1] <= s.hi[i]) continue;
    if (other.length < 4 * n + 8) other = new Float64Array(8 * n + 16);
    n = clipFlat(cur, 0, n, al, be, s.hi[i], other, 0);
    if (n < 3) { n = 0; break; }
    if (cur.length < 4 * n + 8) cur = new Float64Array(8 * n + 16);
    n = clipFlat(other, 0, n, -al, -be, -s.lo[i], cur, 0);
    if (n < 3) { n = 0; break; }
  }
  scrA = cur;
  scrB = other;
  lastClip = cur;
  return n;
}
let lastClip: Float64Array = scrA;

/** The buffer holding the polygon of the last clipStrips call (vertices from 0). */
export function clipResult(): Float64Array {
  return lastClip;
}

/**
 * Fraction of the original beam (area0) of the flat polygon buf[2·o …] (n vertices) inside
 * lo ≤ α p + β q ≤ hi; mn, mx the polygon's projection range on (α, β) when known (NaN otherwise),
 * with which a window that holds or misses the whole polygon takes no clipping.
 */
export function fractionInsideFlat(buf: Float64Array, o: number, n: number, area0: number, al: number, be: number, lo: number, hi: number, mn: number, mx: number): number {
  if (n < 3) return 0;
  if (lo <= hi) {
    if (Number.isNaN(mn)) {
      projectionRange(buf, o, n, al, be, range);
      mn = range[0]; mx = range[1];
    }
    // no vertex above hi and none below lo: both clips keep the polygon as it is
    if (mn >= lo && mx <= hi) return areaFlat(buf, o, n) / area0;
    // every vertex above hi, or every vertex below lo (≤ hi): nothing is kept
    if (mn > hi || mx < lo) return 0;
  }
  scratchFor(2 * n + 2);
  let m = clipFlat(buf, o, n, al, be, hi, scrA, 0);
  if (m < 3) return 0;
  m = clipFlat(scrA, 0, m, -al, -be, -lo, scrB, 0);
  if (m < 3) return 0;
  return areaFlat(scrB, 0, m) / area0;
}

let cdfPts = new Float64Array(64);

/**
 * The closed-form CDF of polygonCdf for the flat polygon buf[2·o …] (n ≥ 3 vertices): breakpoints,
 * CDF and slope into t, f, g (room for n each); returns their count.
 */
export function polygonCdfFlat(buf: Float64Array, o: number, n: number, area0: number, al: number, be: number, t: Float64Array, f: Float64Array, g: Float64Array): number {
  for (let i = 0; i < n; i++) t[i] = al * buf[2 * (o + i)] + be * buf[2 * (o + i) + 1];
  const ts = t.subarray(0, n).sort();
  let m = 0;
  for (let i = 0; i < n; i++) if (i === 0 || ts[i] !== ts[m - 1]) ts[m++] = ts[i];
  const norm = Math.hypot(al, be);
  if (cdfPts.length < 4 * n) cdfPts = new Float64Array(8 * n);
  const pts = cdfPts;
  for (let k = 0; k < m; k++) {
    const tk = t[k];
    // intersections of αp + βq = t with the edges
    let np = 0;
    for (let i = 0; i < n; i++) {
      const ia = o + i, ib = i + 1 === n ? o : ia + 1;
      const ax = buf[2 * ia], ay = buf[2 * ia + 1], bx = buf[2 * ib], by = buf[2 * ib + 1];
      const fa = al * ax + be * ay - tk, fb = al * bx + be * by - tk;
      if (fa === 0) { pts[2 * np] = ax; pts[2 * np + 1] = ay; np++; }
      if ((fa < 0 && fb > 0) || (fa > 0 && fb < 0)) {
        const u = fa / (fa - fb);
        pts[2 * np] = ax + u * (bx - ax);
        pts[2 * np + 1] = ay + u * (by - ay);
        np++;
      }
    }
    if (np < 2) { g[k] = 0; continue; }
    let c = 0;
    for (let i = 1; i < np; i++) c = Math.max(c, Math.hypot(pts[2 * i] - pts[0], pts[2 * i + 1] - pts[1]));
    g[k] = c / norm / area0;
  }
  f[0] = 0;
  for (let i = 1; i < m; i++) f[i] = f[i - 1] + 0.5 * (g[i - 1] + g[i]) * (t[i] - t[i - 1]);
  return m;
}

/** The piecewise-quadratic CDF (t, f, g of polygonCdfFlat, m breakpoints) at x, as cdfAt. */
export function cdfAtFlat(t: Float64Array, f: Float64Array, g: Float64Array, m: number, x: number): number {
  if (m === 0 || x <= t[0]) return 0;
  if (x >= t[m - 1]) return f[m - 1];
  let lo = 0, hi = m - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= x) lo = mid;
    else hi = mid;
  }
  const d = x - t[lo], w = t[hi] - t[lo];
  return f[lo] + g[lo] * d + ((g[hi] - g[lo]) * d * d) / (2 * w);
}

/** Coefficients (α, β) of x(y) = α p + β q. */
export function planeCoefficients(c: Collimator1D, y: number): [number, number] {
  if (!Number.isFinite(c.ys)) return [1, 0];
  const r = y / c.ys;
  return [1 - r, r];
}

export interface AxisResult {
  /** Fraction of trajectories that pass every strip. */
  transmission: number;
  /** Mean and variance of x at the query plane among the transmitted (without deflection). */
  mean: number;
  variance: number;
  /** The transmitted polygon, flat (empty when nothing passes), for further window clips. */
  poly: FlatPoly;
  area0: number;
}

const mom = new Float64Array(6);

/**
 * Transmission (area over area0), mean and variance of x = α p + β q over the flat polygon
 * buf[2·o …] (n ≥ 3 vertices) into out[0], out[1], out[2].
 */
export function axisStats(buf: Float64Array, o: number, n: number, area0: number, al: number, be: number, out: Float64Array): void {
  momentsFlat(buf, o, n, mom);
  const mean = (al * mom[1] + be * mom[2]) / mom[0];
  const second = (al * al * mom[3] + 2 * al * be * mom[4] + be * be * mom[5]) / mom[0];
  out[0] = mom[0] / area0;
  out[1] = mean;
  out[2] = Math.max(0, second - mean * mean);
}

/** Clips the collimated beam by strips with deflections δ already subtracted: lo − δ ≤ αp + βq ≤ hi − δ. */
export function transmit(c: Collimator1D, strips: readonly { y: number; lo: number; hi: number }[], yQuery: number): AxisResult {
  const base = basePolygonFlat(c);
  const area0 = areaFlat(base, 0, 4);
  const k = strips.length;
  const fs: FlatStrips = { al: new Float64Array(k), be: new Float64Array(k), lo: new Float64Array(k), hi: new Float64Array(k), count: k };
  strips.forEach((s, i) => {
    const [al, be] = planeCoefficients(c, s.y);
    fs.al[i] = al; fs.be[i] = be; fs.lo[i] = s.lo; fs.hi[i] = s.hi;
  });
  const n = clipStrips(base, 0, 4, fs, 0, k);
  if (n < 3) return { transmission: 0, mean: 0, variance: 0, poly: new Float64Array(0), area0 };
  const poly = clipResult().slice(0, 2 * n);
  const [al, be] = planeCoefficients(c, yQuery);
  const st = new Float64Array(3);
  axisStats(poly, 0, n, area0, al, be, st);
  return { transmission: st[0], mean: st[1], variance: st[2], poly, area0 };
}

/** Fraction (of the original beam) of a transmitted polygon inside lo ≤ αp + βq ≤ hi at plane y. */
export function fractionInside(c: Collimator1D, r: AxisResult, y: number, lo: number, hi: number): number {
  const [al, be] = planeCoefficients(c, y);
  return fractionInsideFlat(r.poly, 0, r.poly.length / 2, r.area0, al, be, lo, hi, NaN, NaN);
}

/** Fraction (of the original beam) of a transmitted polygon with αp + βq ≤ t at plane y (a CDF). */
export function fractionBelow(c: Collimator1D, r: AxisResult, y: number, t: number): number {
  const n = r.poly.length / 2;
  if (n < 3) return 0;
  const [al, be] = planeCoefficients(c, y);
  scratchFor(n);
  const m = clipFlat(r.poly, 0, n, al, be, t, scrA, 0);
  return m < 3 ? 0 : areaFlat(scrA, 0, m) / r.area0;
}

/**
 * The CDF t ↦ (fraction of the original beam with αp + βq ≤ t at plane y) of a transmitted polygon, in
 * closed form: the area below a line sweeping a convex polygon grows with a derivative (the chord length
 * over |(α, β)|) that is linear between the vertices' projections, so the CDF is piecewise quadratic.
 * Returns the breakpoints, the CDF and its slope there; evaluate with cdfAt.
 */
export function polygonCdf(c: Collimator1D, r: AxisResult, y: number): { t: Float64Array; f: Float64Array; g: Float64Array } {
  const [al, be] = planeCoefficients(c, y);
  const n = r.poly.length / 2;
  if (n < 3) return { t: new Float64Array(0), f: new Float64Array(0), g: new Float64Array(0) };
  const t = new Float64Array(n), f = new Float64Array(n), g = new Float64Array(n);
  const m = polygonCdfFlat(r.poly, 0, n, r.area0, al, be, t, f, g);
  return { t: t.slice(0, m), f: f.slice(0, m), g: g.slice(0, m) };
}

/** The piecewise-quadratic CDF of polygonCdf at t. */
export function cdfAt(cdf: { t: Float64Array; f: Float64Array; g: Float64Array }, x: number): number {
  return cdfAtFlat(cdf.t, cdf.f, cdf.g, cdf.t.length, x);
}
