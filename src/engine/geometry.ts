/**
 * Beam geometry: straight trajectories through the collimator, Stern–Gerlach deflections, clipping.
 *
 * A trajectory is fixed by where it crosses the oven aperture (p, at y = 0) and the first slit
 * (q, at y = y_s); with uniform illumination of both, (p, q) is uniform on the rectangle A × S, per
 * transverse axis (x and z are independent for rectangular apertures). At a plane y its offset is
 *   x(y) = p (1 − y/y_s) + q y/y_s + δ(y, v),
 * which gives the familiar trapezoid (umbra and penumbra) at any plane. Without a slit the beam is the
 * aperture carried parallel. The deflection of magnet k (design.md): a_k L_k (L_k/2 + D)/v² along n̂_k,
 * a_k = μ_eff,k G_k/M, D the distance past its exit; deflections of successive magnets add as vectors.
 * Clipping by a later slit or a magnet's aperture is a strip lo ≤ x(y) ≤ hi, i.e. a half-plane pair in
 * (p, q): the transmitted set is a convex polygon, its area the transmission, its moments the mean and
 * rms at any plane, and its area inside a detector window the captured fraction — all exact for the
 * model, per speed.
 */

export type Pt = readonly [number, number];

/** Sutherland–Hodgman clip of a convex polygon by c·(p, q) ≤ h. */
export function clipHalfPlane(poly: readonly Pt[], cp: number, cq: number, h: number): Pt[] {
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
export function polygonMoments(poly: readonly Pt[]): { a: number; p: number; q: number; pp: number; pq: number; qq: number } {
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

function basePolygon(c: Collimator1D): Pt[] {
  let { p0, p1, q0, q1 } = c;
  if (p1 - p0 < MIN_WIDTH) { const m = 0.5 * (p0 + p1); p0 = m - MIN_WIDTH / 2; p1 = m + MIN_WIDTH / 2; }
  if (q1 - q0 < MIN_WIDTH) { const m = 0.5 * (q0 + q1); q0 = m - MIN_WIDTH / 2; q1 = m + MIN_WIDTH / 2; }
  return [[p0, q0], [p1, q0], [p1, q1], [p0, q1]];
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
  /** The transmitted polygon, for further window clips. */
  poly: Pt[];
  area0: number;
}

/** Clips the collimated beam by strips with deflections δ already subtracted: lo − δ ≤ αp + βq ≤ hi − δ. */
export function transmit(c: Collimator1D, strips: readonly { y: number; lo: number; hi: number }[], yQuery: number): AxisResult {
  let poly = basePolygon(c);
  const area0 = polygonMoments(poly).a;
  for (const s of strips) {
    const [al, be] = planeCoefficients(c, s.y);
    // a strip that holds the whole polygon clips nothing
    let mn = Infinity, mx = -Infinity;
    for (const [p, q] of poly) {
      const t = al * p + be * q;
      if (t < mn) mn = t;
      if (t > mx) mx = t;
    }
    if (mn >= s.lo && mx <= s.hi) continue;
    poly = clipHalfPlane(poly, al, be, s.hi);
    if (poly.length < 3) break;
    poly = clipHalfPlane(poly, -al, -be, -s.lo);
    if (poly.length < 3) break;
  }
  if (poly.length < 3) return { transmission: 0, mean: 0, variance: 0, poly: [], area0 };
  const m = polygonMoments(poly);
  const [al, be] = planeCoefficients(c, yQuery);
  const mean = (al * m.p + be * m.q) / m.a;
  const second = (al * al * m.pp + 2 * al * be * m.pq + be * be * m.qq) / m.a;
  return { transmission: m.a / area0, mean, variance: Math.max(0, second - mean * mean), poly, area0 };
}

/** Fraction (of the original beam) of a transmitted polygon inside lo ≤ αp + βq ≤ hi at plane y. */
export function fractionInside(c: Collimator1D, r: AxisResult, y: number, lo: number, hi: number): number {
  if (r.poly.length < 3) return 0;
  const [al, be] = planeCoefficients(c, y);
  let p = clipHalfPlane(r.poly, al, be, hi);
  if (p.length < 3) return 0;
  p = clipHalfPlane(p, -al, -be, -lo);
  if (p.length < 3) return 0;
  return polygonMoments(p).a / r.area0;
}

/** Fraction (of the original beam) of a transmitted polygon with αp + βq ≤ t at plane y (a CDF). */
export function fractionBelow(c: Collimator1D, r: AxisResult, y: number, t: number): number {
  if (r.poly.length < 3) return 0;
  const [al, be] = planeCoefficients(c, y);
  const p = clipHalfPlane(r.poly, al, be, t);
  return p.length < 3 ? 0 : polygonMoments(p).a / r.area0;
}

/**
 * The CDF t ↦ (fraction of the original beam with αp + βq ≤ t at plane y) of a transmitted polygon, in
 * closed form: the area below a line sweeping a convex polygon grows with a derivative (the chord length
 * over |(α, β)|) that is linear between the vertices' projections, so the CDF is piecewise quadratic.
 * Returns the breakpoints, the CDF and its slope there; evaluate with cdfAt.
 */
export function polygonCdf(c: Collimator1D, r: AxisResult, y: number): { t: Float64Array; f: Float64Array; g: Float64Array } {
  const [al, be] = planeCoefficients(c, y);
  const poly = r.poly;
  if (poly.length < 3) return { t: new Float64Array(0), f: new Float64Array(0), g: new Float64Array(0) };
  const ts = [...new Set(poly.map(([p, q]) => al * p + be * q))].sort((a, b) => a - b);
  const norm = Math.hypot(al, be);
  const chord = (t: number): number => {
    // intersections of αp + βq = t with the edges
    const pts: Pt[] = [];
    const n = poly.length;
    for (let i = 0; i < n; i++) {
      const a = poly[i], b = poly[(i + 1) % n];
      const fa = al * a[0] + be * a[1] - t, fb = al * b[0] + be * b[1] - t;
      if (fa === 0) pts.push(a);
      if ((fa < 0 && fb > 0) || (fa > 0 && fb < 0)) {
        const u = fa / (fa - fb);
        pts.push([a[0] + u * (b[0] - a[0]), a[1] + u * (b[1] - a[1])]);
      }
    }
    if (pts.length < 2) return 0;
    let m = 0;
    for (let i = 1; i < pts.length; i++) m = Math.max(m, Math.hypot(pts[i][0] - pts[0][0], pts[i][1] - pts[0][1]));
    return m / norm / r.area0;
  };
  const t = Float64Array.from(ts);
  const g = t.map(chord);
  const f = new Float64Array(t.length);
  for (let i = 1; i < t.length; i++) f[i] = f[i - 1] + 0.5 * (g[i - 1] + g[i]) * (t[i] - t[i - 1]);
  return { t, f, g };
}

/** The piecewise-quadratic CDF of polygonCdf at t. */
export function cdfAt(cdf: { t: Float64Array; f: Float64Array; g: Float64Array }, x: number): number {
  const { t, f, g } = cdf;
  const n = t.length;
  if (n === 0 || x <= t[0]) return 0;
  if (x >= t[n - 1]) return f[n - 1];
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= x) lo = mid;
    else hi = mid;
  }
  const d = x - t[lo], w = t[hi] - t[lo];
  return f[lo] + g[lo] * d + ((g[hi] - g[lo]) * d * d) / (2 * w);
}
