/**
 * One sub-beam from the oven to its plane: its transverse track (the oven's orifice and the first slit set the
 * directions of its trajectories, later slits and pole gaps clip, magnets deflect), and at each speed node of
 * the geometry's grid the transmitted polygon of each transverse axis, its mean, variance and deflection.
 *
 * Geometry is averaged over speed on a grid (physics/velocity.ts speedGrid) weighted by the path's own
 * speed-resolved yield; phase terms too fast for that grid (a step above 0.5 rad between nodes) are left out
 * of the weights: against the smooth geometric factors they average to nothing.
 */
import { speedGrid, type VelocityDistribution } from '../physics/velocity.ts';
import type { Vec3 } from '../physics/rotation.ts';
import type { Detector, Rect } from '../beamline/types.ts';
import {
  basePolygonFlat, areaFlat, clipStrips, clipResult, axisStats, projectionRange, fractionInsideFlat,
  planeCoefficients, type Collimator1D, type FlatStrips,
} from './geometry.ts';
import type { SpecState } from './spectral.ts';
import { specTraceAt, specTraceMoment } from './average.ts';


export interface Kick {
  readonly exitY: number;
  readonly length: number;
  /** a = μ_eff G/M (m/s²). */
  readonly accel: number;
  readonly n: Vec3;
}

export interface Track {
  readonly source: Rect | null;
  readonly collimator: { readonly y: number; readonly rect: Rect } | null;
  readonly kicks: readonly Kick[];
  readonly strips: readonly { readonly y: number; readonly lo: number; readonly hi: number; readonly axis: 'x' | 'z' }[];
  /** ELEMENT:lowField of the state selected at each magnet (finer than the ports). */
  readonly components: readonly string[];
}

export interface FinePath {
  readonly system: string;
  readonly fraction: number;
  readonly dist: VelocityDistribution;
  readonly path: readonly string[];
  /** The walk's branch indices (steps/step.ts Walk.rank): the leaves' order. */
  readonly rank?: readonly number[];
  readonly target: string;
  readonly plane: number;
  /** Beam-averaged yield of this path (already weighted by the isotope fraction). */
  readonly yieldSpin: number;
  readonly yieldError?: number;
  readonly track: Track;
  /** The path's spectral state (frequency-resolved leaves); speed-by-speed leaves carry `grid` instead. */
  readonly spec?: SpecState;
  /** χ₂ values of the distribution, shared by the leaves of a run. */
  readonly moment2Cache?: Map<number, [number, number]>;
  /** Speed-by-speed leaves (after a twist): their own grid, normalised weights and Tr ρ at each speed. */
  readonly grid?: { readonly speeds: Float64Array; readonly weights: Float64Array; readonly traces: Float64Array };
  readonly detector: Detector | null;
}

/**
 * One transverse axis of a sub-beam at its speed nodes: the transmitted (p, q) polygon of node k is
 * pool[2·off[k] …], len[k] vertices (0: nothing passes); a speed-independent (fixed) axis keeps one
 * polygon, at index 0, for all nodes. tr, mean, variance as AxisResult; mn, mx the range of α p + β q
 * over the polygon at the sub-beam's plane (α, β = al, be there).
 */
export interface AxisNodes {
  readonly c: Collimator1D;
  readonly fixed: boolean;
  readonly area0: number;
  readonly al: number;
  readonly be: number;
  pool: Float64Array;
  readonly off: Int32Array;
  readonly len: Int32Array;
  readonly tr: Float64Array;
  readonly mean: Float64Array;
  readonly variance: Float64Array;
  readonly mn: Float64Array;
  readonly mx: Float64Array;
}

/** The speed nodes of a sub-beam kept for crosstalk and profiles: weight, deflection at the plane, both axes. */
export interface NodeSet {
  readonly count: number;
  readonly plane: number;
  readonly w: Float64Array;
  readonly dx: Float64Array;
  readonly dz: Float64Array;
  readonly x: AxisNodes | null;
  readonly z: AxisNodes | null;
}

export const NO_NODES: NodeSet = { count: 0, plane: 0, w: new Float64Array(0), dx: new Float64Array(0), dz: new Float64Array(0), x: null, z: null };

export interface FineGeo {
  fine: FinePath;
  yieldGeo: number;
  captured: number;
  mean: { x: number; z: number };
  second: { x: number; z: number };
  nodes: NodeSet;
}

function collimatorFor(t: Track, axis: 'x' | 'z'): Collimator1D {
  const src = t.source;
  const c0 = src ? (axis === 'x' ? src.x : src.z) : 0;
  const w0 = src ? (axis === 'x' ? src.width : src.height) : 0;
  if (!t.collimator) return { p0: c0 - w0 / 2, p1: c0 + w0 / 2, q0: 0, q1: 0, ys: Infinity };
  const r = t.collimator.rect;
  const c1 = axis === 'x' ? r.x : r.z;
  const w1 = axis === 'x' ? r.width : r.height;
  return { p0: c0 - w0 / 2, p1: c0 + w0 / 2, q0: c1 - w1 / 2, q1: c1 + w1 / 2, ys: t.collimator.y };
}

/** Deflection (m) at plane y of a path at speed v, along x and z. */
export function deflection(kicks: readonly Kick[], y: number, v: number): { x: number; z: number } {
  let x = 0, z = 0;
  for (const k of kicks) {
    if (y < k.exitY - 1e-12) continue;
    const d = (k.accel * k.length * (k.length / 2 + (y - k.exitY))) / (v * v);
    x += d * k.n.x;
    z += d * k.n.z;
  }
  return { x, z };
}

/**
 * Where the undeflected beam lies at plane y along one axis: every line from the oven orifice through the collimator
 * (the orifice carried parallel without one). Its width is w0·|1 − y/y_c| + w1·y/y_c.
 */
export function beamExtent(t: Track, axis: 'x' | 'z', y: number): { lo: number; hi: number } {
  const src = t.source;
  const w0 = src ? (axis === 'x' ? src.width : src.height) : 0, c0 = src ? (axis === 'x' ? src.x : src.z) : 0;
  const col = t.collimator;
  if (!col) return { lo: c0 - w0 / 2, hi: c0 + w0 / 2 };
  const w1 = axis === 'x' ? col.rect.width : col.rect.height, c1 = axis === 'x' ? col.rect.x : col.rect.z;
  const r = y / col.y;
  let lo = Infinity, hi = -Infinity;
  for (const p of [c0 - w0 / 2, c0 + w0 / 2]) for (const q of [c1 - w1 / 2, c1 + w1 / 2]) {
    const x = p + (q - p) * r;
    lo = Math.min(lo, x);
    hi = Math.max(hi, x);
  }
  return { lo, hi };
}

export function hasGeometry(f: FinePath): boolean {
  const t = f.track;
  return t.source !== null || t.collimator !== null || t.kicks.length > 0 || t.strips.length > 0 || !!f.detector?.window;
}

/**
 * A speed-by-speed leaf's grid merged into at most 192 groups of neighbouring speeds for the geometry:
 * weights add, the trace is the weighted mean, the speed keeps the group's mean 1/v² (deflections go
 * as 1/v²).
 */
function coarsen(g: NonNullable<FinePath['grid']>): { speeds: Float64Array; weights: Float64Array; traces: Float64Array } {
  const n = g.speeds.length;
  const m = Math.min(192, n);
  const speeds = new Float64Array(m), weights = new Float64Array(m), traces = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const a = Math.floor((j * n) / m), b = Math.floor(((j + 1) * n) / m);
    let w = 0, wt = 0, ws2 = 0;
    for (let k = a; k < b; k++) {
      const wk = g.weights[k] * Math.max(0, g.traces[k]) + 1e-300;
      w += g.weights[k];
      wt += g.weights[k] * g.traces[k];
      ws2 += wk / (g.speeds[k] * g.speeds[k]);
    }
    let wsum = 0;
    for (let k = a; k < b; k++) wsum += g.weights[k] * Math.max(0, g.traces[k]) + 1e-300;
    weights[j] = w;
    traces[j] = w > 0 ? wt / w : 0;
    speeds[j] = 1 / Math.sqrt(ws2 / wsum);
  }
  return { speeds, weights, traces };
}

/**
 * The geometry's speed grid of a distribution, with phiMax = 0.5/max Δ(1/v) between neighbouring nodes
 * (the fastest phase-length the grid resolves) for the effusive and supersonic ones, Infinity otherwise.
 */
const grids = new WeakMap<VelocityDistribution, Map<number, ReturnType<typeof speedGrid> & { phiMax: number }>>();
function geometryGrid(d: VelocityDistribution, panels: number = 24): ReturnType<typeof speedGrid> & { phiMax: number } {
  let byPanels = grids.get(d);
  if (!byPanels) grids.set(d, (byPanels = new Map()));
  let g = byPanels.get(panels);
  if (!g) {
    const sg = speedGrid(d, panels, 8);
    let phiMax = Infinity;
    if (d.kind === 'effusive' || d.kind === 'supersonic') {
      let ds = 0;
      for (let k = 1; k < sg.speeds.length; k++) ds = Math.max(ds, Math.abs(1 / sg.speeds[k - 1] - 1 / sg.speeds[k]));
      phiMax = 0.5 / ds;
    }
    g = { ...sg, phiMax };
    byPanels.set(panels, g);
  }
  return g;
}

/**
 * The panels of 8 Gauss–Legendre speeds each that the detector plane tries, coarsest first (24 was the one grid
 * before, and stays the first one taken where 12 agrees with it): the fraction of a
 * sub-beam that passes a slit or lands in a window has kinks in v (where an edge of the beam crosses an edge of an
 * opening), which a fixed grid resolves poorly (bench H's D1 came out 3.7 % high on 24 panels).
 */
export const GEOMETRY_PANELS = [12, 24, 48, 96, 192, 384] as const;
/** The detector plane's tolerance: a grid is taken once the next finer one moves the sub-beam's transmitted and captured fractions by less than this, relative to each. */
export const GEOMETRY_TOLERANCE = 1e-4;

/**
 * A sub-beam's geometry on grids of doubling speed panels, until two in a row agree to GEOMETRY_TOLERANCE in its
 * transmitted and captured fractions (a fixed speed, a table and a speed-by-speed leaf have one grid, taken as it is).
 * Returns the finer of the first two that agree (a line whose 12- and 24-panel grids agree keeps the 24-panel
 * numbers it always had, to the last bit), or the finest tried and the change to it where none agreed.
 */
export function convergedGeometry(f: FinePath): { geo: FineGeo; change?: number } {
  const d = f.dist;
  // nothing clips (no slit or pole gap after the first slit, no window): every speed passes whole, and the
  // fractions do not depend on the grid
  const clips = f.track.strips.length > 0 || !!f.detector?.window;
  if (f.grid || !clips || (d.kind !== 'effusive' && d.kind !== 'supersonic')) return { geo: fineGeometry(f) };
  let prev = fineGeometry(f, GEOMETRY_PANELS[0]);
  let change = 0;
  for (let i = 1; i < GEOMETRY_PANELS.length; i++) {
    const cur = fineGeometry(f, GEOMETRY_PANELS[i]);
    // relative to each fraction itself (a window that catches 3 % of a sub-beam needs its 3 % right), above a floor
    // of 1e-9 of the sub-beam's flux
    const floor = 1e-9 * Math.abs(f.yieldSpin);
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(Math.abs(a), floor, 1e-300);
    change = Math.max(rel(cur.yieldGeo, prev.yieldGeo), rel(cur.yieldGeo * cur.captured, prev.yieldGeo * prev.captured));
    if (change <= GEOMETRY_TOLERANCE) return { geo: cur };
    prev = cur;
  }
  return { geo: prev, change };
}

/** The kicks acting at plane y: their numerators a L (L/2 + D) (deflection = numerator/v² along n̂). */
function kicksAt(kicks: readonly Kick[], y: number): { num: Float64Array; nx: Float64Array; nz: Float64Array } {
  let m = 0;
  for (const k of kicks) if (!(y < k.exitY - 1e-12)) m++;
  const num = new Float64Array(m), nx = new Float64Array(m), nz = new Float64Array(m);
  let i = 0;
  for (const k of kicks) {
    if (y < k.exitY - 1e-12) continue;
    num[i] = k.accel * k.length * (k.length / 2 + (y - k.exitY));
    nx[i] = k.n.x;
    nz[i] = k.n.z;
    i++;
  }
  return { num, nx, nz };
}

/** Deflection Σ num_k/v² · n_k (one axis) at speed v: the sum of deflection(), term by term. */
function deflect(num: Float64Array, n: Float64Array, v: number): number {
  let x = 0;
  for (let i = 0; i < num.length; i++) x += (num[i] / (v * v)) * n[i];
  return x;
}

/**
 * How one axis's polygons are built at the nodes: the strips (deflection subtracted per speed) clip the
 * collimator's rectangle. The leading strips that no kick deflects along this axis clip the same at
 * every speed and are applied once (pre); when all are such the axis is fixed, one polygon for all.
 */
interface AxisPlan {
  readonly out: AxisNodes;
  readonly strips: FlatStrips;
  readonly lo0: Float64Array;
  readonly hi0: Float64Array;
  readonly num: readonly Float64Array[];
  readonly dir: readonly Float64Array[];
  readonly first: number;
  readonly pre: Float64Array;
  readonly nPre: number;
  used: number;
}

const NO_STRIPS: FlatStrips = { al: new Float64Array(0), be: new Float64Array(0), lo: new Float64Array(0), hi: new Float64Array(0), count: 0 };

function axisPlan(c: Collimator1D, track: Track, axis: 'x' | 'z', plane: number, size: number): AxisPlan {
  let k = 0;
  for (const s of track.strips) if (s.axis === axis) k++;
  const num: Float64Array[] = [], dir: Float64Array[] = [];
  let strips = NO_STRIPS, lo0 = NO_STRIPS.lo, hi0 = NO_STRIPS.hi;
  if (k > 0) {
    const al = new Float64Array(k), be = new Float64Array(k);
    lo0 = new Float64Array(k);
    hi0 = new Float64Array(k);
    let i = 0;
    for (const s of track.strips) {
      if (s.axis !== axis) continue;
      [al[i], be[i]] = planeCoefficients(c, s.y);
      lo0[i] = s.lo;
      hi0[i] = s.hi;
      const ka = kicksAt(track.kicks, s.y);
      num.push(ka.num);
      dir.push(axis === 'x' ? ka.nx : ka.nz);
      i++;
    }
    strips = { al, be, lo: lo0.slice(), hi: hi0.slice(), count: k };
  }
  // a strip is the same at every speed when no kick acting there has a component along this axis
  let first = 0;
  while (first < k && !dir[first].some((x) => x !== 0)) first++;
  const fixed = first === k;
  const base = basePolygonFlat(c);
  const area0 = areaFlat(base, 0, 4);
  let pre = base, nPre = 4;
  if (first > 0) {
    nPre = clipStrips(base, 0, 4, strips, 0, first);
    pre = clipResult().slice(0, 2 * nPre);
  }
  const [pal, pbe] = planeCoefficients(c, plane);
  const m = fixed ? 1 : size;
  const f = new Float64Array(5 * m), ix = new Int32Array(2 * m);
  const out: AxisNodes = {
    c, area0, al: pal, be: pbe, fixed, pool: fixed ? pre : new Float64Array(2 * size * (4 + 2 * k)),
    off: ix.subarray(0, m), len: ix.subarray(m, 2 * m),
    tr: f.subarray(0, m), mean: f.subarray(m, 2 * m), variance: f.subarray(2 * m, 3 * m), mn: f.subarray(3 * m, 4 * m), mx: f.subarray(4 * m, 5 * m),
  };
  const pl: AxisPlan = { out, strips, lo0, hi0, num, dir, first, pre, nPre, used: 0 };
  if (fixed) stats0(pl);
  return pl;
}

const stats = new Float64Array(3), span = new Float64Array(2);

/** The one polygon of a fixed axis (pre, already its pool) as node 0, with its statistics. */
function stats0(pl: AxisPlan): void {
  const o = pl.out;
  o.off[0] = 0;
  o.len[0] = pl.nPre < 3 ? 0 : pl.nPre;
  if (pl.nPre < 3) return;
  axisStats(o.pool, 0, pl.nPre, o.area0, o.al, o.be, stats);
  o.tr[0] = stats[0]; o.mean[0] = stats[1]; o.variance[0] = stats[2];
  projectionRange(o.pool, 0, pl.nPre, o.al, o.be, span);
  o.mn[0] = span[0]; o.mx[0] = span[1];
}


/** Keeps polygon src (n vertices; fewer than 3: nothing passes) as node j of the axis, with its statistics. */
function store(pl: AxisPlan, j: number, src: Float64Array, n: number): void {
  const o = pl.out;
  if (n < 3) {
    o.off[j] = 0; o.len[j] = 0; o.tr[j] = 0; o.mean[j] = 0; o.variance[j] = 0; o.mn[j] = 0; o.mx[j] = 0;
    return;
  }
  if (2 * (pl.used + n) > o.pool.length) {
    const grown = new Float64Array(Math.max(2 * o.pool.length, 2 * (pl.used + n)));
    grown.set(o.pool);
    o.pool = grown;
  }
  o.pool.set(src.subarray(0, 2 * n), 2 * pl.used);
  o.off[j] = pl.used;
  o.len[j] = n;
  pl.used += n;
  axisStats(o.pool, o.off[j], n, o.area0, o.al, o.be, stats);
  o.tr[j] = stats[0]; o.mean[j] = stats[1]; o.variance[j] = stats[2];
  projectionRange(o.pool, o.off[j], n, o.al, o.be, span);
  o.mn[j] = span[0]; o.mx[j] = span[1];
}

/** The polygon of node j (speed v) of an axis that is not fixed. */
function axisNode(pl: AxisPlan, j: number, v: number): void {
  if (pl.nPre < 3) {
    store(pl, j, pl.pre, 0);
    return;
  }
  const s = pl.strips;
  for (let i = pl.first; i < s.count; i++) {
    const d = deflect(pl.num[i], pl.dir[i], v);
    s.lo[i] = pl.lo0[i] - d;
    s.hi[i] = pl.hi0[i] - d;
  }
  const n = clipStrips(pl.pre, 0, pl.nPre, s, pl.first, s.count);
  store(pl, j, clipResult(), n);
}

/**
 * Fraction (of the original beam) of node j's polygon of an axis inside lo ≤ x ≤ hi at plane y (x
 * without deflection), as fractionInside.
 */
export function nodeFraction(a: AxisNodes, j: number, y: number, plane: number, lo: number, hi: number): number {
  const i = a.fixed ? 0 : j;
  if (y === plane) return fractionInsideFlat(a.pool, a.off[i], a.len[i], a.area0, a.al, a.be, lo, hi, a.mn[i], a.mx[i]);
  const [al, be] = planeCoefficients(a.c, y);
  return fractionInsideFlat(a.pool, a.off[i], a.len[i], a.area0, al, be, lo, hi, NaN, NaN);
}

let wScratch = new Float64Array(256), keptScratch = new Int32Array(256);

export function fineGeometry(f: FinePath, panels: number = 24): FineGeo {
  let g: { speeds: Float64Array; weights: Float64Array }, tr: Float64Array;
  if (f.grid) {
    const cg = coarsen(f.grid);
    g = cg;
    tr = cg.traces;
  } else {
    const gg = geometryGrid(f.dist, panels);
    g = gg;
    tr = f.spec ? specTraceAt(f.spec, gg.speeds, gg.phiMax) : new Float64Array(gg.speeds.length);
  }
  const n = g.speeds.length;
  let total = 0;
  if (wScratch.length < n) { wScratch = new Float64Array(n); keptScratch = new Int32Array(n); }
  const w = wScratch, keptAt = keptScratch;
  for (let k = 0; k < n; k++) {
    w[k] = Math.max(0, tr[k]) * g.weights[k];
    total += w[k];
  }
  if (total <= 0) {
    return { fine: f, yieldGeo: f.yieldSpin, captured: 0, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes: NO_NODES };
  }
  // the normalised weights; the nodes kept (weight ≠ 0) are then packed to the front, in their order
  const buf = new Float64Array(3 * n);
  const nw = buf.subarray(0, n), ndx = buf.subarray(n, 2 * n), ndz = buf.subarray(2 * n, 3 * n);
  let kept = 0;
  for (let k = 0; k < n; k++) {
    const wk = w[k] / total;
    if (wk !== 0) keptAt[kept++] = k;
    nw[k] = wk;
  }
  const cx = collimatorFor(f.track, 'x'), cz = collimatorFor(f.track, 'z');
  const win = f.detector?.window;
  const px = axisPlan(cx, f.track, 'x', f.plane, kept), pz = axisPlan(cz, f.track, 'z', f.plane, kept);
  const ax = px.out, az = pz.out;
  const atPlane = kicksAt(f.track.kicks, f.plane);
  const wxlo = win ? win.x - win.width / 2 : 0, wxhi = win ? win.x + win.width / 2 : 0;
  const wzlo = win ? win.z - win.height / 2 : 0, wzhi = win ? win.z + win.height / 2 : 0;
  let tSum = 0, capSum = 0, mx = 0, mz = 0, sx = 0, sz = 0;
  for (let j = 0; j < kept; j++) {
    const k = keptAt[j], wk = nw[k];
    const v = g.speeds[k];
    if (!ax.fixed) axisNode(px, j, v);
    if (!az.fixed) axisNode(pz, j, v);
    const ix = ax.fixed ? 0 : j, iz = az.fixed ? 0 : j;
    // deflection at the plane, kick by kick as deflection()
    const vv = v * v;
    let dx = 0, dz = 0;
    for (let i = 0; i < atPlane.num.length; i++) {
      const d = atPlane.num[i] / vv;
      dx += d * atPlane.nx[i];
      dz += d * atPlane.nz[i];
    }
    const t = ax.tr[ix] * az.tr[iz];
    tSum += wk * t;
    mx += wk * t * (ax.mean[ix] + dx);
    mz += wk * t * (az.mean[iz] + dz);
    sx += wk * t * (ax.variance[ix] + (ax.mean[ix] + dx) ** 2);
    sz += wk * t * (az.variance[iz] + (az.mean[iz] + dz) ** 2);
    if (win) {
      const fx = nodeFraction(ax, j, f.plane, f.plane, wxlo - dx, wxhi - dx);
      const fz = nodeFraction(az, j, f.plane, f.plane, wzlo - dz, wzhi - dz);
      capSum += wk * fx * fz;
    }
    nw[j] = wk; ndx[j] = dx; ndz[j] = dz;
  }
  const nodes: NodeSet = { count: kept, plane: f.plane, w: nw, dx: ndx, dz: ndz, x: ax, z: az };
  const yieldGeo = f.yieldSpin * tSum;
  const safe = tSum > 0 ? tSum : 1;
  let mean = { x: mx / safe, z: mz / safe };
  if (f.track.strips.length === 0 && f.track.kicks.length > 0 && f.spec && f.moment2Cache && f.fraction > 0 && f.yieldSpin > 0) {
    // nothing clips: the mean deflection is Σ_k a_k L_k (L_k/2 + D_k)·⟨y s²⟩/⟨y⟩, exact over the whole
    // distribution (the grid leaves out the slowest atoms, which carry ~0.25 % of an effusive ⟨1/v²⟩)
    const m2 = specTraceMoment(f.spec, f.dist, 2, f.moment2Cache) / (f.yieldSpin / f.fraction);
    const geo0 = kept > 0 ? { x: ax.mean[0], z: az.mean[0] } : { x: 0, z: 0 };
    let dx = 0, dz = 0;
    for (const k of f.track.kicks) {
      if (f.plane < k.exitY - 1e-12) continue;
      const c = k.accel * k.length * (k.length / 2 + (f.plane - k.exitY));
      dx += c * k.n.x;
      dz += c * k.n.z;
    }
    mean = { x: geo0.x + dx * m2, z: geo0.z + dz * m2 };
  }
  return {
    fine: f, yieldGeo, captured: win ? capSum / safe : 1,
    mean, second: { x: sx / safe, z: sz / safe }, nodes,
  };
}
