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
import { type FineGeo, type FinePath, GEOMETRY_PANELS, GEOMETRY_TOLERANCE, NO_NODES, convergedGeometry, hasGeometry, nodeFraction } from './subbeam.ts';

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

/** Builds the result's leaves and detectors from the run's paths (see module doc). */
export function evaluateGeometry(fines: readonly FinePath[], flux: number, epsilon: number, _lost: { spin: number }): {
  leaves: LeafResult[]; detectors: DetectorResult[]; clipped: number; nodes: number; chiError: number; warnings: string[];
} {
  const warnings: string[] = [];
  const unconverged: string[] = [];
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
      const { geo: g, change } = convergedGeometry(f);
      if (change !== undefined) unconverged.push(`${f.path.join(' ')} → ${f.target}: ${change.toExponential(1)}`);
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
      centreLine: leafCentreLine(a.fines, a.plane, w),
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
  if (unconverged.length) {
    warnings.push(`geometry: the detector-plane average over the speeds did not settle to ${GEOMETRY_TOLERANCE} of the sub-beam's flux on ${GEOMETRY_PANELS[GEOMETRY_PANELS.length - 1] * 8} speeds for ${unconverged.length} sub-beam${unconverged.length === 1 ? '' : 's'} (the last change: ${unconverged.slice(0, 3).join('; ')}${unconverged.length > 3 ? '; …' : ''}); their transmitted and captured fractions carry that error`);
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
