/**
 * Simulated runs (docs/design.md, "Simulated runs"): atoms drawn one by one from the oven and followed through the
 * line, as a check of the line's numbers by sampling and as a preview of what a run at the bench gives.
 *
 * Each atom: an isotope by its abundance, a speed from the beam's (flux-weighted) velocity distribution, a start point
 * uniform in the oven aperture and a point uniform in the first slit of its path (the two fix its direction, as the
 * detector-plane geometry assumes); then one path of the line, drawn with the Born-rule probabilities of the atom's
 * own speed (the trace of each leaf's state at that speed, every phase kept: an atom has one speed, so nothing is
 * averaged); it is deflected by each magnet by a μ_eff G/M acceleration over the magnet (its own path's moments),
 * clipped by every later slit and pole gap, and lands on its detector's plane, inside or outside the window. The
 * fractions of atoms per detector estimate the detectors' signals with a binomial standard error; the counts of a
 * run of the detectors' dwells are then drawn with Poisson noise about (signal + background) × dwell, and the hits
 * give a map of each detector's plane. The same seed gives the same numbers.
 */
import type { Rect } from '../beamline/types.ts';
import { speedRange, densityAt, type VelocityDistribution } from '../physics/velocity.ts';
import { deflection, type FinePath } from './subbeam.ts';
import { lineAt, type Plan } from './plan.ts';
import { Random } from './random.ts';
import { CancelledError, RunError, runLine, type RunOptions } from './run.ts';
import type { RunResult } from './result.ts';
import { specTraceAt } from './average.ts';
import { specIsStatic } from './spectral.ts';

export interface SimulateOptions extends RunOptions {
  /** Atoms drawn (default 100,000). */
  atoms?: number;
  seed?: number;
  /** Bins per axis of each detector's hit map (default 40). */
  bins?: number;
  /** Receives every atom that reaches a detector inside its window: the detector, x and z on its plane (m) and its speed. */
  onHit?: (detector: string, x: number, z: number, speed: number) => void;
  /** Receives the engine's run of the line the atoms follow (a light run, as evaluate makes it): its signals and profiles to set beside the simulated ones. */
  onRun?: (run: RunResult) => void;
}

export const MAX_ATOMS = 50_000_000;

export interface HitMap {
  /** Bin edges (m) along x and z. */
  x: number[];
  z: number[];
  /** Atoms per bin, counts[i][j] for x bin i and z bin j. */
  counts: number[][];
}

export interface SimulatedDetector {
  id: string;
  /** Atoms that reached the detector inside its window. */
  hits: number;
  /** hits / atoms drawn: the fraction of the oven flux it receives, and its binomial standard error. */
  fraction: number;
  fractionSigma: number;
  /** flux × fraction × efficiency (counts/s), its standard error from the sampling. */
  signal: number;
  signalSigma: number;
  background: number;
  dwell: number;
  /** A run of `dwell`: counts drawn from Poisson((signal + background) × dwell). */
  counts: number;
  /** Mean and rms of the hits' positions at the detector's plane (m), where it has hits. */
  mean?: { x: number; z: number };
  rms?: { x: number; z: number };
  map?: HitMap;
}

export interface SimulationResult {
  format: 'spinyard.simulation';
  version: 1;
  title: string;
  atoms: number;
  seed: number;
  flux: number;
  detectors: SimulatedDetector[];
  /** Atoms per path (ELEMENT:PORT list and target), clipped or not. */
  paths: { path: string[]; target: string; atoms: number; clipped: number }[];
  /** Atoms absorbed in the spin operations (no path) and clipped by slits, pole gaps and windows. */
  lost: { spin: number; clipped: number };
  method: string;
  warnings: string[];
}

/** Inverse-CDF sampler of a continuous distribution, tabulated on `n` points of its speed range (linear in the CDF). */
function tabulated(d: VelocityDistribution, n = 8192): (u: number) => number {
  const [lo, hi] = speedRange(d);
  const v = new Float64Array(n), cdf = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = lo + ((hi - lo) * i) / (n - 1);
  for (let i = 1; i < n; i++) cdf[i] = cdf[i - 1] + 0.5 * (densityAt(d, v[i - 1]) + densityAt(d, v[i])) * (v[i] - v[i - 1]);
  const total = cdf[n - 1];
  return (u: number) => {
    const t = u * total;
    let a = 0, b = n - 1;
    while (b - a > 1) {
      const m = (a + b) >> 1;
      if (cdf[m] <= t) a = m;
      else b = m;
    }
    const span = cdf[b] - cdf[a];
    return span > 0 ? v[a] + ((t - cdf[a]) / span) * (v[b] - v[a]) : v[a];
  };
}

/**
 * A speed sampler of the beam, from two 32-bit words of `rng` (the second read by the effusive form only): exact for
 * a fixed speed, a table (its cumulative weights searched by bisection) and the effusive v³ e^{−v²/a²} (v²/a² is
 * Gamma(2, 1), the sum of two unit exponentials, each by the ziggurat: Random.exponentialFrom); the supersonic by its
 * tabulated inverse CDF.
 */
function speedSampler(d: VelocityDistribution, rng: Random): (r1: number, r2: number) => number {
  const uniform = (r: number) => ((r >>> 0) + 1) * 2.3283064365386963e-10;   // in (0, 1], from a signed or unsigned word
  switch (d.kind) {
    case 'fixed': return () => d.speed;
    case 'effusive': return (r1, r2) => d.a * Math.sqrt(rng.exponentialFrom(r1) + rng.exponentialFrom(r2));
    case 'table': {
      const n = d.weights.length;
      const cum = new Float64Array(n);
      let s = 0;
      d.weights.forEach((w, i) => (cum[i] = s += w));
      return (r1) => {
        // the first i with cum[i] > t (the last where rounding leaves none)
        const t = (1 - uniform(r1)) * s;
        let lo = 0, hi = n - 1;
        while (lo < hi) {
          const m = (lo + hi) >> 1;
          if (cum[m] > t) hi = m;
          else lo = m + 1;
        }
        return d.speeds[lo];
      };
    }
    case 'supersonic': {
      const inv = tabulated(d);
      return (r1) => inv(1 - uniform(r1));
    }
  }
}

/** Every atom's isotope (by the cumulative fractions) and speed: three 32-bit words an atom, a block at a time. */
function drawSpeeds(rng: Random, samplers: readonly ((r1: number, r2: number) => number)[], cumFraction: Float64Array, totalFraction: number,
  sysOf: Int32Array, speeds: Float64Array): void {
  const atoms = speeds.length, nSys = samplers.length;
  const words = new Int32Array(BLOCK * 3);
  const one = samplers[0];
  for (let a0 = 0; a0 < atoms; a0 += BLOCK) {
    const nb = Math.min(BLOCK, atoms - a0);
    rng.fillWords(words, 3 * nb);
    if (nSys === 1) {
      for (let j = 0; j < nb; j++) speeds[a0 + j] = one(words[3 * j + 1], words[3 * j + 2]);
      continue;
    }
    for (let j = 0; j < nb; j++) {
      const u = (words[3 * j] >>> 0) * 2.3283064365386963e-10 * totalFraction;
      let k = 0;
      while (k < nSys - 1 && u >= cumFraction[k]) k++;
      sysOf[a0 + j] = k;
      speeds[a0 + j] = samplers[k](words[3 * j + 1], words[3 * j + 2]);
    }
  }
}

/** What an atom on a path needs for its transverse draw and its detector, looked up once per path. */
interface PathGeo {
  readonly g: PreparedPath;
  readonly src: { x: number; z: number; width: number; height: number } | null;
  readonly col: Rect | null;
  readonly slope: number;
  readonly fpl: number;
  readonly w: Rect | undefined;
  readonly acc: Hits | undefined;
  readonly id: string;
}

/**
 * Every atom's path by the Born rule at its speed, its transverse draw, its clipping and its hit: five uniforms an
 * atom (the path, two for the start point, two for the point in the first slit), a block at a time.
 */
function followAtoms(rng: Random, opts: SimulateOptions, sysPaths: readonly Int32Array[], sysOf: Int32Array, probs: readonly Float64Array[],
  speeds: Float64Array, geo: readonly PathGeo[], pathAtoms: Float64Array, pathClipped: Float64Array): { lostSpin: number; clipped: number; negative: number } {
  const atoms = speeds.length;
  const buf = new Float64Array(BLOCK * 5);
  const onHit = opts.onHit;
  let lostSpin = 0, clipped = 0, negative = 0;
  for (let a0 = 0; a0 < atoms; a0 += BLOCK) {
    if ((a0 & 0xffff) < BLOCK) {
      if (opts.isCancelled?.()) throw new CancelledError('simulate: cancelled');
      opts.onProgress?.(a0 / atoms);
    }
    const nb = Math.min(BLOCK, atoms - a0);
    rng.fillUniform32(buf, 5 * nb);
    for (let j = 0; j < nb; j++) {
      const a = a0 + j, o = 5 * j;
      // one path by the Born rule at this atom's speed; what is left is absorbed in the spin operations
      const sp = sysPaths[sysOf[a]];
      let u = buf[o], chosen = -1;
      for (let q = 0; q < sp.length; q++) {
        const i = sp[q];
        const p = probs[i][a];
        if (p < 0) negative = Math.min(negative, p);
        u -= p > 0 ? p : 0;
        if (u < 0) {
          chosen = i;
          break;
        }
      }
      if (chosen < 0) {
        lostSpin++;
        continue;
      }
      const pg = geo[chosen], g = pg.g, src = pg.src, col = pg.col, slope = pg.slope;
      const inv2 = 1 / (speeds[a] * speeds[a]);
      const sx = src ? src.x + src.width * (buf[o + 1] - 0.5) : 0, sz = src ? src.z + src.height * (buf[o + 2] - 0.5) : 0;
      const cx = col ? col.x + col.width * (buf[o + 3] - 0.5) : sx, cz = col ? col.z + col.height * (buf[o + 4] - 0.5) : sz;
      pathAtoms[chosen]++;
      let ok = true;
      for (let k = 0; k < g.stripY.length; k++) {
        const f = g.stripY[k] * slope;
        const q = (g.stripX[k] ? sx + (cx - sx) * f : sz + (cz - sz) * f) + g.stripNum[k] * inv2;
        if (q < g.stripLo[k] || q > g.stripHi[k]) {
          ok = false;
          break;
        }
      }
      const px = sx + (cx - sx) * pg.fpl + g.planeNumX * inv2, pz = sz + (cz - sz) * pg.fpl + g.planeNumZ * inv2;
      const w = pg.w;
      if (ok && w && !(within(px, w.x, w.width) && within(pz, w.z, w.height))) ok = false;
      if (!ok) {
        pathClipped[chosen]++;
        clipped++;
        continue;
      }
      if (pg.acc) {
        if (onHit) onHit(pg.id, px, pz, speeds[a]);
        pg.acc.push(px, pz);
      }
    }
  }
  return { lostSpin, clipped, negative };
}

/** The hits of one detector: positions on its plane (m), in arrays that grow by doubling. */
class Hits {
  n = 0;
  x = new Float64Array(1024);
  z = new Float64Array(1024);
  push(x: number, z: number): void {
    if (this.n === this.x.length) {
      const nx = new Float64Array(2 * this.n), nz = new Float64Array(2 * this.n);
      nx.set(this.x);
      nz.set(this.z);
      this.x = nx;
      this.z = nz;
    }
    this.x[this.n] = x;
    this.z[this.n++] = z;
  }
}

/** Atoms drawn per block of uniforms. */
const BLOCK = 4096;

const within = (p: number, c: number, w: number) => Math.abs(p - c) <= w / 2;

/**
 * A path's transverse geometry, prepared once: at each clipping plane (and the detector's) the deflection is
 * num/v² along its axis (subbeam.ts `deflection`: Σ a L (L/2 + y − y_exit) n̂ over the magnets already passed).
 */
interface PreparedPath {
  readonly ys: number;
  readonly stripY: Float64Array;
  readonly stripLo: Float64Array;
  readonly stripHi: Float64Array;
  readonly stripX: Uint8Array;
  readonly stripNum: Float64Array;
  readonly planeNumX: number;
  readonly planeNumZ: number;
}

function prepare(p: FinePath): PreparedPath {
  const t = p.track;
  const num = (y: number) => deflection(t.kicks, y, 1);
  const n = t.strips.length;
  const stripY = new Float64Array(n), stripLo = new Float64Array(n), stripHi = new Float64Array(n), stripNum = new Float64Array(n);
  const stripX = new Uint8Array(n);
  t.strips.forEach((st, i) => {
    stripY[i] = st.y;
    stripLo[i] = st.lo;
    stripHi[i] = st.hi;
    stripX[i] = st.axis === 'x' ? 1 : 0;
    const d = num(st.y);
    stripNum[i] = st.axis === 'x' ? d.x : d.z;
  });
  const d = num(p.plane);
  return { ys: t.collimator?.y ?? Infinity, stripY, stripLo, stripHi, stripX, stripNum, planeNumX: d.x, planeNumZ: d.z };
}

/** Each path's probability at each of the atoms' speeds: the trace of its state at that speed. */
function pathProbabilities(p: FinePath, speeds: Float64Array): Float64Array {
  if (p.spec && specIsStatic(p.spec)) {
    // the same state at every speed (no phase term): one trace for all
    const t = speeds.length ? specTraceAt(p.spec, speeds.subarray(0, 1), Infinity)[0] : 0;
    return new Float64Array(speeds.length).fill(t);
  }
  if (p.spec) return specTraceAt(p.spec, speeds, Infinity);
  const g = p.grid!;
  const out = new Float64Array(speeds.length);
  // a speed-by-speed path (after a field twist): its traces on its grid, interpolated linearly in the speed
  const n = g.speeds.length;
  for (let i = 0; i < speeds.length; i++) {
    const v = speeds[i];
    if (n === 1 || v <= g.speeds[0]) out[i] = g.traces[0];
    else if (v >= g.speeds[n - 1]) out[i] = g.traces[n - 1];
    else {
      let k = 1;
      while (g.speeds[k] < v) k++;
      const t = (v - g.speeds[k - 1]) / (g.speeds[k] - g.speeds[k - 1]);
      out[i] = g.traces[k - 1] + t * (g.traces[k] - g.traces[k - 1]);
    }
  }
  return out;
}

export function simulate(plan: Plan, opts: SimulateOptions = {}, values: Readonly<Record<string, number>> = {}): SimulationResult {
  const atoms = opts.atoms ?? 100_000;
  const seed = opts.seed ?? 1;
  const bins = opts.bins ?? 40;
  if (!Number.isInteger(atoms) || atoms < 1 || atoms > MAX_ATOMS) throw new RunError(`simulate: the number of atoms must be a whole number from 1 to ${MAX_ATOMS}, got ${atoms}`);
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new RunError(`simulate: the seed must be a whole number from 0 to 4294967295, got ${seed}`);
  const line = lineAt(plan, values);
  let paths: readonly FinePath[] = [];
  let flux = 0;
  const result = runLine(line, { ...opts, light: true, onProgress: undefined, onPaths: (p, f) => ((paths = p), (flux = f)) });
  opts.onRun?.(result);
  const warnings: string[] = [];
  const rng = new Random(seed);

  // isotopes by abundance (the paths of one isotope share its system, fraction and distribution)
  const systems = new Map<string, { fraction: number; dist: VelocityDistribution; paths: number[] }>();
  paths.forEach((p, i) => {
    let s = systems.get(p.system);
    if (!s) systems.set(p.system, (s = { fraction: p.fraction, dist: p.dist, paths: [] }));
    s.paths.push(i);
  });
  const sysList = [...systems.values()];
  if (!sysList.length) throw new RunError('simulate: the line has no path that reaches a detector or a stop');

  // every atom's isotope and speed first (the paths' probabilities are evaluated for all speeds at once): three
  // 32-bit words per atom, drawn a block at a time (the isotope's is not read where there is one isotope), and more
  // from the generator where the ziggurat rejects one
  const sysOf = new Int32Array(atoms);
  const speeds = new Float64Array(atoms);
  const samplers = sysList.map((s) => speedSampler(s.dist, rng));
  const cumFraction = new Float64Array(sysList.length);
  sysList.reduce((t, s, k) => (cumFraction[k] = t + s.fraction), 0);
  const totalFraction = cumFraction[sysList.length - 1];
  drawSpeeds(rng, samplers, cumFraction, totalFraction, sysOf, speeds);
  if (opts.isCancelled?.()) throw new CancelledError('simulate: cancelled');
  const probs = paths.map((p) => pathProbabilities(p, speeds));

  // in the order of the run's result
  const detectors = result.detectors.map((d) => line.elements.find((e) => e.id === d.id)!).filter((e) => e.kind === 'detector');
  const perDet = new Map(detectors.map((d) => [d.id, new Hits()]));
  const perPath = paths.map((p) => ({ path: [...p.path], target: p.target, atoms: 0, clipped: 0 }));
  const prepared = paths.map(prepare);
  const sysPaths = sysList.map((s) => Int32Array.from(s.paths));
  // per path what an atom's transverse draw needs, looked up once
  const geo: PathGeo[] = paths.map((fp, i) => {
    const t = fp.track, g = prepared[i], src = t.source, col = t.collimator?.rect ?? null;
    const slope = Number.isFinite(g.ys) && g.ys > 0 ? 1 / g.ys : 0;
    return { g, src, col, slope, fpl: fp.plane * slope, w: fp.detector?.window, acc: fp.detector ? perDet.get(fp.detector.id) : undefined, id: fp.detector?.id ?? '' };
  });
  const pathAtoms = new Float64Array(paths.length), pathClipped = new Float64Array(paths.length);
  const { lostSpin, clipped, negative } = followAtoms(rng, opts, sysPaths, sysOf, probs, speeds, geo, pathAtoms, pathClipped);
  perPath.forEach((p, i) => {
    p.atoms = pathAtoms[i];
    p.clipped = pathClipped[i];
  });
  if (negative < -1e-9) warnings.push(`a path's probability came out at ${negative.toExponential(1)} at some speed (round-off of the state); it was taken as 0`);

  const out: SimulatedDetector[] = detectors.map((d) => {
    const acc = perDet.get(d.id)!;
    const n = acc.n;
    const f = n / atoms;
    const eff = d.kind === 'detector' ? d.efficiency : 1;
    const bg = d.kind === 'detector' ? d.background : 0;
    const dwell = d.kind === 'detector' ? d.dwell : 1;
    const signal = flux * f * eff;
    const det: SimulatedDetector = {
      id: d.id, hits: n, fraction: f, fractionSigma: Math.sqrt((f * (1 - f)) / atoms), signal,
      signalSigma: flux * eff * Math.sqrt((f * (1 - f)) / atoms), background: bg, dwell,
      counts: rng.poisson((signal + bg) * dwell),
    };
    if (n > 0) {
      const xs = acc.x.subarray(0, n), zs = acc.z.subarray(0, n);
      let sx = 0, sz = 0;
      for (let i = 0; i < n; i++) {
        sx += xs[i];
        sz += zs[i];
      }
      const mx = sx / n, mz = sz / n;
      let qx = 0, qz = 0;
      for (let i = 0; i < n; i++) {
        qx += (xs[i] - mx) ** 2;
        qz += (zs[i] - mz) ** 2;
      }
      det.mean = { x: mx, z: mz };
      det.rms = { x: Math.sqrt(qx / n), z: Math.sqrt(qz / n) };
      det.map = hitMap(xs, zs, bins, d.kind === 'detector' ? d.window : undefined);
    }
    return det;
  });
  return {
    format: 'spinyard.simulation', version: 1, title: line.title, atoms, seed, flux, detectors: out, paths: perPath,
    lost: { spin: lostSpin, clipped },
    method: 'atoms drawn one by one: isotope by abundance, speed from the flux-weighted distribution (effusive exactly, v²/a² ~ Gamma(2, 1), the sum of two ziggurat exponentials; supersonic by its tabulated inverse CDF; a table by its weights), start point uniform in the oven aperture and a point uniform in the path\'s first slit, one path by the Born rule at the atom\'s speed, deflection μ_eff G/M over each magnet, clipping at every later slit and pole gap and at the window; xoshiro128**, seeded, 32-bit uniforms drawn in blocks',
    warnings: [...warnings, ...result.warnings.filter((w) => /^invariant/.test(w))],
  };
}

/** A 2-D histogram of hits: over the window where the detector has one, else over the hits' range. */
function hitMap(xs: Float64Array, zs: Float64Array, bins: number, window: Rect | undefined): HitMap {
  const range = (vs: Float64Array, c: number | undefined, w: number | undefined): [number, number] => {
    if (c !== undefined && w !== undefined) return [c - w / 2, c + w / 2];
    let lo = Infinity, hi = -Infinity;
    for (let i = 0; i < vs.length; i++) {
      const v = vs[i];
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
    if (!(hi > lo)) return [lo - 5e-4, hi + 5e-4];
    const pad = (hi - lo) * 0.02;
    return [lo - pad, hi + pad];
  };
  const [x0, x1] = range(xs, window?.x, window?.width);
  const [z0, z1] = range(zs, window?.z, window?.height);
  // counted in one flat array (a hit outside the range goes to the nearest bin), handed out as rows
  const flat = new Float64Array(bins * bins);
  const sx = bins / (x1 - x0), sz = bins / (z1 - z0), last = bins - 1;
  for (let i = 0; i < xs.length; i++) {
    let a = Math.floor((xs[i] - x0) * sx), b = Math.floor((zs[i] - z0) * sz);
    a = a < 0 ? 0 : a > last ? last : a;
    b = b < 0 ? 0 : b > last ? last : b;
    flat[a * bins + b]++;
  }
  const counts = Array.from({ length: bins }, (_, a) => Array.from(flat.subarray(a * bins, (a + 1) * bins)));
  const edges = (lo: number, hi: number) => Array.from({ length: bins + 1 }, (_, i) => lo + ((hi - lo) * i) / bins);
  return { x: edges(x0, x1), z: edges(z0, z1), counts };
}

/** For the tests: the speed sampler of a distribution with its own seeded generator. */
export const testing = {
  speedSampler: (d: VelocityDistribution, seed: number): (() => number) => {
    const rng = new Random(seed), f = speedSampler(d, rng);
    return () => f(rng.nextUint32(), rng.nextUint32());
  },
};
