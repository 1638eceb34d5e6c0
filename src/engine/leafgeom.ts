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
import { transmit, fractionInside, polygonCdf, cdfAt, type Collimator1D, type AxisResult } from './geometry.ts';
import type { LeafResult, DetectorResult, NeighbourVerdict, CrosstalkEntry } from './result.ts';
import { specTraceAt, specTraceMoment, type SpecState } from './spectral.ts';

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

interface FineGeo {
  fine: FinePath;
  yieldGeo: number;
  captured: number;
  mean: { x: number; z: number };
  second: { x: number; z: number };
  nodes: { w: number; rx: AxisResult; rz: AxisResult; cx: Collimator1D; cz: Collimator1D; dx: number; dz: number }[];
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

const grids = new WeakMap<VelocityDistribution, ReturnType<typeof speedGrid>>();
function geometryGrid(d: VelocityDistribution): ReturnType<typeof speedGrid> {
  let g = grids.get(d);
  if (!g) {
    g = speedGrid(d, 24, 8);
    grids.set(d, g);
  }
  return g;
}

function fineGeometry(f: FinePath): FineGeo {
  const g = f.grid ? coarsen(f.grid) : geometryGrid(f.dist);
  let phiMax = Infinity;
  if (!f.grid && (f.dist.kind === 'effusive' || f.dist.kind === 'supersonic')) {
    let ds = 0;
    for (let k = 1; k < g.speeds.length; k++) ds = Math.max(ds, Math.abs(1 / g.speeds[k - 1] - 1 / g.speeds[k]));
    phiMax = 0.5 / ds;
  }
  const tr = f.grid ? (g as ReturnType<typeof coarsen>).traces : f.spec ? specTraceAt(f.spec, g.speeds, phiMax) : new Float64Array(g.speeds.length);
  let total = 0;
  const w = new Float64Array(g.speeds.length);
  for (let k = 0; k < w.length; k++) {
    w[k] = Math.max(0, tr[k]) * g.weights[k];
    total += w[k];
  }
  const cx = collimatorFor(f.track, 'x'), cz = collimatorFor(f.track, 'z');
  const win = f.detector?.window;
  const nodes: FineGeo['nodes'] = [];
  let tSum = 0, capSum = 0, mx = 0, mz = 0, sx = 0, sz = 0;
  let freeX: AxisResult | undefined, freeZ: AxisResult | undefined;
  if (total <= 0) {
    return { fine: f, yieldGeo: f.yieldSpin, captured: 0, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes };
  }
  for (let k = 0; k < w.length; k++) {
    const wk = w[k] / total;
    if (wk === 0) continue;
    const v = g.speeds[k];
    const stripsX = [], stripsZ = [];
    for (const s of f.track.strips) {
      const d = deflection(f.track.kicks, s.y, v);
      if (s.axis === 'x') stripsX.push({ y: s.y, lo: s.lo - d.x, hi: s.hi - d.x });
      else stripsZ.push({ y: s.y, lo: s.lo - d.z, hi: s.hi - d.z });
    }
    // without clipping strips the transmitted polygon is the same at every speed
    const rx = stripsX.length === 0 ? (freeX ??= transmit(cx, [], f.plane)) : transmit(cx, stripsX, f.plane);
    const rz = stripsZ.length === 0 ? (freeZ ??= transmit(cz, [], f.plane)) : transmit(cz, stripsZ, f.plane);
    const d = deflection(f.track.kicks, f.plane, v);
    const t = rx.transmission * rz.transmission;
    tSum += wk * t;
    mx += wk * t * (rx.mean + d.x);
    mz += wk * t * (rz.mean + d.z);
    sx += wk * t * (rx.variance + (rx.mean + d.x) ** 2);
    sz += wk * t * (rz.variance + (rz.mean + d.z) ** 2);
    if (win) {
      const fx = fractionInside(cx, rx, f.plane, win.x - win.width / 2 - d.x, win.x + win.width / 2 - d.x);
      const fz = fractionInside(cz, rz, f.plane, win.z - win.height / 2 - d.z, win.z + win.height / 2 - d.z);
      capSum += wk * fx * fz;
    }
    nodes.push({ w: wk, rx, rz, cx, cz, dx: d.x, dz: d.z });
  }
  const yieldGeo = f.yieldSpin * tSum;
  const safe = tSum > 0 ? tSum : 1;
  let mean = { x: mx / safe, z: mz / safe };
  if (f.track.strips.length === 0 && f.track.kicks.length > 0 && f.spec && f.moment2Cache && f.fraction > 0 && f.yieldSpin > 0) {
    // nothing clips: the mean deflection is Σ_k a_k L_k (L_k/2 + D_k)·⟨y s²⟩/⟨y⟩, exact over the whole
    // distribution (the grid leaves out the slowest atoms, which carry ~0.25 % of an effusive ⟨1/v²⟩)
    const m2 = specTraceMoment(f.spec, f.dist, 2, f.moment2Cache) / (f.yieldSpin / f.fraction);
    const geo0 = nodes.length > 0 ? { x: nodes[0].rx.mean, z: nodes[0].rz.mean } : { x: 0, z: 0 };
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
        a.fines.push({ fine: f, yieldGeo: f.yieldSpin, captured: 1, mean: { x: 0, z: 0 }, second: { x: 0, z: 0 }, nodes: [] });
        continue;
      }
      const g = fineGeometry(f);
      nodes += g.nodes.length;
      clipped += f.yieldSpin - g.yieldGeo;
      a.fines.push(g);
    }
  }
  const leaves: (LeafResult & { _acc: LeafAcc })[] = [];
  for (const a of accs.values()) {
    const eff = a.detector ? a.detector.efficiency : 1;
    if (!geometry || a.target === 'stop') {
      leaves.push({ path: a.path, target: a.target, yield: a.yieldSpin, rate: flux * a.yieldSpin * eff, _acc: a });
      continue;
    }
    const y = a.fines.reduce((s, g) => s + g.yieldGeo, 0);
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
      _acc: a,
    });
  }
  const verdicts = new Map<string, NeighbourVerdict[]>();
  if (geometry) addProfiles(leaves, verdicts);
  // detectors
  const detectors: DetectorResult[] = [];
  const seen = new Map<string, DetectorResult>();
  for (const l of leaves) {
    const det = l._acc.detector;
    if (!det) continue;
    let d = seen.get(det.id);
    if (!d) {
      d = {
        id: det.id, yield: 0, rate: 0, counts: 0, sigma: 0, signal: 0, background: det.background, dwell: det.dwell,
        signalToBackground: 0, timeToPrecision: { epsilon, seconds: 0 }, plane: l._acc.plane,
      };
      seen.set(det.id, d);
      detectors.push(d);
    }
    d.yield += l.yield;
    d.signal += l.rate;
  }
  for (const d of detectors) {
    d.rate = d.signal + d.background;
    d.counts = d.rate * d.dwell;
    d.sigma = Math.sqrt(d.counts);
    d.signalToBackground = d.background > 0 ? d.signal / d.background : (d.signal > 0 ? Number.MAX_VALUE : 0);
    d.timeToPrecision = { epsilon, seconds: d.signal > 0 ? (d.signal + d.background) / (d.signal * d.signal * epsilon * epsilon) : Number.MAX_VALUE };
    if (geometry) {
      const det = leaves.find((l) => l._acc.detector?.id === d.id)!._acc.detector!;
      if (det.window) d.crosstalk = crosstalkFor(det, d.plane ?? 0, leaves, flux);
      const v = verdicts.get(planeKey(d.plane ?? 0));
      if (v && v.length > 0) d.neighbours = v;
    }
  }
  if (geometry && fines.some((f) => f.dist.kind === 'effusive' && f.track.kicks.length > 0)) {
    warnings.push('geometry: behind a deflecting magnet the rms spread of an effusive beam is set by its slowest atoms (⟨1/v⁴⟩ diverges for a v³ flux distribution); the spreads and profiles shown leave out v < 0.05·√(2kT/M), 3e-6 of the flux, which in a real line ends on an aperture');
  }
  return { leaves: leaves.map(({ _acc, ...rest }) => rest), detectors, clipped, nodes, chiError, warnings };
}

function planeKey(y: number): string {
  return (Math.round(y * 1e3) / 1e3).toFixed(3);
}

function crosstalkFor(det: Detector, plane: number, leaves: (LeafResult & { _acc: LeafAcc })[], flux: number): CrosstalkEntry[] {
  const win = det.window!;
  const out: CrosstalkEntry[] = [];
  for (const l of leaves) {
    if (l.target === det.id || l._acc.detector === null || Math.abs(l._acc.plane - plane) > 1e-3 || l.yield <= 0) continue;
    let inside = 0;
    for (const g of l._acc.fines) {
      let s = 0;
      for (const n of g.nodes) {
        const fx = fractionInside(n.cx, n.rx, plane, win.x - win.width / 2 - n.dx, win.x + win.width / 2 - n.dx);
        const fz = fractionInside(n.cz, n.rz, plane, win.z - win.height / 2 - n.dz, win.z + win.height / 2 - n.dz);
        s += n.w * fx * fz;
      }
      inside += g.fine.yieldSpin * s;
    }
    const fraction = inside / l.yield;
    if (fraction > 1e-9) out.push({ path: l.path, target: l.target, fraction, rate: flux * l.yield * fraction * det.efficiency });
  }
  return out;
}

/** Profiles on a common grid per detector plane, and the resolved/overlapping verdict of neighbours. */
function addProfiles(leaves: (LeafResult & { _acc: LeafAcc })[], verdicts: Map<string, NeighbourVerdict[]>): void {
  const groups = new Map<string, (LeafResult & { _acc: LeafAcc })[]>();
  for (const l of leaves) {
    if (l.target === 'stop' || l.yield <= 0) continue;
    const k = planeKey(l._acc.plane);
    groups.set(k, [...(groups.get(k) ?? []), l]);
  }
  for (const [k, ls] of groups) {
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
    for (const l of ls) {
      const dens = new Float64Array(bins);
      for (const g of l._acc.fines) {
        // the profile is a histogram: each speed's transmitted polygon has a closed-form CDF
        let lastR: AxisResult | null = null;
        let cdf: ReturnType<typeof polygonCdf> | null = null;
        for (const n of g.nodes) {
          const r = axis === 'x' ? n.rx : n.rz;
          const c = axis === 'x' ? n.cx : n.cz;
          const other = axis === 'x' ? n.rz.transmission : n.rx.transmission;
          const d = axis === 'x' ? n.dx : n.dz;
          if (r !== lastR) {
            cdf = polygonCdf(c, r, l._acc.plane);
            lastR = r;
          }
          const scale = (g.fine.yieldSpin * n.w * other) / dx;
          let prev = cdfAt(cdf!, lo - d);
          for (let i = 0; i < bins; i++) {
            const cur = cdfAt(cdf!, lo + (i + 1) * dx - d);
            dens[i] += scale * (cur - prev);
            prev = cur;
          }
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
