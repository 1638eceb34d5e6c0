/**
 * From the paths of a run to the leaves and detectors of the result: yields, the detector plane
 * (displacement, spread, profile, captured fraction, crosstalk, resolved/overlapping) and counts.
 *
 * Geometry is averaged over speed on a grid (physics/velocity.ts speedGrid) weighted by each path's
 * own speed-resolved yield; phase terms too fast for that grid (a step above 0.5 rad between nodes)
 * are left out of the weights: against the smooth geometric factors they average to nothing. The
 * yields themselves come from the exact frequency-by-frequency averages; clipping multiplies them by
 * the grid's transmitted fraction, and what is clipped is counted as lost.
 */
import { speedGrid, type VelocityDistribution } from '../physics/velocity.ts';
import type { Vec3 } from '../physics/rotation.ts';
import type { Detector, Rect } from '../beamline/types.ts';
import {
  basePolygonFlat, areaFlat, clipStrips, clipResult, axisStats, projectionRange, fractionInsideFlat,
  polygonCdfFlat, cdfAtFlat, planeCoefficients, type Collimator1D, type FlatStrips,
} from './geometry.ts';
import type { LeafResult, DetectorResult, NeighbourVerdict, CrosstalkEntry } from './result.ts';
import type { SpecState } from './spectral.ts';
import { specTraceAt, specTraceMoment } from './average.ts';
import { countSigma, countsIn, signalToBackground, timeToPrecision } from './counting.ts';

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
interface AxisNodes {
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
interface NodeSet {
  readonly count: number;
  readonly plane: number;
  readonly w: Float64Array;
  readonly dx: Float64Array;
  readonly dz: Float64Array;
  readonly x: AxisNodes | null;
  readonly z: AxisNodes | null;
}

const NO_NODES: NodeSet = { count: 0, plane: 0, w: new Float64Array(0), dx: new Float64Array(0), dz: new Float64Array(0), x: null, z: null };

interface FineGeo {
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

function hasGeometry(f: FinePath): boolean {
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
const grids = new WeakMap<VelocityDistribution, ReturnType<typeof speedGrid> & { phiMax: number }>();
function geometryGrid(d: VelocityDistribution): ReturnType<typeof speedGrid> & { phiMax: number } {
  let g = grids.get(d);
  if (!g) {
    const sg = speedGrid(d, 24, 8);
    let phiMax = Infinity;
    if (d.kind === 'effusive' || d.kind === 'supersonic') {
      let ds = 0;
      for (let k = 1; k < sg.speeds.length; k++) ds = Math.max(ds, Math.abs(1 / sg.speeds[k - 1] - 1 / sg.speeds[k]));
      phiMax = 0.5 / ds;
    }
    g = { ...sg, phiMax };
    grids.set(d, g);
  }
  return g;
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
function nodeFraction(a: AxisNodes, j: number, y: number, plane: number, lo: number, hi: number): number {
  const i = a.fixed ? 0 : j;
  if (y === plane) return fractionInsideFlat(a.pool, a.off[i], a.len[i], a.area0, a.al, a.be, lo, hi, a.mn[i], a.mx[i]);
  const [al, be] = planeCoefficients(a.c, y);
  return fractionInsideFlat(a.pool, a.off[i], a.len[i], a.area0, al, be, lo, hi, NaN, NaN);
}

let wScratch = new Float64Array(256), keptScratch = new Int32Array(256);

function fineGeometry(f: FinePath): FineGeo {
  let g: { speeds: Float64Array; weights: Float64Array }, tr: Float64Array;
  if (f.grid) {
    const cg = coarsen(f.grid);
    g = cg;
    tr = cg.traces;
  } else {
    const gg = geometryGrid(f.dist);
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

interface LeafAcc {
  key: string;
  path: string[];
  target: string;
  plane: number;
  detector: Detector | null;
  fines: FineGeo[];
  yieldSpin: number;
}

/** Builds the result's leaves and detectors from the run's paths (see module doc). */
export function evaluateGeometry(fines: readonly FinePath[], flux: number, epsilon: number, _lost: { spin: number }): {
  leaves: LeafResult[]; detectors: DetectorResult[]; clipped: number; nodes: number; chiError: number; warnings: string[];
} {
  const warnings: string[] = [];
  const geometry = fines.some(hasGeometry);
  const accs = new Map<string, LeafAcc>();
  let clipped = 0, nodes = 0, chiError = 0;
  for (const f of fines) {
    chiError += f.yieldError ?? 0;
    const key = `${f.path.join('|')}→${f.target}`;
    let a = accs.get(key);
    if (!a) {
      a = { key, path: [...f.path], target: f.target, plane: f.plane, detector: f.detector, fines: [], yieldSpin: 0 };
      accs.set(key, a);
    }
    a.yieldSpin += f.yieldSpin;
    if (geometry) {
      // a stop absorbs its sub-beam wherever it goes, and an empty path has no profile: no geometry
      if (f.target === 'stop' || !(f.yieldSpin > 1e-15)) {
        a.fines.push({ fine: f, yieldGeo: f.yieldSpin, captured: 1, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes: NO_NODES });
        continue;
      }
      const g = fineGeometry(f);
      nodes += g.nodes.count;
      clipped += f.yieldSpin - g.yieldGeo;
      a.fines.push(g);
    }
  }
  // the result's leaves, and beside them (same index) their accumulators: the leaves are handed out as they
  // are, with no field to strip (an object rest copy per leaf cost more than the rest of this function)
  const leaves: LeafResult[] = [];
  const accOf: LeafAcc[] = [];
  for (const a of accs.values()) {
    accOf.push(a);
    const eff = a.detector ? a.detector.efficiency : 1;
    // an empty path (its flux at the rounding floor, ≤ 1e-15 of the oven's) has no place on the plane
    if (!geometry || a.target === 'stop' || a.fines.every((g) => g.nodes === NO_NODES)) {
      const y = roundOffFloor(a.yieldSpin);
      leaves.push({ path: a.path, target: a.target, yield: y, rate: flux * y * eff });
      continue;
    }
    const y = roundOffFloor(a.fines.reduce((s, g) => s + g.yieldGeo, 0));
    const w = y > 0 ? y : 1;
    const mean = { x: a.fines.reduce((s, g) => s + g.yieldGeo * g.mean.x, 0) / w, z: a.fines.reduce((s, g) => s + g.yieldGeo * g.mean.z, 0) / w };
    const second = { x: a.fines.reduce((s, g) => s + g.yieldGeo * g.second.x, 0) / w, z: a.fines.reduce((s, g) => s + g.yieldGeo * g.second.z, 0) / w };
    const captured = a.detector?.window ? a.fines.reduce((s, g) => s + g.yieldGeo * g.captured, 0) / w : undefined;
    leaves.push({
      path: a.path, target: a.target, yield: y,
      rate: flux * y * eff * (captured ?? 1),
      displacement: mean,
      spread: { x: Math.sqrt(Math.max(0, second.x - mean.x ** 2)), z: Math.sqrt(Math.max(0, second.z - mean.z ** 2)) },
      ...(captured !== undefined ? { captured } : {}),
      plane: a.plane,
    });
  }
  const verdicts = new Map<string, NeighbourVerdict[]>();
  if (geometry) addProfiles(leaves, accOf, verdicts);
  // detectors
  const detectors: DetectorResult[] = [];
  const seen = new Map<string, DetectorResult>();
  for (let i = 0; i < leaves.length; i++) {
    const l = leaves[i], det = accOf[i].detector;
    if (!det) continue;
    let d = seen.get(det.id);
    if (!d) {
      d = {
        id: det.id, yield: 0, rate: 0, counts: 0, sigma: 0, signal: 0, background: det.background, dwell: det.dwell,
        signalToBackground: 0, timeToPrecision: { epsilon, seconds: 0 }, plane: accOf[i].plane,
      };
      seen.set(det.id, d);
      detectors.push(d);
    }
    d.yield += l.yield;
    d.signal += l.rate;
  }
  for (const d of detectors) {
    d.rate = d.signal + d.background;
    d.counts = countsIn(d.rate, d.dwell);
    d.sigma = countSigma(d.counts);
    // unbounded values are left out (JSON has no Infinity): S/B without background, the time without signal
    const sb = signalToBackground(d.signal, d.background);
    if (Number.isFinite(sb)) d.signalToBackground = sb;
    else delete d.signalToBackground;
    const t = timeToPrecision(d.signal, d.background, epsilon);
    d.timeToPrecision = Number.isFinite(t) ? { epsilon, seconds: t } : { epsilon };
    if (geometry) {
      const det = accOf.find((a) => a.detector?.id === d.id)!.detector!;
      if (det.window) d.crosstalk = crosstalkFor(det, d.plane ?? 0, leaves, accOf, flux);
      const v = verdicts.get(planeKey(d.plane ?? 0));
      if (v && v.length > 0) d.neighbours = v;
    }
  }
  if (geometry && fines.some((f) => f.dist.kind === 'effusive' && f.track.kicks.length > 0)) {
    warnings.push('geometry: behind a deflecting magnet the rms spread of an effusive beam is set by its slowest atoms (⟨1/v⁴⟩ diverges for a v³ flux distribution); the spreads and profiles shown leave out v < 0.05·√(2kT/M), 3e-6 of the flux, which in a real line ends on an aperture');
  }
  return { leaves, detectors, clipped, nodes, chiError, warnings };
}

function planeKey(y: number): string {
  return (Math.round(y * 1e3) / 1e3).toFixed(3);
}

function crosstalkFor(det: Detector, plane: number, leaves: readonly LeafResult[], accOf: readonly LeafAcc[], flux: number): CrosstalkEntry[] {
  const win = det.window!;
  const out: CrosstalkEntry[] = [];
  const wxlo = win.x - win.width / 2, wxhi = win.x + win.width / 2;
  const wzlo = win.z - win.height / 2, wzhi = win.z + win.height / 2;
  for (let i = 0; i < leaves.length; i++) {
    const l = leaves[i], acc = accOf[i];
    if (l.target === det.id || acc.detector === null || Math.abs(acc.plane - plane) > 1e-3 || l.yield <= 0) continue;
    let inside = 0;
    for (const g of acc.fines) {
      const ns = g.nodes;
      let s = 0;
      if (ns.count > 0) {
        const ax = ns.x!, az = ns.z!;
        // a speed-independent axis repeats its polygon and, undeflected, its window: one clip for all
        let lastOff = -1, lastLen = -1, lastLo = NaN, lastHi = NaN, lastF = 0;
        for (let j = 0; j < ns.count; j++) {
          const lo = wxlo - ns.dx[j], hi = wxhi - ns.dx[j];
          let fx: number;
          const ix = ax.fixed ? 0 : j;
          if (ax.off[ix] === lastOff && ax.len[ix] === lastLen && lo === lastLo && hi === lastHi) fx = lastF;
          else {
            fx = nodeFraction(ax, j, plane, ns.plane, lo, hi);
            lastOff = ax.off[ix]; lastLen = ax.len[ix]; lastLo = lo; lastHi = hi; lastF = fx;
          }
          if (fx === 0) continue;
          const fz = nodeFraction(az, j, plane, ns.plane, wzlo - ns.dz[j], wzhi - ns.dz[j]);
          s += ns.w[j] * fx * fz;
        }
      }
      inside += g.fine.yieldSpin * s;
    }
    const fraction = inside / l.yield;
    if (fraction > 1e-9) out.push({ path: l.path, target: l.target, fraction, rate: flux * l.yield * fraction * det.efficiency });
  }
  return out;
}

// breakpoints, values and slopes of one node's profile CDF (polygonCdfFlat)
let cdfT = new Float64Array(32), cdfF = new Float64Array(32), cdfG = new Float64Array(32);

/**
 * Adds one node's histogram, scale · (F(edge_{i+1} − d) − F(edge_i − d)) over the bins with edges
 * lo + i·dx, to dens (F the piecewise-quadratic CDF of cdfAtFlat with m breakpoints). Bins wholly
 * below or above the node's polygon add exactly nothing and are passed over.
 */
function addNodeHistogram(dens: Float64Array, bins: number, lo: number, dx: number, d: number, scale: number, m: number): void {
  const t = cdfT, f = cdfF, g = cdfG;
  const t0 = t[0], tn = t[m - 1], fn = f[m - 1];
  // first bin whose upper edge can lie above t0 (two bins of margin against rounding)
  let i = Math.max(0, Math.floor((t0 + d - lo) / dx) - 2);
  // the edges grow with i: when edge i is at or below t0, so are all before it, and F is 0 there
  if (!(i < bins) && lo + bins * dx - d <= t0) return;
  if (!(i < bins) || !(lo + i * dx - d <= t0)) i = 0;
  let prev = i === 0 ? cdfAtFlat(t, f, g, m, lo - d) : 0;
  let p = 0;
  for (; i < bins; i++) {
    const x = lo + (i + 1) * dx - d;
    let cur: number;
    if (x <= t0) cur = 0;
    else if (x >= tn) cur = fn;
    else {
      while (t[p + 1] <= x) p++;
      const dd = x - t[p], w = t[p + 1] - t[p];
      cur = f[p] + g[p] * dd + ((g[p + 1] - g[p]) * dd * dd) / (2 * w);
    }
    if (cur !== prev) dens[i] += scale * (cur - prev);
    else if (x >= tn) return;
    prev = cur;
  }
}

/** Profiles on a common grid per detector plane, and the resolved/overlapping verdict of neighbours. */
function addProfiles(leaves: readonly LeafResult[], accOf: readonly LeafAcc[], verdicts: Map<string, NeighbourVerdict[]>): void {
  const groups = new Map<string, { ls: LeafResult[]; as: LeafAcc[] }>();
  for (let i = 0; i < leaves.length; i++) {
    const l = leaves[i];
    if (l.target === 'stop' || l.yield <= 0 || !l.displacement) continue;
    const k = planeKey(accOf[i].plane);
    const gr = groups.get(k);
    if (gr) { gr.ls.push(l); gr.as.push(accOf[i]); }
    else groups.set(k, { ls: [l], as: [accOf[i]] });
  }
  for (const [k, { ls, as }] of groups) {
    const spreadOf = (ax: 'x' | 'z') => {
      const ms = ls.map((l) => l.displacement![ax]);
      return Math.max(...ms) - Math.min(...ms) + Math.max(...ls.map((l) => l.spread![ax]));
    };
    const axis: 'x' | 'z' = spreadOf('z') >= spreadOf('x') ? 'z' : 'x';
    let lo = Infinity, hi = -Infinity;
    for (const l of ls) {
      lo = Math.min(lo, l.displacement![axis] - 4 * l.spread![axis]);
      hi = Math.max(hi, l.displacement![axis] + 4 * l.spread![axis]);
    }
    if (!(hi - lo > 1e-7)) { const c = 0.5 * (lo + hi); lo = c - 5e-5; hi = c + 5e-5; }
    const bins = 60;
    const dx = (hi - lo) / bins;
    const positions = Array.from({ length: bins }, (_, i) => lo + (i + 0.5) * dx);
    for (let li = 0; li < ls.length; li++) {
      const l = ls[li], acc = as[li];
      const dens = new Float64Array(bins);
      for (const g of acc.fines) {
        // the profile is a histogram: each speed's transmitted polygon has a closed-form CDF
        const ns = g.nodes;
        if (ns.count === 0) continue;
        const ra = axis === 'x' ? ns.x! : ns.z!, oa = axis === 'x' ? ns.z! : ns.x!;
        const dd = axis === 'x' ? ns.dx : ns.dz;
        const [al, be] = planeCoefficients(ra.c, acc.plane);
        let lastOff = -1, lastLen = -1, m = 0;
        for (let j = 0; j < ns.count; j++) {
          const ir = ra.fixed ? 0 : j;
          const n = ra.len[ir];
          if (n < 3) continue;
          const scale = (g.fine.yieldSpin * ns.w[j] * oa.tr[oa.fixed ? 0 : j]) / dx;
          if (scale === 0) continue;
          if (ra.off[ir] !== lastOff || n !== lastLen) {
            if (cdfT.length < n) { cdfT = new Float64Array(2 * n); cdfF = new Float64Array(2 * n); cdfG = new Float64Array(2 * n); }
            m = polygonCdfFlat(ra.pool, ra.off[ir], n, ra.area0, al, be, cdfT, cdfF, cdfG);
            lastOff = ra.off[ir];
            lastLen = n;
          }
          addNodeHistogram(dens, bins, lo, dx, dd[j], scale, m);
        }
      }
      l.profile = { axis, positions, density: [...dens] };
    }
    const sorted = [...ls].sort((a, b) => a.displacement![axis] - b.displacement![axis]);
    const out: NeighbourVerdict[] = [];
    for (let i = 1; i < sorted.length; i++) {
      const a = sorted[i - 1], b = sorted[i];
      let ov = 0;
      for (let j = 0; j < bins; j++) ov += Math.min(a.profile!.density[j] / a.yield, b.profile!.density[j] / b.yield) * dx;
      out.push({
        a: `${a.path.join(' ')} → ${a.target}`, b: `${b.path.join(' ')} → ${b.target}`,
        separation: b.displacement![axis] - a.displacement![axis], overlap: ov,
        verdict: ov < 0.01 ? 'resolved' : 'overlapping', axis,
      });
    }
    verdicts.set(k, out);
  }
}

/** A yield below zero by rounding only (the sum of differences of traces, ≥ −1e-12 of the flux) is 0. */
export function roundOffFloor(y: number): number {
  return y < 0 && y >= -1e-12 ? 0 : y;
}
