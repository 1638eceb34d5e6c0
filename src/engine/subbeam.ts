/**
 * One sub-beam from the oven to its plane: its transverse track (the oven's orifice and the first slit set the
 * directions of its trajectories, later slits and pole gaps clip, magnets deflect), and at each speed node of
 * the geometry's grid the transmitted polygon of each transverse axis, its mean, variance and deflection.
 *
 * Geometry is averaged over speed weighted by the path's own speed-resolved yield: for a sub-beam that something clips,
 * on panels cut at the kinks of its fractions and refined until two grids agree (convergedGeometry); otherwise on one
 * grid (physics/velocity.ts speedGrid). Phase terms too fast for the 24-panel grid (a step above 0.5 rad between its
 * nodes) are left out of the weights: against the smooth geometric factors they average to nothing.
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
  /**
   * Each node's speed and the speeds its quadrature weight stands for (its cell: the panel cut in the proportions of the
   * rule's weights, so the cells of a panel tile it), where the grid has panels; the profiles spread a node over its cell.
   */
  readonly v?: Float64Array;
  readonly cellLo?: Float64Array;
  readonly cellHi?: Float64Array;
}

export const NO_NODES: NodeSet = { count: 0, plane: 0, w: new Float64Array(0), dx: new Float64Array(0), dz: new Float64Array(0), x: null, z: null };
/** The nodes of a sub-beam averaged without keeping them (no profile, crosstalk or centre line reads them): their count alone. */
const UNKEPT: NodeSet = { ...NO_NODES };

export interface FineGeo {
  fine: FinePath;
  yieldGeo: number;
  captured: number;
  mean: { x: number; z: number };
  second: { x: number; z: number };
  nodes: NodeSet;
  /** The share of the sub-beam's flux inside each other window on its plane that it was averaged for (crosstalk), by detector. */
  inside?: Map<string, number>;
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

/** The detector plane's tolerance: a sub-beam's average is taken once two grids agree on its transmitted and captured fractions to this, relative to each. */
export const GEOMETRY_TOLERANCE = 1e-4;
/** The equal panels a clipped sub-beam's speed range is cut into before its kinks cut it further. */
export const GEOMETRY_BASE_PANELS = 2;
/** The most panels (of 7 speeds each) the refinement of one sub-beam goes to. */
export const GEOMETRY_MAX_PANELS = 384;

/** A window on a sub-beam's plane (within 1 mm, as crosstalk takes them) other than its own, whose share of the sub-beam is asked for. */
export interface PlaneWindow {
  readonly id: string;
  readonly window: Rect;
  /** The window's plane (m along the beam). */
  readonly y: number;
}

// Gauss–Kronrod 3/7 on [−1, 1]: Kronrod's extension of the 3-point Gauss rule (A. S. Kronrod, Nodes and Weights of
// Quadrature Formulas, 1965; the numbers from memory, checked by test/engine/subbeam-grid.test.ts: the 7 nodes integrate
// x^k exactly to k = 11, the 3 Gauss nodes to k = 5). GK_X the nodes in increasing order, GK_WK their Kronrod weights,
// GK_WG the weights of the Gauss nodes among them (0 at the others).
export const GK_X = new Float64Array(7), GK_WK = new Float64Array(7), GK_WG = new Float64Array(7);
{
  /* eslint-disable no-loss-of-precision */
  const x = [0.960491268708020283423507092629080, 0.774596669241483377035853079956480, 0.434243749346802558002071502844628, 0];
  const wk = [0.104656226026467265193823857192073, 0.268488089868333440728569280666710, 0.401397414775962222905051818618432,
    0.450916538658474142345110087045571];
  const wg = [0, 0.555555555555555555555555555555556, 0, 0.888888888888888888888888888888889];
  /* eslint-enable no-loss-of-precision */
  for (let i = 0; i < 7; i++) {
    const j = i < 3 ? i : 6 - i;
    GK_X[i] = i < 3 ? -x[j] : x[j];
    GK_WK[i] = wk[j];
    GK_WG[i] = wg[j];
  }
}
const RULE = 7;

/** The speed range of the geometry's average (as speedGrid: the effusive beam's 0.05 a … 4.8 a, a supersonic beam's u ± 12 α). */
function geometryRange(d: VelocityDistribution): [number, number] {
  if (d.kind === 'effusive') return [0.05 * d.a, 4.8 * d.a];
  if (d.kind === 'supersonic') return [Math.max(0, d.u - 12 * d.alpha), d.u + 12 * d.alpha];
  return [0, 0];
}

/** The flux density at v up to a constant factor (the geometry normalises its weights): v³ e^{−v²/a²}, v³ e^{−(v−u)²/α²}. */
export function densityShape(d: VelocityDistribution, v: number): number {
  if (d.kind === 'effusive') {
    const x = v / d.a;
    return x * x * x * Math.exp(-x * x);
  }
  if (d.kind === 'supersonic') {
    const x = (v - d.u) / d.alpha;
    return v * v * v * Math.exp(-x * x);
  }
  return 0;
}

/**
 * A sub-beam's geometry averaged over the speeds to GEOMETRY_TOLERANCE. The fractions it transmits and that each window on
 * its plane catches are, at one speed, areas of polygons whose edges move linearly in 1/v²: piecewise polynomials in 1/v²,
 * with kinks where an edge starts or stops clipping (three edges meet, or two parallel ones cross; kinkSpeeds finds them in
 * closed form). The speed range is cut at every kink and into GEOMETRY_BASE_PANELS equal panels, so that on each panel the
 * fractions are smooth; on each panel the 3 Gauss and the 7 Kronrod speeds (Gauss–Kronrod 3/7) are two grids, and the
 * panels whose two grids disagree most are halved until the sums over the panels of |Kronrod − Gauss| are within the
 * tolerance of the transmitted fraction and of each window's fraction (its own, and the share of every other window on its
 * plane: its crosstalk), each relative to itself above a floor of 1e-9 of the sub-beam's flux. The Kronrod grid is taken.
 * A fixed speed, a table and a speed-by-speed leaf have one grid, taken as it is, and so has a sub-beam nothing clips (its
 * fractions do not depend on the grid). `change` is the sum left where the refinement stopped at GEOMETRY_MAX_PANELS. With `keep`
 * false the speed nodes are counted but not copied out (nothing reads them: no profile, crosstalk or centre line is made).
 */
export function convergedGeometry(f: FinePath, others: readonly PlaneWindow[] = [], keep = true): { geo: FineGeo; change?: number; extraNodes?: number } {
  const clips = f.track.strips.length > 0 || !!f.detector?.window;
  if (!clips) {
    // nothing clips: the whole sub-beam arrives at every speed (the collimator's rectangle unclipped, 1 along each axis),
    // in either case the yield it had; its speed nodes are made only where something reads them (profiles, displacement)
    if (!keep) return { geo: { fine: f, yieldGeo: f.yieldSpin, captured: 1, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes: { ...UNKEPT, plane: f.plane } } };
    const g = fineGeometry(f, 24, [], true);
    return { geo: g.nodes === NO_NODES ? g : { ...g, yieldGeo: f.yieldSpin } };
  }
  if (f.grid || !f.spec || (f.dist.kind !== 'effusive' && f.dist.kind !== 'supersonic')) return { geo: fineGeometry(f, 24, [], keep) };
  const crosstalk = others.some((o) => o.id !== f.detector?.id);
  // (its nodes are kept only where no second grid takes their place; its exact mean wherever the plane reports one)
  const own = convergedPass(f, [], keep && !crosstalk, keep);
  if (!crosstalk || own.geo.nodes === NO_NODES) return own;
  // the other windows' shares (crosstalk) and the nodes the profiles read, on a grid of their own cut at the other
  // windows' kinks as well: the sub-beam's own numbers (transmitted, captured, moments) come from its own grid and do
  // not depend on which other windows stand on its plane, so a run that reports no crosstalk (the planning tools) gives
  // them bit for bit
  const cross = convergedPass(f, others, keep);
  const change = own.change === undefined ? cross.change : cross.change === undefined ? own.change : Math.max(own.change, cross.change);
  const geo: FineGeo = { ...own.geo, nodes: cross.geo.nodes, ...(cross.geo.inside ? { inside: cross.geo.inside } : {}) };
  // both grids' speeds were evaluated: the run counts them all
  return { geo, ...(change === undefined ? {} : { change }), extraNodes: own.geo.nodes.count };
}

/** convergedGeometry for the sub-beam's own window and the windows in `others` together, on one grid cut at all their kinks. */
function convergedPass(f: FinePath, others: readonly PlaneWindow[], keep: boolean, exactMean = keep): { geo: FineGeo; change?: number } {
  const d = f.dist;
  const spec = f.spec!;
  const [lo, hi] = geometryRange(d);
  const e = evaluator(f, others);
  // the phase terms kept in the weights: those the 24-panel grid resolves (the grid the plane always had)
  const phiMax = geometryGrid(d, 24).phiMax;
  const kinks = kinkSpeeds(e, lo, hi);
  const base: number[] = [];
  for (let i = 1; i < GEOMETRY_BASE_PANELS; i++) base.push(lo + ((hi - lo) * i) / GEOMETRY_BASE_PANELS);
  const { pa, pb } = cutIntervals(lo, hi, kinks.x, kinks.z, base);
  // each axis's quadratics in u on its own cut intervals (see axisQuadratics)
  const qx = axisQuadratics(e, true, lo, hi, kinks.x, QS_X), qz = axisQuadratics(e, false, lo, hi, kinks.z, QS_Z);
  // the nodes' polygons are made only where something reads them: the kept nodes, the moments of the displacement
  const full = keep || exactMean;
  const nQ = 2 + e.wins.length;
  const floor = 1e-9;
  const minWidth = (hi - lo) / 65536;
  // panel p: its nodes from first[p], its sums (W, T, C_w over the windows) on the Kronrod grid then the Gauss grid
  const first: number[] = [];
  let sums = SUMS.length >= 2 * nQ * 64 ? SUMS : (SUMS = new Float64Array(2 * nQ * 64));
  let active: number[] = pa.map((_, i) => i);
  let todo = active.slice();
  let nodes = 0, change: number | undefined;
  const err = new Float64Array(nQ), rest = new Float64Array(nQ), tot = new Float64Array(nQ);
  for (;;) {
    // the new panels' speeds, their traces in one call, their nodes and their sums
    const n0 = nodes;
    reserveNodes(e, nodes + RULE * todo.length);
    for (const p of todo) {
      first[p] = nodes;
      const c = 0.5 * (pa[p] + pb[p]), h = 0.5 * (pb[p] - pa[p]);
      for (let i = 0; i < RULE; i++) NV[nodes + i] = c + h * GK_X[i];
      nodes += RULE;
    }
    const tr = specTraceAt(spec, NV.subarray(n0, nodes), phiMax);
    for (let n = n0; n < nodes; n++) NWD[n] = Math.max(0, tr[n - n0]) * densityShape(d, NV[n]);
    for (const p of todo) {
      // the panel lies in one interval of each axis (its ends are cuts of both or inside both)
      const mid = 0.5 * (pa[p] + pb[p]), kx = intervalOf(qx, mid), kz = intervalOf(qz, mid);
      const direct = qx.direct[kx] === 1 || qz.direct[kz] === 1;
      for (let n = first[p]; n < first[p] + RULE; n++) {
        if (full || direct) evalNode(e, n);
        if (!direct) quadraticNode(e, n, qx, kx, qz, kz);
      }
    }
    if (sums.length < 2 * nQ * pa.length) {
      const grown = new Float64Array(4 * nQ * pa.length);
      grown.set(sums);
      sums = SUMS = grown;
    }
    const nw = e.wins.length;
    for (const p of todo) {
      const h = 0.5 * (pb[p] - pa[p]), o = 2 * nQ * p;
      sums.fill(0, o, o + 2 * nQ);
      for (let i = 0; i < RULE; i++) {
        const n = first[p] + i, wd = NWD[n];
        if (wd === 0) continue;
        const kw = GK_WK[i] * h * wd, gw = GK_WG[i] * h * wd;
        const t = NT[n];
        sums[o] += kw; sums[o + nQ] += gw;
        sums[o + 1] += kw * t; sums[o + nQ + 1] += gw * t;
        for (let w = 0; w < nw; w++) {
          const cw = NCAP[n * nw + w];
          sums[o + 2 + w] += kw * cw; sums[o + nQ + 2 + w] += gw * cw;
        }
      }
    }
    // the error of each fraction (Q/W) as the sum over the panels of the two grids' difference, relative to the fraction
    tot.fill(0);
    for (const p of active) for (let q = 0; q < nQ; q++) tot[q] += sums[2 * nQ * p + q];
    const W = tot[0];
    if (!(W > 0)) break;
    err.fill(0);
    // each panel's share of each fraction's error, found once (pe[p nQ + q])
    if (PE.length < nQ * pa.length) PE = new Float64Array(2 * nQ * pa.length);
    const pe = PE;
    for (const p of active) {
      for (let q = 1; q < nQ; q++) {
        const x = panelError(sums, 2 * nQ * p, nQ, q, tot, floor);
        pe[nQ * p + q] = x;
        err[q] += x;
      }
    }
    let worst = 0;
    for (let q = 1; q < nQ; q++) worst = Math.max(worst, err[q]);
    if (worst <= GEOMETRY_TOLERANCE) { change = undefined; break; }
    change = worst;
    // halve the panels that hold the most of the error until what is left is a quarter of the tolerance
    const order = active.filter((p) => pb[p] - pa[p] > minWidth);
    if (KEY.length < pa.length) KEY = new Float64Array(2 * pa.length);
    const key = KEY;
    for (const p of order) {
      let k = 0;
      for (let q = 1; q < nQ; q++) k = Math.max(k, pe[nQ * p + q] / Math.max(err[q], 1e-300));
      key[p] = k;
    }
    order.sort((a, b) => key[b] - key[a]);
    rest.set(err);
    const split = new Set<number>();
    for (const p of order) {
      let done = true;
      for (let q = 1; q < nQ; q++) if (rest[q] > GEOMETRY_TOLERANCE / 4) done = false;
      if (done) break;
      if (active.length + split.size + 1 > GEOMETRY_MAX_PANELS) break;
      split.add(p);
      for (let q = 1; q < nQ; q++) rest[q] -= pe[nQ * p + q];
    }
    if (split.size === 0) break;
    const next: number[] = [];
    todo = [];
    for (const p of active) {
      if (!split.has(p)) { next.push(p); continue; }
      const m = 0.5 * (pa[p] + pb[p]);
      const a = pa.length;
      pa.push(pa[p], m); pb.push(m, pb[p]);
      next.push(a, a + 1);
      todo.push(a, a + 1);
    }
    active = next;
  }
  // the Kronrod grid of the panels taken, in increasing speed
  let total = 0, m = 0;
  reserveKept(RULE * active.length);
  for (const p of active) {
    const h = 0.5 * (pb[p] - pa[p]);
    let cell = pa[p];
    for (let i = 0; i < RULE; i++) {
      const n = first[p] + i;
      const q = GK_WK[i] * h * NWD[n];
      KIDX[m] = n; KW[m] = q;
      KLO[m] = cell;
      cell = i === RULE - 1 ? pb[p] : cell + GK_WK[i] * h;
      KHI[m] = cell;
      m++;
      total += q;
    }
  }
  const geo = assemble(e, m, total, true, keep, exactMean, full);
  return change === undefined ? { geo } : { geo, change };
}

/**
 * One axis of a sub-beam with its transmitted fraction and each window's fraction along it as quadratics in u = 1/v² on
 * the axis's own cut intervals (pa[k] … pb[k] in speed, cut at its own kinks: another axis's kinks do not change it).
 * Within an interval no edge of this axis starts or stops bounding a polygon, and every edge moves linearly in u (a
 * strip with the deflection at its plane, a window with the deflection at the sub-beam's plane), so every vertex moves
 * linearly in u and every area is a quadratic in u: read exactly (to rounding) from the axis at the interval's two ends
 * and its middle in u, shared ends read once. A fourth reading at three quarters checks it; where it differs by more
 * than rounding (an edge the kinks' closed form missed, or an interval reaching v = 0), the nodes in that interval are
 * evaluated one by one instead (`direct`). An axis that is the same at every speed (fixed, and not deflected at the
 * plane) is read once, as one interval. For interval k: c[k·len] = u at its middle, c[k·len + 1] = the half-width h in
 * u, then for each quantity i (the transmitted fraction, then each window's) its coefficients c0, c1, c2 in
 * s = (u − u_mid)/h.
 */
interface AxisQuadratics { pa: number[]; pb: number[]; c: Float64Array; len: number; direct: Uint8Array }

/** The scratch of one axis's quadratics (reused from call to call, grown on demand; every entry read is set first). */
interface QuadraticScratch { c: Float64Array; direct: Uint8Array; ends: Float64Array }
const QS_X: QuadraticScratch = { c: new Float64Array(512), direct: new Uint8Array(64), ends: new Float64Array(128) };
const QS_Z: QuadraticScratch = { c: new Float64Array(512), direct: new Uint8Array(64), ends: new Float64Array(128) };

// the cuts of cutIntervals, sorted (grown on demand)
let CUTS = new Float64Array(64);

/** The intervals of lo … hi cut at the speeds of `cuts` together (a cut within 1e-9 of the range from the last one or from hi left out). */
function cutIntervals(lo: number, hi: number, ...cuts: (readonly number[])[]): { pa: number[]; pb: number[] } {
  let n = 0;
  for (const list of cuts) n += list.length;
  if (CUTS.length < n) CUTS = new Float64Array(2 * n);
  n = 0;
  for (const list of cuts) for (let i = 0; i < list.length; i++) CUTS[n++] = list[i];
  const sorted = CUTS.subarray(0, n).sort();
  const pa = [lo], pb: number[] = [];
  const minGap = 1e-9 * (hi - lo);
  for (let i = 0; i < n; i++) {
    const x = sorted[i];
    if (x - pa[pa.length - 1] > minGap && hi - x > minGap) { pb.push(x); pa.push(x); }
  }
  pb.push(hi);
  return { pa, pb };
}

function axisQuadratics(e: Evaluator, xAxis: boolean, lo: number, hi: number, cuts: readonly number[], sc: QuadraticScratch): AxisQuadratics {
  const pl = xAxis ? e.px : e.pz;
  const q = 1 + e.wins.length, len = 2 + 3 * q;
  const still = xAxis ? !!e.constX : !!e.constZ;
  const { pa, pb } = still ? { pa: [lo], pb: [hi] } : cutIntervals(lo, hi, cuts);
  const nIv = pa.length;
  if (sc.c.length < nIv * len) sc.c = new Float64Array(2 * nIv * len);
  if (sc.direct.length < nIv) sc.direct = new Uint8Array(2 * nIv);
  if (sc.ends.length < (nIv + 3) * q) sc.ends = new Float64Array(2 * (nIv + 3) * q);
  const c = sc.c, direct = sc.direct.fill(0, 0, nIv), ends = sc.ends;
  const ap = e.atPlane, dir = xAxis ? ap.nx : ap.nz;
  const read = (v: number, o: number) => axisSample(pl, v, deflect(ap.num, dir, v), e.wins, xAxis, ends, o);
  if (still) {
    // the same at every speed: one reading, constant quadratics over the whole range
    read(hi, 0);
    c[0] = 0; c[1] = 1;
    for (let i = 0; i < q; i++) { c[2 + 3 * i] = ends[i]; c[3 + 3 * i] = 0; c[4 + 3 * i] = 0; }
    return { pa, pb, c, len, direct };
  }
  for (let j = 0; j < nIv; j++) if (pa[j] > 0) read(pa[j], j * q);
  read(pb[nIv - 1], nIv * q);
  // the middle's and the check's readings after the ends'
  const mo = (nIv + 1) * q, co = (nIv + 2) * q;
  for (let k = 0; k < nIv; k++) {
    const uA = 1 / (pa[k] * pa[k]), uB = 1 / (pb[k] * pb[k]);
    if (!(pa[k] > 0) || !Number.isFinite(uA)) { direct[k] = 1; continue; }
    const uM = 0.5 * (uA + uB), h = 0.5 * (uA - uB);
    read(1 / Math.sqrt(uM), mo);
    read(1 / Math.sqrt(uM + 0.5 * h), co);
    const o = k * len;
    c[o] = uM; c[o + 1] = h;
    for (let i = 0; i < q; i++) {
      // s = +1 at the slow end (u = uA), −1 at the fast end
      const fA = ends[k * q + i], fB = ends[(k + 1) * q + i], f1 = ends[mo + i], fc = ends[co + i];
      const c1 = 0.5 * (fA - fB), c2 = 0.5 * (fA + fB) - f1;
      c[o + 2 + 3 * i] = f1; c[o + 3 + 3 * i] = c1; c[o + 4 + 3 * i] = c2;
      const size = Math.max(Math.abs(fA), Math.abs(fB), Math.abs(f1), Math.abs(fc));
      if (!(Math.abs(f1 + 0.5 * c1 + 0.25 * c2 - fc) <= 1e-13 + 1e-10 * size)) direct[k] = 1;
    }
  }
  return { pa, pb, c, len, direct };
}

/** The interval of an axis's quadratics that holds speed v (the last whose start is at or below it). */
function intervalOf(q: AxisQuadratics, v: number): number {
  let lo = 0, hi = q.pa.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (q.pa[mid] <= v) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/**
 * For the tests: sub-beam f's kinks in lo … hi along each axis, and each axis's quadratics on its intervals (cut at its
 * kinks, or at `cuts` where given); `at(v)` the transmitted fraction and each window's captured fraction (its own first,
 * then `others`) read off the quadratics at speed v, and `direct(v)` whether the check failed in an interval holding v.
 */
export function kinkIntervals(f: FinePath, others: readonly PlaneWindow[], lo: number, hi: number, cuts?: { x: readonly number[]; z: readonly number[] }): {
  kinks: { x: number[]; z: number[] }; x: { pa: number[]; direct: boolean[] }; z: { pa: number[]; direct: boolean[] };
  at: (v: number) => { t: number; captured: number[] }; direct: (v: number) => boolean;
} {
  const e = evaluator(f, others);
  const kinks = kinkSpeeds(e, lo, hi);
  const own = (q: AxisQuadratics) => ({ ...q, c: q.c.slice(0, q.pa.length * q.len), direct: q.direct.slice(0, q.pa.length) });
  const qx = own(axisQuadratics(e, true, lo, hi, (cuts ?? kinks).x, QS_X));
  const qz = own(axisQuadratics(e, false, lo, hi, (cuts ?? kinks).z, QS_Z));
  const nw = e.wins.length;
  const at = (v: number) => {
    const kx = intervalOf(qx, v), kz = intervalOf(qz, v);
    const ox = kx * qx.len, oz = kz * qz.len, u = 1 / (v * v);
    const sx = (u - qx.c[ox]) / qx.c[ox + 1], sz = (u - qz.c[oz]) / qz.c[oz + 1];
    return {
      t: quadraticAt(qx.c, ox + 2, sx) * quadraticAt(qz.c, oz + 2, sz),
      captured: Array.from({ length: nw }, (_, w) => quadraticAt(qx.c, ox + 5 + 3 * w, sx) * quadraticAt(qz.c, oz + 5 + 3 * w, sz)),
    };
  };
  const flags = (q: AxisQuadratics) => ({ pa: q.pa, direct: Array.from(q.direct, (d) => d === 1) });
  return { kinks, x: flags(qx), z: flags(qz), at, direct: (v) => qx.direct[intervalOf(qx, v)] === 1 || qz.direct[intervalOf(qz, v)] === 1 };
}

// the polygon of one axis at a reading (grown on demand)
let SAMPLE = new Float64Array(64);

function axisSample(pl: AxisPlan, v: number, d: number, wins: readonly NodeWindow[], xAxis: boolean, out: Float64Array, o: number): void {
  let buf = pl.pre, n = pl.nPre;
  if (n >= 3 && !pl.fixed) {
    const s = pl.strips;
    for (let i = pl.first; i < s.count; i++) {
      const dd = deflect(pl.num[i], pl.dir[i], v);
      s.lo[i] = pl.lo0[i] - dd;
      s.hi[i] = pl.hi0[i] - dd;
    }
    n = clipStrips(pl.pre, 0, pl.nPre, s, pl.first, s.count);
    if (SAMPLE.length < 2 * n) SAMPLE = new Float64Array(4 * n);
    const r = clipResult();
    for (let i = 0; i < 2 * n; i++) SAMPLE[i] = r[i];
    buf = SAMPLE;
  }
  if (n < 3) {
    out.fill(0, o, o + 1 + wins.length);
    return;
  }
  out[o] = areaFlat(buf, 0, n) / pl.area0;
  for (let w = 0; w < wins.length; w++) {
    const win = wins[w];
    const al = xAxis ? win.alx : win.alz, be = xAxis ? win.bex : win.bez;
    const lo = xAxis ? win.xlo : win.zlo, hi = xAxis ? win.xhi : win.zhi;
    out[o + 1 + w] = fractionInsideFlat(buf, 0, n, pl.area0, al, be, lo - d, hi - d, NaN, NaN);
  }
}

/**
 * Node n's transmitted fraction and each window's fraction from intervals kx and kz of the axes' quadratics. Its
 * deflection at the plane is read only with its polygons (the moments, the kept nodes), and evalNode makes it there.
 */
function quadraticNode(e: Evaluator, n: number, qx: AxisQuadratics, kx: number, qz: AxisQuadratics, kz: number): void {
  const nw = e.wins.length;
  if (NWD[n] === 0) {
    NT[n] = 0;
    for (let w = 0; w < nw; w++) NCAP[n * nw + w] = 0;
    return;
  }
  const v = NV[n], vv = v * v;
  const cx = qx.c, ox = kx * qx.len, sx = (1 / vv - cx[ox]) / cx[ox + 1];
  const cz = qz.c, oz = kz * qz.len, sz = (1 / vv - cz[oz]) / cz[oz + 1];
  NT[n] = quadraticAt(cx, ox + 2, sx) * quadraticAt(cz, oz + 2, sz);
  for (let w = 0; w < nw; w++) NCAP[n * nw + w] = quadraticAt(cx, ox + 5 + 3 * w, sx) * quadraticAt(cz, oz + 5 + 3 * w, sz);
}

/** Node n's deflection at the plane (NDX, NDZ), kick by kick as deflection(). */
function nodeDeflection(e: Evaluator, n: number): void {
  const ap = e.atPlane;
  NDX[n] = deflect(ap.num, ap.nx, NV[n]);
  NDZ[n] = deflect(ap.num, ap.nz, NV[n]);
}

/** The quadratic c[j] + c[j+1] s + c[j+2] s² kept within [0, 1] (a fraction of 0 or 1 can come out a rounding beyond). */
function quadraticAt(c: Float64Array, j: number, s: number): number {
  const f = c[j] + s * (c[j + 1] + s * c[j + 2]);
  return f < 0 ? 0 : f > 1 ? 1 : f;
}

// the panels' sums of convergedGeometry, their shares of the errors and their order of refinement (reused from call to
// call, grown on demand; every panel's are set before they are read)
let SUMS = new Float64Array(1024), PE = new Float64Array(256), KEY = new Float64Array(64);

/** Panel p's share (sums from o) of the error of fraction q: (|ΔQ| + |Q/W| |ΔW|) / max(|Q|, floor W). */
function panelError(sums: Float64Array, o: number, nQ: number, q: number, tot: Float64Array, floor: number): number {
  const W = tot[0], Q = tot[q];
  return (Math.abs(sums[o + q] - sums[o + nQ + q]) + Math.abs(Q / W) * Math.abs(sums[o] - sums[o + nQ])) / Math.max(Math.abs(Q), floor * W);
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

/** The numerator Σ num_k n_k of the deflection along one axis (deflection = numerator/v²). */
function deflectNumerator(num: Float64Array, n: Float64Array): number {
  let x = 0;
  for (let i = 0; i < num.length; i++) x += num[i] * n[i];
  return x;
}

/**
 * One axis's polygons and statistics at the nodes while they are evaluated: node j's polygon is pool[2·off[j] …], len[j]
 * vertices. Two of these (x and z) are reused from call to call and grown on demand; what a result keeps is copied out
 * (assemble).
 */
class AxisStore {
  pool = new Float64Array(8192);
  used = 0;
  off = new Int32Array(256);
  len = new Int32Array(256);
  tr = new Float64Array(256);
  mean = new Float64Array(256);
  variance = new Float64Array(256);
  mn = new Float64Array(256);
  mx = new Float64Array(256);

  reserve(n: number): void {
    if (this.off.length >= n) return;
    const m = Math.max(n, 2 * this.off.length);
    const gi = (a: Int32Array) => { const b = new Int32Array(m); b.set(a); return b; };
    const gf = (a: Float64Array) => { const b = new Float64Array(m); b.set(a); return b; };
    this.off = gi(this.off); this.len = gi(this.len);
    this.tr = gf(this.tr); this.mean = gf(this.mean); this.variance = gf(this.variance); this.mn = gf(this.mn); this.mx = gf(this.mx);
  }
}

const STORE_X = new AxisStore(), STORE_Z = new AxisStore();

/**
 * How one axis's polygons are built at the nodes: the strips (deflection subtracted per speed) clip the
 * collimator's rectangle. The leading strips that no kick deflects along this axis clip the same at
 * every speed and are applied once (pre); when all are such the axis is fixed, one polygon (node 0) for all.
 */
interface AxisPlan {
  readonly c: Collimator1D;
  readonly fixed: boolean;
  readonly area0: number;
  /** α, β at the sub-beam's plane. */
  readonly al: number;
  readonly be: number;
  readonly base: Float64Array;
  readonly strips: FlatStrips;
  readonly lo0: Float64Array;
  readonly hi0: Float64Array;
  readonly num: readonly Float64Array[];
  readonly dir: readonly Float64Array[];
  readonly first: number;
  readonly pre: Float64Array;
  readonly nPre: number;
  /** The range of α_i p + β_i q over pre on each strip i from `first` (a strip within which pre lies clips nothing). */
  readonly preMn: Float64Array;
  readonly preMx: Float64Array;
  /** The node that holds pre as it is, with its statistics (−1 until one does). */
  preAt: number;
  readonly s: AxisStore;
}

const NO_STRIPS: FlatStrips = { al: new Float64Array(0), be: new Float64Array(0), lo: new Float64Array(0), hi: new Float64Array(0), count: 0 };

function axisPlan(c: Collimator1D, track: Track, axis: 'x' | 'z', plane: number, s: AxisStore): AxisPlan {
  let k = 0;
  for (const st of track.strips) if (st.axis === axis) k++;
  const num: Float64Array[] = [], dir: Float64Array[] = [];
  let strips = NO_STRIPS, lo0 = NO_STRIPS.lo, hi0 = NO_STRIPS.hi;
  if (k > 0) {
    const al = new Float64Array(k), be = new Float64Array(k);
    lo0 = new Float64Array(k);
    hi0 = new Float64Array(k);
    let i = 0;
    for (const st of track.strips) {
      if (st.axis !== axis) continue;
      [al[i], be[i]] = planeCoefficients(c, st.y);
      lo0[i] = st.lo;
      hi0[i] = st.hi;
      const ka = kicksAt(track.kicks, st.y);
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
  s.used = 0;
  const preMn = new Float64Array(k), preMx = new Float64Array(k);
  for (let i = first; i < k; i++) {
    projectionRange(pre, 0, nPre, strips.al[i], strips.be[i], span);
    preMn[i] = span[0]; preMx[i] = span[1];
  }
  const pl: AxisPlan = { c, fixed, area0, al: pal, be: pbe, base, strips, lo0, hi0, num, dir, first, pre, nPre, preMn, preMx, preAt: -1, s };
  if (fixed) store(pl, 0, pre, nPre);
  return pl;
}

const stats = new Float64Array(3), span = new Float64Array(2);

/** Keeps polygon src (n vertices; fewer than 3: nothing passes) as node j of the axis, with its statistics. */
function store(pl: AxisPlan, j: number, src: Float64Array, n: number): void {
  const o = pl.s;
  if (n < 3) {
    o.off[j] = 0; o.len[j] = 0; o.tr[j] = 0; o.mean[j] = 0; o.variance[j] = 0; o.mn[j] = 0; o.mx[j] = 0;
    return;
  }
  if (2 * (o.used + n) > o.pool.length) {
    const grown = new Float64Array(Math.max(2 * o.pool.length, 2 * (o.used + n)));
    grown.set(o.pool);
    o.pool = grown;
  }
  for (let i = 0; i < 2 * n; i++) o.pool[2 * o.used + i] = src[i];
  o.off[j] = o.used;
  o.len[j] = n;
  o.used += n;
  axisStats(o.pool, o.off[j], n, pl.area0, pl.al, pl.be, stats);
  o.tr[j] = stats[0]; o.mean[j] = stats[1]; o.variance[j] = stats[2];
  projectionRange(o.pool, o.off[j], n, pl.al, pl.be, span);
  o.mn[j] = span[0]; o.mx[j] = span[1];
}

/** The polygon of node j (speed v) of an axis that is not fixed. */
function axisNode(pl: AxisPlan, j: number, v: number): void {
  if (pl.nPre < 3) {
    store(pl, j, pl.pre, 0);
    return;
  }
  const s = pl.strips;
  let held = true;
  for (let i = pl.first; i < s.count; i++) {
    const d = deflect(pl.num[i], pl.dir[i], v);
    s.lo[i] = pl.lo0[i] - d;
    s.hi[i] = pl.hi0[i] - d;
    if (held && !(pl.preMn[i] >= s.lo[i] && pl.preMx[i] <= s.hi[i])) held = false;
  }
  if (held) {
    // no strip clips at this speed (clipStrips would pass pre through as it is): the node shares pre's copy and statistics
    const k = pl.preAt, o = pl.s;
    if (k < 0) {
      store(pl, j, pl.pre, pl.nPre);
      pl.preAt = j;
    } else {
      o.off[j] = o.off[k]; o.len[j] = o.len[k]; o.tr[j] = o.tr[k]; o.mean[j] = o.mean[k]; o.variance[j] = o.variance[k];
      o.mn[j] = o.mn[k]; o.mx[j] = o.mx[k];
    }
    return;
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

/** A window whose share of the sub-beam is taken at every node: its edges, its plane and α, β there for each axis. */
interface NodeWindow {
  readonly id: string;
  readonly xlo: number;
  readonly xhi: number;
  readonly zlo: number;
  readonly zhi: number;
  readonly y: number;
  readonly alx: number;
  readonly bex: number;
  readonly alz: number;
  readonly bez: number;
}

/** What evaluates one sub-beam's nodes: both axes' plans, the kicks at its plane and the windows (its own first). */
interface Evaluator {
  readonly f: FinePath;
  readonly px: AxisPlan;
  readonly pz: AxisPlan;
  readonly atPlane: { num: Float64Array; nx: Float64Array; nz: Float64Array };
  readonly wins: readonly NodeWindow[];
  /** wins[0] is the sub-beam's own window. */
  readonly own: boolean;
  /** Each window's fraction along an axis that is fixed and not deflected at the plane (the same at every node; NaN until found). */
  readonly constX: Float64Array | null;
  readonly constZ: Float64Array | null;
  /**
   * For each window, the earlier window with the same edges and plane along x (along z), or −1: its fraction along that axis
   * is the same at every node (a row of collectors side by side shares its edges across the row), taken rather than clipped again.
   */
  readonly sameX: Int32Array;
  readonly sameZ: Int32Array;
}

function nodeWindow(id: string, w: Rect, y: number, cx: Collimator1D, cz: Collimator1D): NodeWindow {
  const [alx, bex] = planeCoefficients(cx, y), [alz, bez] = planeCoefficients(cz, y);
  return { id, xlo: w.x - w.width / 2, xhi: w.x + w.width / 2, zlo: w.z - w.height / 2, zhi: w.z + w.height / 2, y, alx, bex, alz, bez };
}

function evaluator(f: FinePath, others: readonly PlaneWindow[]): Evaluator {
  const cx = collimatorFor(f.track, 'x'), cz = collimatorFor(f.track, 'z');
  const px = axisPlan(cx, f.track, 'x', f.plane, STORE_X), pz = axisPlan(cz, f.track, 'z', f.plane, STORE_Z);
  const wins: NodeWindow[] = [];
  const win = f.detector?.window;
  if (win) wins.push(nodeWindow(f.detector!.id, win, f.plane, cx, cz));
  for (const o of others) if (o.id !== f.detector?.id) wins.push(nodeWindow(o.id, o.window, o.y, cx, cz));
  const atPlane = kicksAt(f.track.kicks, f.plane);
  const still = (pl: AxisPlan, n: Float64Array) => pl.fixed && atPlane.num.every((x, i) => x * n[i] === 0);
  const constX = still(px, atPlane.nx) ? new Float64Array(wins.length).fill(NaN) : null;
  const constZ = still(pz, atPlane.nz) ? new Float64Array(wins.length).fill(NaN) : null;
  const sameX = new Int32Array(wins.length).fill(-1), sameZ = new Int32Array(wins.length).fill(-1);
  for (let w = 1; w < wins.length; w++) {
    const a = wins[w];
    for (let k = 0; k < w; k++) {
      const b = wins[k];
      if (b.y !== a.y) continue;
      if (sameX[w] < 0 && b.xlo === a.xlo && b.xhi === a.xhi && b.alx === a.alx && b.bex === a.bex) sameX[w] = k;
      if (sameZ[w] < 0 && b.zlo === a.zlo && b.zhi === a.zhi && b.alz === a.alz && b.bez === a.bez) sameZ[w] = k;
    }
  }
  if (WFX.length < wins.length) { WFX = new Float64Array(2 * wins.length); WFZ = new Float64Array(2 * wins.length); }
  return { f, px, pz, atPlane, wins, own: !!win, constX, constZ, sameX, sameZ };
}

// each window's fraction along x and along z at the node being evaluated (NaN: not taken at this node)
let WFX = new Float64Array(8), WFZ = new Float64Array(8);

// the nodes being evaluated (reused from call to call, grown on demand): speed, weight (density × trace, or the
// grid's weight × trace), t = transmitted fraction, deflection at the plane, each window's fraction (node-major)
let NV: Float64Array = new Float64Array(512), NWD: Float64Array = new Float64Array(512), NT: Float64Array = new Float64Array(512);
let NDX: Float64Array = new Float64Array(512), NDZ: Float64Array = new Float64Array(512), NCAP: Float64Array = new Float64Array(2048);
// the nodes taken: their indices, weights (not yet normalised) and cells
let KIDX = new Int32Array(512), KW = new Float64Array(512), KLO = new Float64Array(512), KHI = new Float64Array(512);

function grownF(a: Float64Array, n: number): Float64Array {
  if (a.length >= n) return a;
  const b = new Float64Array(Math.max(n, 2 * a.length));
  b.set(a);
  return b;
}

function reserveNodes(e: Evaluator, n: number): void {
  if (NV.length < n) {
    NV = grownF(NV, n); NWD = grownF(NWD, n); NT = grownF(NT, n); NDX = grownF(NDX, n); NDZ = grownF(NDZ, n);
  }
  NCAP = grownF(NCAP, n * e.wins.length);
  if (!e.px.fixed) e.px.s.reserve(n);
  if (!e.pz.fixed) e.pz.s.reserve(n);
}

function reserveKept(n: number): void {
  if (KIDX.length < n) {
    KIDX = new Int32Array(Math.max(n, 2 * KIDX.length));
    KW = new Float64Array(KIDX.length);
    KLO = new Float64Array(KIDX.length);
    KHI = new Float64Array(KIDX.length);
  }
}

/** Fraction of an axis's polygon i inside lo ≤ α p + β q ≤ hi (the projection range known at the sub-beam's plane). */
function axisFraction(pl: AxisPlan, i: number, atPlane: boolean, al: number, be: number, lo: number, hi: number): number {
  const s = pl.s;
  if (!atPlane) return fractionInsideFlat(s.pool, s.off[i], s.len[i], pl.area0, al, be, lo, hi, NaN, NaN);
  // a window that holds the whole polygon keeps its transmitted fraction (the same shoelace sum over area0), one that
  // misses it nothing: as fractionInsideFlat, without its call
  const mn = s.mn[i], mx = s.mx[i];
  if (s.len[i] >= 3 && lo <= hi) {
    if (mn >= lo && mx <= hi) return s.tr[i];
    if (mn > hi || mx < lo) return 0;
  }
  return fractionInsideFlat(s.pool, s.off[i], s.len[i], pl.area0, pl.al, pl.be, lo, hi, mn, mx);
}

/** Node n at speed NV[n]: both axes' polygons, the deflection at the plane, the transmitted fraction, each window's fraction. */
function evalNode(e: Evaluator, n: number): void {
  const v = NV[n], nw = e.wins.length;
  const px = e.px, pz = e.pz;
  if (NWD[n] === 0) {
    // no weight: nothing of this node is read but its zeros
    if (!px.fixed) store(px, n, px.pre, 0);
    if (!pz.fixed) store(pz, n, pz.pre, 0);
    NT[n] = 0; NDX[n] = 0; NDZ[n] = 0;
    for (let w = 0; w < nw; w++) NCAP[n * nw + w] = 0;
    return;
  }
  if (!px.fixed) axisNode(px, n, v);
  if (!pz.fixed) axisNode(pz, n, v);
  const ix = px.fixed ? 0 : n, iz = pz.fixed ? 0 : n;
  nodeDeflection(e, n);
  const dx = NDX[n], dz = NDZ[n];
  NT[n] = px.s.tr[ix] * pz.s.tr[iz];
  const plane = e.f.plane;
  const sameX = e.sameX, sameZ = e.sameZ;
  for (let w = 0; w < nw; w++) {
    const win = e.wins[w];
    const at = win.y === plane;
    const cx = e.constX, cz = e.constZ;
    let fx: number;
    if (sameX[w] >= 0) fx = WFX[sameX[w]];
    else if (cx) {
      fx = cx[w];
      if (Number.isNaN(fx)) fx = cx[w] = axisFraction(px, 0, at, win.alx, win.bex, win.xlo, win.xhi);
    } else fx = axisFraction(px, ix, at, win.alx, win.bex, win.xlo - dx, win.xhi - dx);
    WFX[w] = fx;
    let fz = 0;
    WFZ[w] = NaN;
    if (fx !== 0) {
      const k = sameZ[w];
      if (k >= 0 && !Number.isNaN(WFZ[k])) fz = WFZ[k];
      else if (cz) {
        fz = cz[w];
        if (Number.isNaN(fz)) fz = cz[w] = axisFraction(pz, 0, at, win.alz, win.bez, win.zlo, win.zhi);
      } else fz = axisFraction(pz, iz, at, win.alz, win.bez, win.zlo - dz, win.zhi - dz);
      WFZ[w] = fz;
    }
    NCAP[n * nw + w] = fx * fz;
  }
}

/** The first n of a node store's arrays, copied into arrays of the result's own (the nodes taken, in order). */
function axisOut(pl: AxisPlan, kept: number): AxisNodes {
  const s = pl.s;
  if (pl.fixed) {
    const f = new Float64Array(5), ix = new Int32Array(2);
    f[0] = s.tr[0]; f[1] = s.mean[0]; f[2] = s.variance[0]; f[3] = s.mn[0]; f[4] = s.mx[0];
    ix[0] = 0; ix[1] = s.len[0];
    return {
      c: pl.c, area0: pl.area0, al: pl.al, be: pl.be, fixed: true, pool: pl.pre,
      off: ix.subarray(0, 1), len: ix.subarray(1, 2),
      tr: f.subarray(0, 1), mean: f.subarray(1, 2), variance: f.subarray(2, 3), mn: f.subarray(3, 4), mx: f.subarray(4, 5),
    };
  }
  let verts = 0;
  for (let j = 0; j < kept; j++) verts += s.len[KIDX[j]];
  const pool = new Float64Array(2 * verts);
  const f = new Float64Array(5 * kept), ix = new Int32Array(2 * kept);
  const out: AxisNodes = {
    c: pl.c, area0: pl.area0, al: pl.al, be: pl.be, fixed: false, pool,
    off: ix.subarray(0, kept), len: ix.subarray(kept, 2 * kept),
    tr: f.subarray(0, kept), mean: f.subarray(kept, 2 * kept), variance: f.subarray(2 * kept, 3 * kept),
    mn: f.subarray(3 * kept, 4 * kept), mx: f.subarray(4 * kept, 5 * kept),
  };
  let at = 0;
  for (let j = 0; j < kept; j++) {
    const n = KIDX[j], len = s.len[n], o = s.off[n];
    for (let i = 0; i < 2 * len; i++) pool[2 * at + i] = s.pool[2 * o + i];
    out.off[j] = at; out.len[j] = len;
    out.tr[j] = s.tr[n]; out.mean[j] = s.mean[n]; out.variance[j] = s.variance[n]; out.mn[j] = s.mn[n]; out.mx[j] = s.mx[n];
    at += len;
  }
  return out;
}

/**
 * The sub-beam's geometry from the nodes taken (KIDX, weights KW, m of them; total their sum): the normalised weights,
 * the transmitted fraction, the means and second moments, the captured fraction and each other window's share, and the
 * node set the profiles and the centre line read.
 */
function assemble(e: Evaluator, m: number, total: number, cells: boolean, keep: boolean, exactMean = keep, moments = true): FineGeo {
  const f = e.f;
  if (total <= 0) {
    return { fine: f, yieldGeo: f.yieldSpin, captured: 0, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes: NO_NODES };
  }
  // the nodes kept (weight ≠ 0), in their order
  let kept = 0;
  for (let j = 0; j < m; j++) {
    const wk = KW[j] / total;
    if (wk !== 0) { KIDX[kept] = KIDX[j]; KW[kept] = wk; KLO[kept] = KLO[j]; KHI[kept] = KHI[j]; kept++; }
  }
  const sx0 = e.px.s, sz0 = e.pz.s, fx0 = e.px.fixed, fz0 = e.pz.fixed;
  const wn = e.wins.length;
  const shares = new Float64Array(wn);
  let tSum = 0, mx = 0, mz = 0, sx = 0, sz = 0;
  for (let j = 0; j < kept; j++) {
    const n = KIDX[j], wk = KW[j];
    const ix = fx0 ? 0 : n, iz = fz0 ? 0 : n;
    const t = NT[n];
    tSum += wk * t;
    for (let w = 0; w < wn; w++) shares[w] += wk * NCAP[n * wn + w];
    if (!moments) continue;
    const dx = NDX[n], dz = NDZ[n];
    mx += wk * t * (sx0.mean[ix] + dx);
    mz += wk * t * (sz0.mean[iz] + dz);
    sx += wk * t * (sx0.variance[ix] + (sx0.mean[ix] + dx) ** 2);
    sz += wk * t * (sz0.variance[iz] + (sz0.mean[iz] + dz) ** 2);
  }
  // the node set the profiles, the crosstalk and the centre line read, copied out of the stores (or only counted)
  let nodes: NodeSet;
  if (keep) {
    const ax = axisOut(e.px, kept), az = axisOut(e.pz, kept);
    const buf = new Float64Array((cells ? 6 : 3) * kept);
    const nw = buf.subarray(0, kept), ndx = buf.subarray(kept, 2 * kept), ndz = buf.subarray(2 * kept, 3 * kept);
    for (let j = 0; j < kept; j++) { nw[j] = KW[j]; ndx[j] = NDX[KIDX[j]]; ndz[j] = NDZ[KIDX[j]]; }
    nodes = { count: kept, plane: f.plane, w: nw, dx: ndx, dz: ndz, x: ax, z: az };
    if (cells) {
      const v = buf.subarray(3 * kept, 4 * kept), cellLo = buf.subarray(4 * kept, 5 * kept), cellHi = buf.subarray(5 * kept, 6 * kept);
      for (let j = 0; j < kept; j++) { v[j] = NV[KIDX[j]]; cellLo[j] = KLO[j]; cellHi[j] = KHI[j]; }
      nodes = { ...nodes, v, cellLo, cellHi };
    }
  } else nodes = { ...UNKEPT, count: kept, plane: f.plane };
  const yieldGeo = f.yieldSpin * tSum;
  const safe = tSum > 0 ? tSum : 1;
  let mean = { x: mx / safe, z: mz / safe };
  // (only where the mean is reported: a run without profiles reports no displacement)
  if (exactMean && f.track.strips.length === 0 && f.track.kicks.length > 0 && f.spec && f.moment2Cache && f.fraction > 0 && f.yieldSpin > 0) {
    // nothing clips: the mean deflection is Σ_k a_k L_k (L_k/2 + D_k)·⟨y s²⟩/⟨y⟩, exact over the whole
    // distribution (the grid leaves out the slowest atoms, which carry ~0.25 % of an effusive ⟨1/v²⟩)
    const m2 = specTraceMoment(f.spec, f.dist, 2, f.moment2Cache) / (f.yieldSpin / f.fraction);
    const geo0 = kept > 0 ? { x: sx0.mean[fx0 ? 0 : KIDX[0]], z: sz0.mean[fz0 ? 0 : KIDX[0]] } : { x: 0, z: 0 };
    let dx = 0, dz = 0;
    for (const k of f.track.kicks) {
      if (f.plane < k.exitY - 1e-12) continue;
      const c = k.accel * k.length * (k.length / 2 + (f.plane - k.exitY));
      dx += c * k.n.x;
      dz += c * k.n.z;
    }
    mean = { x: geo0.x + dx * m2, z: geo0.z + dz * m2 };
  }
  let inside: Map<string, number> | undefined;
  for (let w = e.own ? 1 : 0; w < wn; w++) (inside ??= new Map()).set(e.wins[w].id, shares[w]);
  return {
    fine: f, yieldGeo, captured: e.own ? shares[0] / safe : 1,
    mean, second: { x: sx / safe, z: sz / safe }, nodes, ...(inside ? { inside } : {}),
  };
}

/**
 * The sub-beam's geometry on one grid of `panels` panels of 8 Gauss–Legendre speeds (geometryGrid; a speed-by-speed leaf's
 * own grid, a fixed speed's one node, a table's speeds), every node weighted by the path's trace there.
 */
export function fineGeometry(f: FinePath, panels: number = 24, others: readonly PlaneWindow[] = [], keep = true): FineGeo {
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
  const e = evaluator(f, others);
  reserveNodes(e, n);
  reserveKept(n);
  let total = 0, m = 0;
  for (let k = 0; k < n; k++) {
    const wk = Math.max(0, tr[k]) * g.weights[k];
    total += wk;
    NV[k] = g.speeds[k];
    NWD[k] = wk;
  }
  if (!(total > 0)) return assemble(e, 0, 0, false, keep);
  // only the nodes with a weight are evaluated
  for (let k = 0; k < n; k++) {
    if (NWD[k] / total === 0) continue;
    evalNode(e, k);
    KIDX[m] = k; KW[m] = NWD[k];
    m++;
  }
  // no cells: the profiles of a fixed grid are its nodes' (what the plane always drew on a line that nothing clips)
  return assemble(e, m, total, false, keep);
}

/**
 * The speeds of a sub-beam's kinks in its range [lo, hi]: where, for either axis, three of the lines that bound its transmitted
 * polygon or the part of it inside a window meet on that polygon, or two parallel ones cross. In (p, q) each line is
 * a p + b q = h0 + h1 u with u = 1/v² (a strip moves with the deflection at its plane, a window with the deflection at the
 * plane), so where three meet is one linear equation in u.
 */
function kinkSpeeds(e: Evaluator, lo: number, hi: number): { x: number[]; z: number[] } {
  const uLo = 1 / (hi * hi), uHi = lo > 0 ? 1 / (lo * lo) : Infinity;
  const ap = e.atPlane;
  const axis = (xAxis: boolean): number[] => {
    const out: number[] = [];
    const pl = xAxis ? e.px : e.pz;
    const cPlane = deflectNumerator(ap.num, xAxis ? ap.nx : ap.nz);
    // a window whose edges along this axis repeat an earlier one's has the same kinks there
    const same = xAxis ? e.sameX : e.sameZ;
    const wins = e.wins.filter((_, w) => same[w] < 0);
    const rows = axisRows(pl, wins, xAxis, cPlane);
    axisKinks(rows, 4 + 2 * pl.strips.count, wins.length, uLo, uHi, out);
    for (let i = 0; i < out.length; i++) out[i] = 1 / Math.sqrt(out[i]);
    return out;
  };
  return { x: axis(true), z: axis(false) };
}

/** Lines a p + b q ≤ h0 + h1 u of one axis: the collimator's rectangle, each strip (two), then each window (two). */
interface Rows {
  a: Float64Array; b: Float64Array; h0: Float64Array; h1: Float64Array; eps: number;
  /** Each line's slack eps (|a| + |b| + 1): a point within it of the line counts as on its side. */
  tol: Float64Array;
}

// the rows of axisRows (reused: a sub-beam's kinks are found one axis at a time)
let ROWS = new Float64Array(128);

function axisRows(pl: AxisPlan, wins: readonly NodeWindow[], xAxis: boolean, cPlane: number): Rows {
  const k = pl.strips.count, m = 4 + 2 * k + 2 * wins.length;
  if (ROWS.length < 5 * m) ROWS = new Float64Array(10 * m);
  const buf = ROWS;
  const r: Rows = { a: buf.subarray(0, m), b: buf.subarray(m, 2 * m), h0: buf.subarray(2 * m, 3 * m), h1: buf.subarray(3 * m, 4 * m), eps: 0, tol: buf.subarray(4 * m, 5 * m) };
  const set = (i: number, a: number, b: number, h0: number, h1: number) => { r.a[i] = a; r.b[i] = b; r.h0[i] = h0; r.h1[i] = h1; };
  const p0 = pl.base[0], q0 = pl.base[1], p1 = pl.base[2], q1 = pl.base[5];
  set(0, -1, 0, -p0, 0); set(1, 1, 0, p1, 0); set(2, 0, -1, -q0, 0); set(3, 0, 1, q1, 0);
  for (let i = 0; i < k; i++) {
    const c = deflectNumerator(pl.num[i], pl.dir[i]);
    const al = pl.strips.al[i], be = pl.strips.be[i];
    set(4 + 2 * i, al, be, pl.hi0[i], -c);
    set(5 + 2 * i, -al, -be, -pl.lo0[i], c);
  }
  for (let w = 0; w < wins.length; w++) {
    const win = wins[w];
    const al = xAxis ? win.alx : win.alz, be = xAxis ? win.bex : win.bez;
    const wlo = xAxis ? win.xlo : win.zlo, whi = xAxis ? win.xhi : win.zhi;
    set(4 + 2 * k + 2 * w, al, be, whi, -cPlane);
    set(5 + 2 * k + 2 * w, -al, -be, -wlo, cPlane);
  }
  // a point counts as on the polygon within 1e-9 of the collimator's size
  r.eps = 1e-9 * Math.max(p1 - p0, q1 - q0, Math.abs(p0), Math.abs(p1), Math.abs(q0), Math.abs(q1));
  for (let i = 0; i < m; i++) r.tol[i] = r.eps * (Math.abs(r.a[i]) + Math.abs(r.b[i]) + 1);
  return r;
}

/** Whether (p, q) keeps every line of the set (the polygon's nP lines, and window w's two when w ≥ 0) at u, within eps. */
function keeps(r: Rows, nP: number, w: number, p: number, q: number, u: number): boolean {
  const a = r.a, b = r.b, h0 = r.h0, h1 = r.h1, tol = r.tol;
  for (let i = 0; i < nP; i++) if (a[i] * p + b[i] * q - h0[i] - h1[i] * u > tol[i]) return false;
  if (w >= 0) {
    for (let i = nP + 2 * w; i < nP + 2 * w + 2; i++) if (a[i] * p + b[i] * q - h0[i] - h1[i] * u > tol[i]) return false;
  }
  return true;
}

/** Whether line i at u has a point that keeps every other line of the set (but j), within eps. */
function lineKept(r: Rows, nP: number, w: number, i: number, j: number, u: number): boolean {
  const a = r.a[i], b = r.b[i], nn = a * a + b * b;
  const h = r.h0[i] + r.h1[i] * u;
  const x0 = (a * h) / nn, y0 = (b * h) / nn, dx = -b, dy = a;
  let tlo = -Infinity, thi = Infinity;
  const one = (k: number): boolean => {
    if (k === i || k === j) return true;
    const g0 = r.a[k] * x0 + r.b[k] * y0 - r.h0[k] - r.h1[k] * u, g1 = r.a[k] * dx + r.b[k] * dy;
    const tol = r.tol[k];
    if (Math.abs(g1) <= 1e-12 * (Math.abs(r.a[k]) + Math.abs(r.b[k])) * Math.sqrt(nn)) return g0 <= tol;
    const t = (tol - g0) / g1;
    if (g1 > 0) thi = Math.min(thi, t);
    else tlo = Math.max(tlo, t);
    return true;
  };
  for (let k = 0; k < nP; k++) if (!one(k)) return false;
  if (w >= 0) for (let k = nP + 2 * w; k < nP + 2 * w + 2; k++) if (!one(k)) return false;
  return tlo <= thi;
}

/** The u = 1/v² in (uLo, uHi) where the polygon of one axis, or its part inside one of its nW windows, changes shape. */
function axisKinks(r: Rows, nP: number, nW: number, uLo: number, uHi: number, out: number[]): void {
  const m = nP + 2 * nW;
  const A = r.a, B = r.b, H0 = r.h0, H1 = r.h1;
  for (let i = 0; i < m; i++) {
    for (let j = i + 1; j < m; j++) {
      // lines of two different windows never bound one polygon; nor do a window's two lines with a third
      const wi = i < nP ? -1 : (i - nP) >> 1, wj = j < nP ? -1 : (j - nP) >> 1;
      if (wi >= 0 && wj >= 0) continue;
      const w = Math.max(wi, wj);
      const det = A[i] * B[j] - A[j] * B[i];
      const scale = (Math.abs(A[i]) + Math.abs(B[i])) * (Math.abs(A[j]) + Math.abs(B[j]));
      if (Math.abs(det) <= 1e-12 * scale) {
        // parallel: where they coincide, if they move against each other there
        const nn = A[i] * A[i] + B[i] * B[i];
        const lam = (A[i] * A[j] + B[i] * B[j]) / nn;
        const e1 = H1[j] - lam * H1[i], e0 = H0[j] - lam * H0[i];
        if (Math.abs(e1) <= 1e-14 * (Math.abs(H1[j]) + Math.abs(lam * H1[i]))) continue;
        const u = -e0 / e1;
        if (u > uLo && u < uHi && lineKept(r, nP, w, i, j, u)) out.push(u);
        continue;
      }
      // where i and j meet: (p, q) = P0 + P1 u
      const pp0 = (H0[i] * B[j] - H0[j] * B[i]) / det, pp1 = (H1[i] * B[j] - H1[j] * B[i]) / det;
      const qq0 = (A[i] * H0[j] - A[j] * H0[i]) / det, qq1 = (A[i] * H1[j] - A[j] * H1[i]) / det;
      const still = H1[i] === 0 && H1[j] === 0;
      for (let k = j + 1; k < m; k++) {
        const wk = k < nP ? -1 : (k - nP) >> 1;
        if (wk >= 0 && w >= 0) continue;
        if (still && H1[k] === 0) continue;
        const g0 = A[k] * pp0 + B[k] * qq0 - H0[k], g1 = A[k] * pp1 + B[k] * qq1 - H1[k];
        if (g1 === 0) continue;
        const u = -g0 / g1;
        if (!(u > uLo && u < uHi)) continue;
        if (keeps(r, nP, Math.max(w, wk), pp0 + pp1 * u, qq0 + qq1 * u, u)) out.push(u);
      }
    }
  }
}
