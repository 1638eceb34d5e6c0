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
import { Random, exponentialOf, ZIG_K, ZIG_W } from './random.ts';
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
  /**
   * Whether each detector gets its hit map (default true). Without maps the tallies keep no hits' positions (their
   * x and z lists empty), only each sub-block's statistics: every other number of the result is the same, for a host
   * that needs the hits' counts and moments (and takes the hits themselves through onHits) without storing them.
   */
  maps?: boolean;
  /**
   * Receives each sub-block's hits on a detector inside its window, in the atoms' order: x[from … from + n) and
   * z[from … from + n) on its plane (m), arrays the run reuses after the call. Within one `run` of a simulation
   * the hits arrive in the atoms' order; each thread's run hands out its own blocks' hits.
   */
  onHits?: (detector: string, x: Float64Array, z: Float64Array, from: number, n: number) => void;
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

/** 2⁻³²: a 32-bit word x (read unsigned) as the uniform x·2⁻³² in [0, 1). */
const U32 = 2.3283064365386963e-10;

const FIXED = 0, EFFUSIVE = 1, ONE_WORD = 2;

/**
 * An isotope's speed sampler: exact for a fixed speed; the effusive v³ e^{−v²/a²} from two 32-bit words (v²/a² is
 * Gamma(2, 1), the sum of two unit exponentials, each by the ziggurat: random.ts exponentialOf); a table (its
 * cumulative weights searched by bisection) and the supersonic (its tabulated inverse CDF) from one word.
 */
interface SpeedSampler {
  readonly kind: number;
  /** The fixed speed, or the effusive a. */
  readonly value: number;
  readonly draw: ((r: number) => number) | null;
}

function speedSampler(d: VelocityDistribution): SpeedSampler {
  const uniform = (r: number) => ((r >>> 0) + 1) * U32;   // in (0, 1], from a signed or unsigned word
  switch (d.kind) {
    case 'fixed': return { kind: FIXED, value: d.speed, draw: null };
    case 'effusive': return { kind: EFFUSIVE, value: d.a, draw: null };
    case 'table': {
      const n = d.weights.length;
      const cum = new Float64Array(n);
      let s = 0;
      d.weights.forEach((w, i) => (cum[i] = s += w));
      return {
        kind: ONE_WORD, value: 0, draw: (r1) => {
          // the first i with cum[i] > t (the last where rounding leaves none)
          const t = (1 - uniform(r1)) * s;
          let lo = 0, hi = n - 1;
          while (lo < hi) {
            const m = (lo + hi) >> 1;
            if (cum[m] > t) hi = m;
            else lo = m + 1;
          }
          return d.speeds[lo];
        },
      };
    }
    case 'supersonic': {
      const inv = tabulated(d);
      return { kind: ONE_WORD, value: 0, draw: (r1) => inv(1 - uniform(r1)) };
    }
  }
}

/** One speed from the words r1, r2 (the second read by the effusive form only; more from `rng` where the ziggurat rejects one). */
function speedOf(s: SpeedSampler, rng: Random, r1: number, r2: number): number {
  if (s.kind === EFFUSIVE) return s.value * Math.sqrt(exponentialOf(rng, r1) + exponentialOf(rng, r2));
  if (s.kind === FIXED) return s.value;
  return s.draw!(r1);
}

/** Atoms per block. Each block draws from a stream of its own (below); above 8,192 so that average.ts keeps no table of a block's speeds. */
const BLOCK = 16_384;
/** Atoms whose path and transverse words are drawn and followed at a time (their words stay in the nearest caches). */
const SUB = 2048;

/**
 * Everything the atoms of a simulated run need, prepared once from the line's paths (and again, identically, by each
 * worker thread a host splits the blocks over): per path its probability (a constant where its state has no phase
 * term) and its geometry in flat arrays indexed by the path, so that the atoms' loop reads no objects.
 */
class Prepared {
  readonly nSys: number;
  readonly samplers: SpeedSampler[];
  readonly cumFraction: Float64Array;
  readonly totalFraction: number;
  /** The paths of system k: sysPaths[sysStart[k] … sysStart[k + 1]). */
  readonly sysStart: Int32Array;
  readonly sysPaths: Int32Array;
  /**
   * Whether every path of system k has a constant probability; then cum31 holds their running sums (negatives as 0)
   * in units of 2⁻³¹, rounded, for a choice without a branch on the word.
   */
  readonly sysStatic: Uint8Array;
  readonly cum31: Int32Array;
  /** The most negative probability met (a path's state's round-off); 0 where none. */
  staticNegative = 0;
  readonly pathConst: Float64Array;
  readonly nPaths: number;
  // the transverse draw: start point x0 + w·u (x0 the aperture's low edge), the point in the first slit likewise
  readonly srcX0: Float64Array; readonly srcZ0: Float64Array; readonly srcW: Float64Array; readonly srcH: Float64Array;
  readonly hasCol: Uint8Array;
  readonly colX0: Float64Array; readonly colZ0: Float64Array; readonly colW: Float64Array; readonly colH: Float64Array;
  /** The clipping planes of path p: stripStart[p] … stripStart[p + 1]), at the fraction stripF of the way to the slit. */
  readonly stripStart: Int32Array;
  readonly stripF: Float64Array; readonly stripLo: Float64Array; readonly stripHi: Float64Array;
  readonly stripX: Uint8Array; readonly stripNum: Float64Array;
  /** The detector's plane: the straight line at the fraction fpl, the deflection num/v² along x and z. */
  readonly fpl: Float64Array; readonly planeNumX: Float64Array; readonly planeNumZ: Float64Array;
  readonly hasWin: Uint8Array;
  readonly winX: Float64Array; readonly winZ: Float64Array; readonly winHW: Float64Array; readonly winHH: Float64Array;
  /** The path's detector's index in `detectors`, −1 for a stop. */
  readonly detOf: Int32Array;
  /**
   * The point on the detector's plane, linear in the two words w₁ (start point) and w₃ (point in the slit) read as
   * unsigned integers, and in 1/v²: x = ax + bx·w₁ + cx·w₃ + planeNumX/v², likewise z with w₂ and w₄.
   */
  readonly ax: Float64Array; readonly bx: Float64Array; readonly cx: Float64Array;
  readonly az: Float64Array; readonly bz: Float64Array; readonly cz: Float64Array;
  /**
   * The same packed for the atoms' loop, 8 numbers a path (ax, bx, cx, planeNumX, az, bz, cz, planeNumZ), and 2
   * integers a path (its detector's index or −1; 1 where it has strips or a window to test): a loop reads fewer
   * arrays (each array read costs its own loads of where its data lie).
   */
  readonly geo: Float64Array;
  readonly flags: Int32Array;

  constructor(readonly paths: readonly FinePath[], sysList: readonly { fraction: number; dist: VelocityDistribution; paths: number[] }[],
    readonly detectorIds: readonly string[]) {
    const nSys = (this.nSys = sysList.length), n = (this.nPaths = paths.length);
    this.samplers = sysList.map((s) => speedSampler(s.dist));
    this.cumFraction = new Float64Array(nSys);
    this.totalFraction = sysList.reduce((t, s, k) => (this.cumFraction[k] = t + s.fraction), 0);
    this.sysStart = new Int32Array(nSys + 1);
    this.sysPaths = new Int32Array(n);
    this.sysStatic = new Uint8Array(nSys);
    this.cum31 = new Int32Array(n);
    this.pathConst = new Float64Array(n).fill(NaN);
    paths.forEach((p, i) => {
      // the same state at every speed (no phase term): one trace for all, taken at any speed
      if (p.spec && specIsStatic(p.spec)) this.pathConst[i] = specTraceAt(p.spec, new Float64Array([1]), Infinity)[0];
    });
    let o = 0;
    sysList.forEach((s, k) => {
      this.sysStart[k] = o;
      let all = 1, run = 0;
      for (const i of s.paths) {
        this.sysPaths[o] = i;
        const c = this.pathConst[i];
        if (Number.isNaN(c)) all = 0;
        else {
          if (c < 0) this.staticNegative = Math.min(this.staticNegative, c);
          run += c > 0 ? c : 0;
          this.cum31[o] = Math.round(Math.min(run, 1) * 2 ** 31);
        }
        o++;
      }
      this.sysStatic[k] = all;
    });
    this.sysStart[nSys] = o;

    const f64 = () => new Float64Array(n);
    this.srcX0 = f64(); this.srcZ0 = f64(); this.srcW = f64(); this.srcH = f64();
    this.hasCol = new Uint8Array(n);
    this.colX0 = f64(); this.colZ0 = f64(); this.colW = f64(); this.colH = f64();
    this.fpl = f64(); this.planeNumX = f64(); this.planeNumZ = f64();
    this.hasWin = new Uint8Array(n);
    this.winX = f64(); this.winZ = f64(); this.winHW = f64(); this.winHH = f64();
    this.detOf = new Int32Array(n).fill(-1);
    this.ax = f64(); this.bx = f64(); this.cx = f64(); this.az = f64(); this.bz = f64(); this.cz = f64();
    this.geo = new Float64Array(8 * n);
    this.flags = new Int32Array(2 * n);
    this.stripStart = new Int32Array(n + 1);
    const nStrips = paths.reduce((t, p) => t + p.track.strips.length, 0);
    this.stripF = new Float64Array(nStrips); this.stripLo = new Float64Array(nStrips); this.stripHi = new Float64Array(nStrips);
    this.stripX = new Uint8Array(nStrips); this.stripNum = new Float64Array(nStrips);
    let k = 0;
    paths.forEach((p, i) => {
      // at each clipping plane (and the detector's) the deflection is num/v² along its axis (subbeam.ts `deflection`:
      // Σ a L (L/2 + y − y_exit) n̂ over the magnets already passed)
      const t = p.track, src = t.source, col = t.collimator;
      const ys = col?.y ?? Infinity;
      const slope = Number.isFinite(ys) && ys > 0 ? 1 / ys : 0;
      if (src) {
        this.srcX0[i] = src.x - src.width / 2; this.srcW[i] = src.width;
        this.srcZ0[i] = src.z - src.height / 2; this.srcH[i] = src.height;
      }
      if (col) {
        this.hasCol[i] = 1;
        this.colX0[i] = col.rect.x - col.rect.width / 2; this.colW[i] = col.rect.width;
        this.colZ0[i] = col.rect.z - col.rect.height / 2; this.colH[i] = col.rect.height;
      }
      this.stripStart[i] = k;
      for (const st of t.strips) {
        const d = deflection(t.kicks, st.y, 1);
        this.stripF[k] = st.y * slope;
        this.stripLo[k] = st.lo;
        this.stripHi[k] = st.hi;
        this.stripX[k] = st.axis === 'x' ? 1 : 0;
        this.stripNum[k] = st.axis === 'x' ? d.x : d.z;
        k++;
      }
      const d = deflection(t.kicks, p.plane, 1);
      this.fpl[i] = p.plane * slope;
      this.planeNumX[i] = d.x;
      this.planeNumZ[i] = d.z;
      const w = p.detector?.window;
      if (w) {
        this.hasWin[i] = 1;
        this.winX[i] = w.x; this.winZ[i] = w.z; this.winHW[i] = w.width / 2; this.winHH[i] = w.height / 2;
      }
      if (p.detector) this.detOf[i] = detectorIds.indexOf(p.detector.id);
      // s + (c − s)·f = s (1 − f) + c f, s = s₀ + W u₁, c = c₀ + C u₃ (c = s without a slit)
      const f = this.fpl[i];
      if (col) {
        this.ax[i] = this.srcX0[i] * (1 - f) + this.colX0[i] * f;
        this.bx[i] = this.srcW[i] * (1 - f) * U32;
        this.cx[i] = this.colW[i] * f * U32;
        this.az[i] = this.srcZ0[i] * (1 - f) + this.colZ0[i] * f;
        this.bz[i] = this.srcH[i] * (1 - f) * U32;
        this.cz[i] = this.colH[i] * f * U32;
      } else {
        this.ax[i] = this.srcX0[i];
        this.bx[i] = this.srcW[i] * U32;
        this.az[i] = this.srcZ0[i];
        this.bz[i] = this.srcH[i] * U32;
      }
      this.geo.set([this.ax[i], this.bx[i], this.cx[i], this.planeNumX[i], this.az[i], this.bz[i], this.cz[i], this.planeNumZ[i]], 8 * i);
      this.flags[2 * i] = this.detOf[i];
      this.flags[2 * i + 1] = t.strips.length > 0 || this.hasWin[i] === 1 ? 1 : 0;
    });
    this.stripStart[n] = k;
  }
}

/**
 * The hits of one detector in a range of blocks, in the atoms' order: positions on its plane (m) in chunks that
 * double up to 65,536 hits (no copying as they grow).
 */
class HitStore {
  n = 0;
  fill = 0;
  cx: Float64Array;
  cz: Float64Array;
  readonly xs: Float64Array[];
  readonly zs: Float64Array[];
  /** Per sub-block with hits: STATS numbers (subStats), in the atoms' order. */
  stats = new Float64Array(16 * STATS);
  nStats = 0;
  /** Whether the hits' positions are kept (else only their count and statistics). */
  constructor(readonly keep: boolean) {
    this.cx = new Float64Array(keep ? 1024 : 0);
    this.cz = new Float64Array(keep ? 1024 : 0);
    this.xs = [this.cx];
    this.zs = [this.cz];
  }
  grow(): void {
    const size = Math.min(2 * this.cx.length, 65_536);
    this.xs[this.xs.length - 1] = this.cx.subarray(0, this.fill);
    this.zs[this.zs.length - 1] = this.cz.subarray(0, this.fill);
    this.cx = new Float64Array(size);
    this.cz = new Float64Array(size);
    this.xs.push(this.cx);
    this.zs.push(this.cz);
    this.fill = 0;
  }
  /** Appends x[from … from + n), z likewise. */
  append(x: Float64Array, z: Float64Array, from: number, n: number): void {
    while (n > 0) {
      if (this.fill === this.cx.length) this.grow();
      const k = Math.min(n, this.cx.length - this.fill);
      this.cx.set(x.subarray(from, from + k), this.fill);
      this.cz.set(z.subarray(from, from + k), this.fill);
      this.fill += k;
      this.n += k;
      from += k;
      n -= k;
    }
  }
  /** Appends the statistics of x[from … from + n), z likewise (n > 0). */
  addStats(x: Float64Array, z: Float64Array, from: number, n: number): void {
    if ((this.nStats + 1) * STATS > this.stats.length) {
      const more = new Float64Array(2 * this.stats.length);
      more.set(this.stats);
      this.stats = more;
    }
    subStats(x, z, from, n, this.stats, this.nStats++ * STATS);
  }
  /** The chunks, the last cut to its hits (none where the positions are not kept). */
  done(): { n: number; x: Float64Array[]; z: Float64Array[]; stats: Float64Array } {
    const stats = this.stats.slice(0, this.nStats * STATS);
    if (!this.keep) return { n: this.n, x: [], z: [], stats };
    this.xs[this.xs.length - 1] = this.cx.subarray(0, this.fill);
    this.zs[this.zs.length - 1] = this.cz.subarray(0, this.fill);
    return { n: this.n, x: this.xs, z: this.zs, stats };
  }
}

/**
 * What the atoms of the blocks first … end − 1 gave: counts, and each detector's hits in the atoms' order. The tallies
 * of consecutive block ranges, taken in order, give the same run as one tally of them all, whichever thread drew them.
 */
export interface SimulationTally {
  readonly first: number;
  readonly end: number;
  readonly lostSpin: number;
  readonly clipped: number;
  /** The most negative path probability met (0: none). */
  readonly negative: number;
  readonly pathAtoms: Float64Array;
  readonly pathClipped: Float64Array;
  /** Per detector (in the result's order) its hits' x and z (m) on its plane, in chunks. */
  readonly hits: readonly {
    readonly n: number; readonly x: readonly Float64Array[]; readonly z: readonly Float64Array[];
    /** Per sub-block with hits, in order: n, mean x, mean z, Σ(x − x̄)², Σ(z − z̄)², min x, max x, min z, max z. */
    readonly stats: Float64Array;
  }[];
}

/** The work arrays of one block, reused from block to block. */
class BlockWork {
  /** The block's isotope and speed words (where fillWords draws them), or the kept words of the atoms the ziggurat's common case rejects. */
  readonly words = new Int32Array(2 * BLOCK);
  readonly sysOf = new Int32Array(BLOCK);
  readonly speeds = new Float64Array(BLOCK);
  readonly invV2 = new Float64Array(BLOCK);
  readonly chosen = new Int32Array(BLOCK);
  /** Each atom's detector (−1: none) in the sub-block; the hits of detector d at d·SUB + 0 … hitN[d] − 1 of hitX, hitZ. */
  readonly hitDet = new Int32Array(SUB);
  readonly hitN: Int32Array;
  readonly hitX: Float64Array;
  readonly hitZ: Float64Array;
  /** Per path its probability at each atom's speed, for systems with a path whose probability depends on the speed. */
  readonly probs: Float64Array[];
  lostSpin = 0;
  clipped = 0;
  /** The most negative path probability met, in [0] (a field written only where one is met). */
  readonly negative = new Float64Array(1);
  constructor(nPaths: number, dynamic: boolean, nDet: number) {
    this.hitN = new Int32Array(nDet);
    this.hitX = new Float64Array(nDet * SUB);
    this.hitZ = new Float64Array(nDet * SUB);
    this.probs = Array.from({ length: dynamic ? nPaths : 0 }, () => new Float64Array(BLOCK));
  }
}

/** The block's isotopes (one word an atom, where the line has more than one) and speeds (two words an atom). */
function drawSpeeds(pr: Prepared, rng: Random, wk: BlockWork, nb: number, withSpeeds: boolean): void {
  const words = wk.words, sysOf = wk.sysOf, speeds = wk.speeds, invV2 = wk.invV2;
  const nSys = pr.nSys;
  if (nSys > 1) {
    rng.fillWords(words, nb);
    const cumFraction = pr.cumFraction, scale = U32 * pr.totalFraction;
    for (let j = 0; j < nb; j++) {
      const u = (words[j] >>> 0) * scale;
      let k = 0;
      while (k < nSys - 1 && u >= cumFraction[k]) k++;
      sysOf[j] = k;
    }
  } else sysOf.fill(0, 0, nb);
  const s0 = pr.samplers[0];
  if (nSys === 1 && s0.kind === EFFUSIVE) {
    // the common case in a loop of its own, its two words an atom drawn inline (fillWords' words, in its order):
    // v = a √(E₁ + E₂), 1/v² = 1/(a² (E₁ + E₂)); the atoms with a word outside the common case keep their words
    const a = s0.value, rejected = wk.chosen;
    const nr = effusiveSpeeds(rng.stateWords(), words, speeds, invV2, rejected, nb, a, withSpeeds, ZIG_K, ZIG_W);
    for (let t = 0; t < nr; t++) {
      const j = rejected[t];
      const g = exponentialOf(rng, words[2 * t]) + exponentialOf(rng, words[2 * t + 1]);
      speeds[j] = a * Math.sqrt(g);
      invV2[j] = 1 / (a * a * g);
    }
    return;
  }
  rng.fillWords(words, 2 * nb);
  const samplers = pr.samplers;
  for (let j = 0; j < nb; j++) {
    const v = speedOf(samplers[sysOf[j]], rng, words[2 * j], words[2 * j + 1]);
    speeds[j] = v;
    invV2[j] = 1 / (v * v);
  }
}

/**
 * Effusive speeds v = a √(E₁ + E₂) and 1/v² from two words an atom, drawn here from the generator's state `st` (as
 * fillWords draws them, written back every 256 atoms), where both fall in the ziggurat's common case (inside their
 * layers' rectangles: random.ts exponentialOf); returns how many atoms have a word outside, lists them in `rejected`
 * and their two words in `kept` (2t, 2t + 1 for the t-th), for the caller to draw in their order (a call's result in
 * this loop would have every exponential boxed). The tables come as arguments: read through the module's import
 * they cost a load of the binding each. Nothing follows the outer loop but the return: a loop compiled while it runs
 * (on stack) without having seen the code after it gives up there at every later call.
 */
function effusiveSpeeds(st: Int32Array, kept: Int32Array, speeds: Float64Array, invV2: Float64Array, rejected: Int32Array, nb: number, a: number, withSpeeds: boolean, zk: Uint32Array, zw: Float64Array): number {
  const a2 = a * a;
  let nr = 0;
  let s0 = st[0], s1 = st[1], s2 = st[2], s3 = st[3];
  for (let j0 = 0; j0 < nb; j0 += 256) {
    const j1 = Math.min(nb, j0 + 256);
    for (let j = j0; j < j1; j++) {
      // two steps of xoshiro128** (random.ts fillWords)
      let x = Math.imul(s1, 5), t = s1 << 9;
      const r1 = Math.imul((x << 7) | (x >>> 25), 9);
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      x = Math.imul(s1, 5);
      t = s1 << 9;
      const r2 = Math.imul((x << 7) | (x >>> 25), 9);
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      const i1 = r1 & 255, k1 = r1 >>> 8, i2 = r2 & 255, k2 = r2 >>> 8;
      if (k1 < zk[i1] && k2 < zk[i2]) {
        const g = k1 * zw[i1] + k2 * zw[i2];
        if (withSpeeds) speeds[j] = a * Math.sqrt(g);
        invV2[j] = 1 / (a2 * g);
      } else {
        kept[2 * nr] = r1;
        kept[2 * nr + 1] = r2;
        rejected[nr++] = j;
      }
    }
    st[0] = s0; st[1] = s1; st[2] = s2; st[3] = s3;
  }
  return nr;
}

/** Each path's probability at the block's speeds, for the systems whose paths are not all constant. */
function pathProbabilities(pr: Prepared, wk: BlockWork, nb: number): void {
  const speeds = wk.speeds.subarray(0, nb);
  for (let k = 0; k < pr.nSys; k++) {
    if (pr.sysStatic[k]) continue;
    for (let q = pr.sysStart[k]; q < pr.sysStart[k + 1]; q++) {
      const i = pr.sysPaths[q], out = wk.probs[i], p = pr.paths[i];
      if (!Number.isNaN(pr.pathConst[i])) out.fill(pr.pathConst[i], 0, nb);
      else if (p.spec) out.set(specTraceAt(p.spec, speeds, Infinity));
      else {
        // a speed-by-speed path (after a field twist): its traces on its grid, interpolated linearly in the speed
        const g = p.grid!, n = g.speeds.length;
        for (let j = 0; j < nb; j++) {
          const v = speeds[j];
          if (n === 1 || v <= g.speeds[0]) out[j] = g.traces[0];
          else if (v >= g.speeds[n - 1]) out[j] = g.traces[n - 1];
          else {
            // the first grid speed at or above v
            let lo = 1, hi = n - 1;
            while (lo < hi) {
              const m = (lo + hi) >> 1;
              if (g.speeds[m] < v) lo = m + 1;
              else hi = m;
            }
            const t = (v - g.speeds[lo - 1]) / (g.speeds[lo] - g.speeds[lo - 1]);
            out[j] = g.traces[lo - 1] + t * (g.traces[lo] - g.traces[lo - 1]);
          }
        }
      }
    }
  }
}

/**
 * Each atom of the sub-block j0 … j1 − 1: its five words drawn here from the generator's state `st` (as fillWords
 * draws them, in the atoms' order, the state written back every 256 atoms); its path by the Born rule at its speed
 * from its first word (none: absorbed in the spin operations), then its straight line from its start point (words 2
 * and 3) to its point in the path's first slit (words 4 and 5), deflected by num/v² at each plane: clipped at the
 * path's strips and its window, or a hit on its detector's plane (hitDet; the hit's x and z in its detector's part of
 * hitX, hitZ). Returns the atoms absorbed; the clipped are counted in wk.clipped. (The hot functions return their
 * counts rather than write them to an object after their loops: see effusiveSpeeds.)
 */
function followAtoms(pr: Prepared, wk: BlockWork, st: Int32Array, j0: number, j1: number, pathAtoms: Float64Array, pathClipped: Float64Array): number {
  const sysOf = wk.sysOf, probs = wk.probs, negative = wk.negative;
  const invV2 = wk.invV2, hitDet = wk.hitDet, hitN = wk.hitN, hitX = wk.hitX, hitZ = wk.hitZ;
  hitN.fill(0);
  hitDet.fill(-1);
  const sysStart = pr.sysStart, sysPaths = pr.sysPaths, sysStatic = pr.sysStatic, cum31 = pr.cum31;
  const geo = pr.geo, flags = pr.flags;
  let lost = 0;
  // the atom's isotope and its paths sysPaths[q0 … q1) (read per atom only where the line has more than one isotope)
  const multi = pr.nSys > 1;
  let k = 0, q0 = sysStart[0], q1 = sysStart[1];
  let s0 = st[0], s1 = st[1], s2 = st[2], s3 = st[3];
  for (let i0 = j0; i0 < j1; i0 += 256) {
    const i1 = Math.min(j1, i0 + 256);
    for (let j = i0; j < i1; j++) {
      // five steps of xoshiro128** (random.ts fillWords)
      let x = Math.imul(s1, 5), t = s1 << 9;
      const w0 = Math.imul((x << 7) | (x >>> 25), 9);
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      x = Math.imul(s1, 5); t = s1 << 9;
      const w1 = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      x = Math.imul(s1, 5); t = s1 << 9;
      const w2 = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      x = Math.imul(s1, 5); t = s1 << 9;
      const w3 = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      x = Math.imul(s1, 5); t = s1 << 9;
      const w4 = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
      s2 ^= s0; s3 ^= s1; s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = (s3 << 11) | (s3 >>> 21);
      if (multi) {
        k = sysOf[j];
        q0 = sysStart[k];
        q1 = sysStart[k + 1];
      }
      let p = -1;
      if (sysStatic[k] === 1) {
        // the top 31 bits w of the word against the running sums T: the number of T ≤ w, counted from the sign of
        // T − 1 − w (no branch on the word, which would be mispredicted about as often as the paths are near equal)
        const w = w0 >>> 1;
        let q = q0;
        for (let u = q0; u < q1; u++) q += (cum31[u] - 1 - w) >>> 31;
        if (q < q1) p = sysPaths[q];
      } else {
        let left = (w0 >>> 0) * U32;
        for (let q = q0; q < q1; q++) {
          const i = sysPaths[q], pq = probs[i][j];
          if (pq < 0 && pq < negative[0]) negative[0] = pq;
          left -= pq > 0 ? pq : 0;
          if (left < 0) {
            p = i;
            break;
          }
        }
      }
      if (p < 0) {
        lost++;
        continue;
      }
      pathAtoms[p]++;
      const i2 = invV2[j];
      const g = 8 * p;
      const px = geo[g] + geo[g + 1] * w1 + geo[g + 2] * w3 + geo[g + 3] * i2, pz = geo[g + 4] + geo[g + 5] * w2 + geo[g + 6] * w4 + geo[g + 7] * i2;
      if (flags[2 * p + 1] === 1 && clipped(pr, p, w1, w2, w3, w4, i2, px, pz)) {
        pathClipped[p]++;
        wk.clipped++;
        continue;
      }
      const d = flags[2 * p];
      if (d >= 0) {
        hitDet[j - j0] = d;
        const at = d * SUB + hitN[d]++;
        hitX[at] = px;
        hitZ[at] = pz;
      }
    }
    st[0] = s0; st[1] = s1; st[2] = s2; st[3] = s3;
  }
  return lost;
}

/**
 * Whether the atom of path p with words w₁ … w₄ and 1/v² = i2 is stopped at one of the path's strips, or lands at
 * (px, pz) outside its detector's window.
 */
function clipped(pr: Prepared, p: number, w1: number, w2: number, w3: number, w4: number, i2: number, px: number, pz: number): boolean {
  if (pr.hasWin[p] === 1 && !(Math.abs(px - pr.winX[p]) <= pr.winHW[p] && Math.abs(pz - pr.winZ[p]) <= pr.winHH[p])) return true;
  const sx = pr.srcX0[p] + pr.srcW[p] * U32 * w1, sz = pr.srcZ0[p] + pr.srcH[p] * U32 * w2;
  let dx = 0, dz = 0;
  if (pr.hasCol[p] === 1) {
    dx = pr.colX0[p] + pr.colW[p] * U32 * w3 - sx;
    dz = pr.colZ0[p] + pr.colH[p] * U32 * w4 - sz;
  }
  const stripF = pr.stripF, stripLo = pr.stripLo, stripHi = pr.stripHi, stripX = pr.stripX, stripNum = pr.stripNum;
  for (let k = pr.stripStart[p], e = pr.stripStart[p + 1]; k < e; k++) {
    const q = (stripX[k] === 1 ? sx + dx * stripF[k] : sz + dz * stripF[k]) + stripNum[k] * i2;
    if (q < stripLo[k] || q > stripHi[k]) return true;
  }
  return false;
}

/** The sub-block's hits into their detectors' stores (their positions where the stores keep them), to `onHits`, and to `onHit` in the atoms' order. */
function keepHits(wk: BlockWork, j0: number, j1: number, stores: readonly HitStore[], ids: readonly string[], onHit: SimulateOptions['onHit'], onHits: SimulateOptions['onHits']): void {
  const hitN = wk.hitN, hitX = wk.hitX, hitZ = wk.hitZ;
  for (let d = 0; d < stores.length; d++) {
    if (hitN[d] === 0) continue;
    if (stores[d].keep) stores[d].append(hitX, hitZ, d * SUB, hitN[d]);
    else stores[d].n += hitN[d];
    stores[d].addStats(hitX, hitZ, d * SUB, hitN[d]);
    onHits?.(ids[d], hitX, hitZ, d * SUB, hitN[d]);
  }
  if (!onHit) return;
  const hitDet = wk.hitDet, next = new Int32Array(stores.length);
  for (let j = j0; j < j1; j++) {
    const d = hitDet[j - j0];
    if (d < 0) continue;
    const at = d * SUB + next[d]++;
    onHit(ids[d], hitX[at], hitZ[at], wk.speeds[j]);
  }
}

/**
 * A simulated run taken apart for a host that splits its atoms over threads: `blocks` blocks of atoms, `run(first,
 * end)` draws the atoms of blocks first … end − 1 (each block from its own stream: the same atoms in any thread), and
 * `finish` puts the tallies of all blocks, in any number of consecutive ranges, into the run's result. Each thread
 * makes its own `Simulation` of the same plan, options and values (the line's run is repeated, the same).
 */
export interface Simulation {
  readonly blocks: number;
  run(first: number, end: number): SimulationTally;
  finish(tallies: readonly SimulationTally[]): SimulationResult;
}

export function simulation(plan: Plan, opts: SimulateOptions = {}, values: Readonly<Record<string, number>> = {}): Simulation {
  const atoms = opts.atoms ?? 100_000;
  const seed = opts.seed ?? 1;
  const bins = opts.bins ?? 40;
  const maps = opts.maps ?? true;
  if (!Number.isInteger(atoms) || atoms < 1 || atoms > MAX_ATOMS) throw new RunError(`simulate: the number of atoms must be a whole number from 1 to ${MAX_ATOMS}, got ${atoms}`);
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new RunError(`simulate: the seed must be a whole number from 0 to 4294967295, got ${seed}`);
  const line = lineAt(plan, values);
  let paths: readonly FinePath[] = [];
  let flux = 0;
  const result = runLine(line, { ...opts, light: true, onProgress: undefined, onPaths: (p, f) => ((paths = p), (flux = f)) });
  opts.onRun?.(result);

  // isotopes by abundance (the paths of one isotope share its system, fraction and distribution)
  const systems = new Map<string, { fraction: number; dist: VelocityDistribution; paths: number[] }>();
  paths.forEach((p, i) => {
    let s = systems.get(p.system);
    if (!s) systems.set(p.system, (s = { fraction: p.fraction, dist: p.dist, paths: [] }));
    s.paths.push(i);
  });
  const sysList = [...systems.values()];
  if (!sysList.length) throw new RunError('simulate: the line has no path that reaches a detector or a stop');
  // in the order of the run's result
  const detectors = result.detectors.map((d) => line.elements.find((e) => e.id === d.id)!).filter((e) => e.kind === 'detector');
  const ids = detectors.map((d) => d.id);
  const pr = new Prepared(paths, sysList, ids);
  const dynamic = !pr.sysStatic.every((s) => s === 1);
  const blocks = Math.ceil(atoms / BLOCK);
  // the speeds themselves (beside 1/v²) for the paths' probabilities and the hits handed out
  const withSpeeds = dynamic || opts.onHit !== undefined;

  const run = (first: number, end: number): SimulationTally => {
    // block b draws from the seed's generator jumped b + 1 times (2⁶⁴ steps each); the seed's own stream is left
    // for the detectors' counts
    const stream = new Random(seed);
    for (let b = 0; b <= first; b++) stream.jump();
    const wk = new BlockWork(paths.length, dynamic, ids.length);
    const stores = ids.map(() => new HitStore(maps));
    const pathAtoms = new Float64Array(paths.length), pathClipped = new Float64Array(paths.length);
    for (let b = first; b < end; b++) {
      if (opts.isCancelled?.()) throw new CancelledError('simulate: cancelled');
      opts.onProgress?.((b - first) / (end - first));
      const rng = stream.clone();
      stream.jump();
      const nb = Math.min(BLOCK, atoms - b * BLOCK);
      // speeds first (more words where the ziggurat rejects one), then five words an atom: the path, the start
      // point, the point in the first slit
      drawSpeeds(pr, rng, wk, nb, withSpeeds);
      if (dynamic) pathProbabilities(pr, wk, nb);
      for (let j0 = 0; j0 < nb; j0 += SUB) {
        const j1 = Math.min(nb, j0 + SUB);
        wk.lostSpin += followAtoms(pr, wk, rng.stateWords(), j0, j1, pathAtoms, pathClipped);
        keepHits(wk, j0, j1, stores, ids, opts.onHit, opts.onHits);
      }
    }
    return { first, end, lostSpin: wk.lostSpin, clipped: wk.clipped, negative: Math.min(wk.negative[0], pr.staticNegative), pathAtoms, pathClipped, hits: stores.map((h) => h.done()) };
  };

  const finish = (tallies: readonly SimulationTally[]): SimulationResult => {
    const parts = [...tallies].sort((a, b) => a.first - b.first);
    let at = 0;
    for (const t of parts) {
      if (t.first !== at || t.end < t.first) throw new RunError(`simulate: the tallies do not cover the blocks 0 … ${blocks - 1} once each in order (block ${at} expected, ${t.first} given)`);
      at = t.end;
    }
    if (at !== blocks) throw new RunError(`simulate: the tallies end at block ${at}, the run has ${blocks}`);
    let lostSpin = 0, clipped = 0, negative = 0;
    const perPath = paths.map((p) => ({ path: [...p.path], target: p.target, atoms: 0, clipped: 0 }));
    for (const t of parts) {
      lostSpin += t.lostSpin;
      clipped += t.clipped;
      negative = Math.min(negative, t.negative);
      perPath.forEach((p, i) => {
        p.atoms += t.pathAtoms[i];
        p.clipped += t.pathClipped[i];
      });
    }
    const warnings: string[] = [];
    if (negative < -1e-9) warnings.push(`a path's probability came out at ${negative.toExponential(1)} at some speed (round-off of the state); it was taken as 0`);
    // one run of each detector's dwell from the seed's own stream
    const rng = new Random(seed);
    const out: SimulatedDetector[] = detectors.map((d, di) => {
      const xs = parts.flatMap((t) => t.hits[di].x), zs = parts.flatMap((t) => t.hits[di].z);
      const n = parts.reduce((s, t) => s + t.hits[di].n, 0);
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
        const m = moments(parts.map((t) => t.hits[di].stats), n);
        det.mean = { x: m.mx, z: m.mz };
        det.rms = { x: m.rx, z: m.rz };
        if (maps) det.map = hitMap(xs, zs, m, bins, d.kind === 'detector' ? d.window : undefined);
      }
      return det;
    });
    return {
      format: 'spinyard.simulation', version: 1, title: line.title, atoms, seed, flux, detectors: out, paths: perPath,
      lost: { spin: lostSpin, clipped },
      method: 'atoms drawn one by one: isotope by abundance, speed from the flux-weighted distribution (effusive exactly, v²/a² ~ Gamma(2, 1), the sum of two ziggurat exponentials; supersonic by its tabulated inverse CDF; a table by its weights), start point uniform in the oven aperture and a point uniform in the path\'s first slit, one path by the Born rule at the atom\'s speed, deflection μ_eff G/M over each magnet, clipping at every later slit and pole gap and at the window; xoshiro128**, seeded, 32-bit words drawn in blocks of 16,384 atoms, each block from its own stream (the seed\'s jumped 2⁶⁴ steps a block)',
      warnings: [...warnings, ...result.warnings.filter((w) => /^invariant/.test(w))],
    };
  };
  return { blocks, run, finish };
}

export function simulate(plan: Plan, opts: SimulateOptions = {}, values: Readonly<Record<string, number>> = {}): SimulationResult {
  const s = simulation(plan, opts, values);
  return s.finish([s.run(0, s.blocks)]);
}

/** Numbers kept per sub-block and detector: see SimulationTally's hits. */
const STATS = 9;

/** The statistics of one sub-block's hits x[from … from + n), z likewise, into out[o … o + STATS): two passes, in the nearest caches. */
function subStats(x: Float64Array, z: Float64Array, from: number, n: number, out: Float64Array, o: number): void {
  let sx = 0, sz = 0, x0 = Infinity, x1 = -Infinity, z0 = Infinity, z1 = -Infinity;
  for (let i = from; i < from + n; i++) {
    const a = x[i], b = z[i];
    sx += a;
    sz += b;
    if (a < x0) x0 = a;
    if (a > x1) x1 = a;
    if (b < z0) z0 = b;
    if (b > z1) z1 = b;
  }
  const mx = sx / n, mz = sz / n;
  let qx = 0, qz = 0;
  for (let i = from; i < from + n; i++) {
    const a = x[i] - mx, b = z[i] - mz;
    qx += a * a;
    qz += b * b;
  }
  out[o] = n; out[o + 1] = mx; out[o + 2] = mz; out[o + 3] = qx; out[o + 4] = qz;
  out[o + 5] = x0; out[o + 6] = x1; out[o + 7] = z0; out[o + 8] = z1;
}

/**
 * The hits' means and rms and their range, from the sub-blocks' statistics combined in the atoms' order (the
 * pairwise update of T. F. Chan, G. H. Golub and R. J. LeVeque, "Updating formulae and a pairwise algorithm for
 * computing sample variances", 1979): a function of the sub-blocks alone, so the same for any split over threads.
 */
function moments(stats: readonly Float64Array[], total: number): { mx: number; mz: number; rx: number; rz: number; x0: number; x1: number; z0: number; z1: number } {
  let n = 0, mx = 0, mz = 0, qx = 0, qz = 0, x0 = Infinity, x1 = -Infinity, z0 = Infinity, z1 = -Infinity;
  for (const st of stats) {
    for (let o = 0; o < st.length; o += STATS) {
      const nb = st[o], m = n + nb;
      const dx = st[o + 1] - mx, dz = st[o + 2] - mz;
      mx += (dx * nb) / m;
      mz += (dz * nb) / m;
      qx += st[o + 3] + (dx * dx * n * nb) / m;
      qz += st[o + 4] + (dz * dz * n * nb) / m;
      n = m;
      x0 = Math.min(x0, st[o + 5]); x1 = Math.max(x1, st[o + 6]);
      z0 = Math.min(z0, st[o + 7]); z1 = Math.max(z1, st[o + 8]);
    }
  }
  if (n !== total) throw new RunError(`simulate: the hits' statistics count ${n} hits, the stores ${total}`);
  return { mx, mz, rx: Math.sqrt(qx / n), rz: Math.sqrt(qz / n), x0, x1, z0, z1 };
}

/** A 2-D histogram of hits: over the window where the detector has one, else over the hits' range (2 % wider). */
function hitMap(xs: readonly Float64Array[], zs: readonly Float64Array[], m: { x0: number; x1: number; z0: number; z1: number }, bins: number, window: Rect | undefined): HitMap {
  const range = (lo: number, hi: number, c: number | undefined, w: number | undefined): [number, number] => {
    if (c !== undefined && w !== undefined) return [c - w / 2, c + w / 2];
    if (!(hi > lo)) return [lo - 5e-4, hi + 5e-4];
    const pad = (hi - lo) * 0.02;
    return [lo - pad, hi + pad];
  };
  const [x0, x1] = range(m.x0, m.x1, window?.x, window?.width);
  const [z0, z1] = range(m.z0, m.z1, window?.z, window?.height);
  // counted in one flat array (a hit outside the range goes to the nearest bin), handed out as rows
  const flat = new Float64Array(bins * bins);
  for (let c = 0; c < xs.length; c++) chunkBins(xs[c], zs[c], flat, bins, x0, bins / (x1 - x0), z0, bins / (z1 - z0));
  const counts = Array.from({ length: bins }, (_, a) => Array.from(flat.subarray(a * bins, (a + 1) * bins)));
  const edges = (lo: number, hi: number) => Array.from({ length: bins + 1 }, (_, i) => lo + ((hi - lo) * i) / bins);
  return { x: edges(x0, x1), z: edges(z0, z1), counts };
}

/** A bin's index is ⌊t⌋ of t = (x − x₀)·bins/(x₁ − x₀), clamped to 0 … bins − 1 (t | 0 is ⌊t⌋ for 1 ≤ t < bins − 1). */
function chunkBins(cx: Float64Array, cz: Float64Array, flat: Float64Array, bins: number, x0: number, sx: number, z0: number, sz: number): void {
  const last = bins - 1;
  for (let i = 0; i < cx.length; i++) {
    const ta = (cx[i] - x0) * sx, tb = (cz[i] - z0) * sz;
    const a = ta < 1 ? 0 : ta >= last ? last : ta | 0;
    const b = tb < 1 ? 0 : tb >= last ? last : tb | 0;
    flat[a * bins + b]++;
  }
}

/** For the tests: the speed sampler of a distribution with its own seeded generator. */
export const testing = {
  speedSampler: (d: VelocityDistribution, seed: number): (() => number) => {
    const rng = new Random(seed), s = speedSampler(d);
    return () => speedOf(s, rng, rng.nextUint32(), rng.nextUint32());
  },
  BLOCK,
};
