/**
 * The detector plane: from the paths of a run to the leaves and detectors of the result. Yields (the exact
 * frequency-by-frequency averages; clipping multiplies them by the sub-beam's transmitted fraction, and what
 * is clipped is counted as lost), each leaf's displacement, spread, profile and captured fraction, each
 * detector's crosstalk and the resolved/overlapping verdict of neighbouring sub-beams, and the counts
 * (counting.ts). Each sub-beam's own geometry is subbeam.ts.
 */
import type { Detector } from '../beamline/types.ts';
import { polygonCdfFlat, cdfAtFlat, planeCoefficients } from './geometry.ts';
import type { LeafResult, DetectorResult, NeighbourVerdict, CrosstalkEntry } from './result.ts';
import { countSigma, countsIn, signalToBackground, timeToPrecision } from './counting.ts';
import { leafCentreLine } from './centre-line.ts';
import {
  type AxisNodes, type FineGeo, type FinePath, type PlaneWindow, GEOMETRY_MAX_PANELS, GEOMETRY_TOLERANCE, NO_NODES, convergedGeometry, densityShape, hasGeometry, nodeFraction,
} from './subbeam.ts';

export type { FinePath, Track, Kick } from './subbeam.ts';

interface LeafAcc {
  key: string;
  path: string[];
  target: string;
  plane: number;
  detector: Detector | null;
  fines: FineGeo[];
  yieldSpin: number;
}

/**
 * How a sub-beam's geometry is averaged over the speeds: convergedGeometry, or (in the tests) a reference grid; `keep` false
 * when nothing will read its speed nodes (no profiles, crosstalk or centre line are made).
 */
export type GeometryOf = (f: FinePath, others: readonly PlaneWindow[], keep: boolean) => { geo: FineGeo; change?: number; extraNodes?: number };

/** Said of a plain run whose effusive sub-beams are deflected: what its spreads and profiles leave out. */
export const SLOWEST_ATOMS_WARNING = 'geometry: behind a deflecting magnet the rms spread of an effusive beam is set by its slowest atoms (⟨1/v⁴⟩ diverges for a v³ flux distribution); the spreads and profiles shown leave out v < 0.05·√(2kT/M), 3e-6 of the flux, which in a real line ends on an aperture';

/**
 * Builds the result's leaves and detectors from the run's paths (see module doc). With `profiles` false (RunOptions.noProfiles:
 * the planning tools) the leaves get no profile, centre line, displacement or spread and the detectors no crosstalk and no
 * neighbours; every other number is the same, bit for bit.
 */
export function evaluateGeometry(fines: readonly FinePath[], flux: number, epsilon: number, _lost: { spin: number }, geometryOf: GeometryOf = convergedGeometry, profiles = true): {
  leaves: LeafResult[]; detectors: DetectorResult[]; clipped: number; nodes: number; chiError: number; warnings: string[];
} {
  const warnings: string[] = [];
  const unconverged: string[] = [];
  const geometry = fines.some(hasGeometry);
  const accs = new Map<string, LeafAcc>();
  let clipped = 0, nodes = 0, chiError = 0;
  // the windows of the run's detectors with their planes: a sub-beam bound for a detector is averaged for the share of it
  // each other window on its plane catches too (its crosstalk there)
  const windows: PlaneWindow[] = [];
  if (geometry) {
    for (const f of fines) {
      const det = f.detector;
      if (det?.window && !windows.some((w) => w.id === det.id)) windows.push({ id: det.id, window: det.window, y: f.plane });
    }
  }
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
      // the other windows on its plane only where crosstalk is reported (its own numbers do not depend on them)
      const others = f.detector && profiles ? windows.filter((w) => w.id !== f.target && Math.abs(w.y - f.plane) <= 1e-3) : [];
      const { geo: g, change, extraNodes } = geometryOf(f, others, profiles);
      if (change !== undefined) unconverged.push(`${f.path.join(' ')} → ${f.target}: ${change.toExponential(1)}`);
      nodes += g.nodes.count + (extraNodes ?? 0);
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
      // where and how wide the sub-beams land: for the plane's reports (the planning tools hold neither)
      ...(profiles ? {
        displacement: mean,
        spread: { x: Math.sqrt(Math.max(0, second.x - mean.x ** 2)), z: Math.sqrt(Math.max(0, second.z - mean.z ** 2)) },
      } : {}),
      ...(captured !== undefined ? { captured } : {}),
      plane: a.plane,
      ...(profiles ? { centreLine: leafCentreLine(a.fines, a.plane, w) } : {}),
    });
  }
  const verdicts = new Map<string, NeighbourVerdict[]>();
  if (geometry && profiles) addProfiles(leaves, accOf, verdicts);
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
    if (geometry && profiles) {
      const det = accOf.find((a) => a.detector?.id === d.id)!.detector!;
      if (det.window) d.crosstalk = crosstalkFor(det, d.plane ?? 0, leaves, accOf, flux);
      const v = verdicts.get(planeKey(d.plane ?? 0));
      if (v && v.length > 0) d.neighbours = v;
    }
  }
  // (said where spreads or profiles are shown: a run without them, a scan's point or a budget's draw, leaves it out)
  if (geometry && profiles && fines.some((f) => f.dist.kind === 'effusive' && f.track.kicks.length > 0)) {
    warnings.push(SLOWEST_ATOMS_WARNING);
  }
  if (unconverged.length) {
    warnings.push(`geometry: the detector-plane average over the speeds did not settle to ${GEOMETRY_TOLERANCE} of the sub-beam's flux on ${GEOMETRY_MAX_PANELS * 7} speeds for ${unconverged.length} sub-beam${unconverged.length === 1 ? '' : 's'} (the last change: ${unconverged.slice(0, 3).join('; ')}${unconverged.length > 3 ? '; …' : ''}); their transmitted and captured fractions carry that error`);
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
      // the share the sub-beam's own average took for this window, or node by node
      const known = g.inside?.get(det.id);
      if (known !== undefined) {
        inside += g.fine.yieldSpin * known;
        continue;
      }
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
function addNodeHistogram(dens: Float64Array, bins: number, lo: number, dx: number, d: number, scale: number, m: number, t: Float64Array, f: Float64Array, g: Float64Array): void {
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

/** The most speeds one node of a profile is swept over. */
const MAX_STRETCH_SPEEDS = 256;
// the weights and interpolation fractions of the speeds a node is swept over
const SUB_RHO = new Float64Array(MAX_STRETCH_SPEEDS), SUB_LAM = new Float64Array(MAX_STRETCH_SPEEDS);

// the profile CDFs (polygonCdfFlat) of three neighbouring nodes while a sub-beam's nodes are swept, node j in slot j mod 3
interface NodeCdf { j: number; t: Float64Array; f: Float64Array; g: Float64Array; m: number }
const SWEEP: readonly NodeCdf[] = [0, 1, 2].map(() => ({ j: -1, t: new Float64Array(32), f: new Float64Array(32), g: new Float64Array(32), m: 0 }));

/** Node j's profile CDF along (α, β) (m = 0 when nothing passes). */
function nodeCdf(ra: AxisNodes, j: number, al: number, be: number): NodeCdf {
  const c = SWEEP[j % 3];
  if (c.j === j) return c;
  c.j = j;
  const ir = ra.fixed ? 0 : j, n = ra.len[ir];
  if (n < 3) { c.m = 0; return c; }
  if (c.t.length < n) { c.t = new Float64Array(2 * n); c.f = new Float64Array(2 * n); c.g = new Float64Array(2 * n); }
  c.m = polygonCdfFlat(ra.pool, ra.off[ir], n, ra.area0, al, be, c.t, c.f, c.g);
  return c;
}

/**
 * One sub-beam's profile added to dens, from its nodes (in increasing speed, each with its quadrature cell). A node whose
 * cell deflects by less than an eighth of a bin (d ∝ 1/v² from one end of the cell to the other) is laid down at its
 * deflection with its weight, as the average over the speeds has it. A node whose cell deflects more (the slow tail, where
 * a grid that resolves the fractions has few speeds across many bins) is swept over its cell: at speeds an eighth of a bin
 * of deflection apart, with the exact deflection there, the flux density of the distribution times the path's trace
 * interpolated linearly to the next node, and the two nodes' polygons weighted linearly; the node's weight is kept.
 */
function addSweptProfile(dens: Float64Array, bins: number, lo: number, dx: number, g: FineGeo, ra: AxisNodes, oa: AxisNodes, dd: Float64Array, al: number, be: number): void {
  const ns = g.nodes, v = ns.v!, cl = ns.cellLo!, ch = ns.cellHi!, n = ns.count;
  const dist = g.fine.dist, y = g.fine.yieldSpin;
  for (const c of SWEEP) c.j = -1;
  // the deflection along the profile's axis is C/v² at every node of the sub-beam
  const C = dd[0] * v[0] * v[0];
  for (let j = 0; j < n; j++) {
    const oj = oa.tr[oa.fixed ? 0 : j];
    const scale = (y * ns.w[j] * oj) / dx;
    if (scale === 0) continue;
    const a = cl[j], b = ch[j];
    const span = a > 0 && b > a ? Math.abs(C) * (1 / (a * a) - 1 / (b * b)) : 0;
    const cj = nodeCdf(ra, j, al, be);
    if (!(span > dx / 8)) {
      if (cj.m > 0) addNodeHistogram(dens, bins, lo, dx, dd[j], scale, cj.m, cj.t, cj.f, cj.g);
      continue;
    }
    const sub = Math.min(MAX_STRETCH_SPEEDS, Math.ceil(span / (dx / 8)));
    const tj = traceFactor(ns, j, dist);
    const tBelow = j > 0 ? traceFactor(ns, j - 1, dist) : 0, tAbove = j + 1 < n ? traceFactor(ns, j + 1, dist) : 0;
    // the weights of the speeds, then the node's weight shared in their proportions
    let sum = 0;
    for (let s = 0; s < sub; s++) {
      const vs = a + ((s + 0.5) * (b - a)) / sub;
      const below = vs < v[j], k = below ? j - 1 : j + 1;
      const lam = k >= 0 && k < n ? (vs - v[j]) / (v[k] - v[j]) : 0;
      const rho = densityShape(dist, vs) * ((1 - lam) * tj + lam * (below ? tBelow : tAbove));
      SUB_RHO[s] = rho;
      SUB_LAM[s] = lam;
      sum += rho;
    }
    if (!(sum > 0)) continue;
    const unit = (y * ns.w[j]) / sum / dx;
    const oBelow = j > 0 ? oa.tr[oa.fixed ? 0 : j - 1] : 0, oAbove = j + 1 < n ? oa.tr[oa.fixed ? 0 : j + 1] : 0;
    for (let s = 0; s < sub; s++) {
      const vs = a + ((s + 0.5) * (b - a)) / sub;
      const share = unit * SUB_RHO[s], lam = SUB_LAM[s];
      const d = C / (vs * vs);
      if (cj.m > 0) addNodeHistogram(dens, bins, lo, dx, d, share * (1 - lam) * oj, cj.m, cj.t, cj.f, cj.g);
      if (lam !== 0) {
        const below = vs < v[j], k = below ? j - 1 : j + 1;
        const ck = nodeCdf(ra, k, al, be);
        if (ck.m > 0) addNodeHistogram(dens, bins, lo, dx, d, share * lam * (below ? oBelow : oAbove), ck.m, ck.t, ck.f, ck.g);
      }
    }
  }
}

/** The path's trace at node j relative to the distribution's shape: its normalised weight over its cell's width and the density there. */
function traceFactor(ns: FineGeo['nodes'], j: number, dist: FineGeo['fine']['dist']): number {
  const w = ns.cellHi![j] - ns.cellLo![j], s = densityShape(dist, ns.v![j]);
  return w > 0 && s > 0 ? ns.w[j] / (w * s) : 0;
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
        if (ns.v && ns.cellLo && ns.cellHi) {
          addSweptProfile(dens, bins, lo, dx, g, ra, oa, dd, al, be);
          continue;
        }
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
          addNodeHistogram(dens, bins, lo, dx, dd[j], scale, m, cdfT, cdfF, cdfG);
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
