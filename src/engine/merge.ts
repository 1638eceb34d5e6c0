/**
 * Merging sub-beams whose trajectories coincide (docs/design.md "Merging sub-beams").
 *
 * A deflecting magnet splits a path into one sub-beam per state it sorts, each with its own moment and so its own
 * kick. Behind a chain of magnets the sub-beams would multiply with every magnet, although most of them land on top
 * of each other. The states of one port that leave a magnet together travel on as one bundle (walk.ts
 * `visitBundle`); at each deflecting magnet the forks of every member of the bundle that go the same way are
 * gathered. Up to MAX_BUNDLE of them go on as they are (exact); above that, those whose mean deflections differ, at
 * every plane that clips or detects them, by less than a fraction f of the sub-beam's width there are merged, with
 * the smallest f of MERGE_FRACTIONS that brings the bundle to MAX_BUNDLE (the run reports the largest f used): their spin states add (exact: what follows acts linearly
 * on ρ), their kicks become the flux-weighted mean of theirs (the mean deflection at any plane is kept to first
 * order; the spread of the merged members, at most the stated fraction of the width, is dropped). The width of a
 * sub-beam at a plane is its geometric width (oven orifice and collimator) plus the spread of its deflection over
 * the central 80 % of the flux's 1/v².
 */
import { type CMat, cmatIdentity, cmatZeros } from '../physics/cmat.ts';
import { speedGrid, speedRange, inverseSpeedMoment, type VelocityDistribution } from '../physics/velocity.ts';
import { lengthOf, outputsOf } from '../beamline/elements/registry.ts';
import { beamExtent, deflection, type Track } from './subbeam.ts';
import { type SpecState, specExpand, mergeTerms, specAt } from './spectral.ts';
import { type NodeState, type State, isNodes, averagedTrace } from './nodes.ts';
import type { Walk, WalkCtx } from './steps/step.ts';
import { RunError } from './errors.ts';

/**
 * A bundle keeps at most this many sub-beams per port: below it every sorted state is followed on its own (exact);
 * above it the forks are merged with the smallest fraction of MERGE_FRACTIONS that brings them to this count.
 */
export const MAX_BUNDLE = 16;

/** The fractions of a sub-beam's width tried in turn, up to the run's largest (RunOptions.mergeFraction). */
export const MERGE_FRACTIONS = [1e-4, 3e-4, 1e-3, 3e-3, 0.01] as const;

/**
 * A port whose sub-beams stay above this count even when merged at the run's largest fraction is refused: they
 * would multiply again at the next magnet.
 */
export const MAX_UNMERGED = 256;

/** The largest fraction used unless a run says otherwise; a bundle still above MAX_BUNDLE there keeps its clusters. */
export const MERGE_FRACTION = 0.01;

/** One path of a bundle: its state and where it is. */
export interface Member {
  st: State;
  walk: Walk;
}

interface SpeedScale {
  /** ⟨1/v²⟩ of the flux (s²/m²). */
  m2: number;
  /** 1/v² at the 10 % slowest minus at the 10 % fastest of the flux: the central spread of 1/v². */
  q: number;
}

const scales = new WeakMap<VelocityDistribution, SpeedScale>();

function speedScale(d: VelocityDistribution): SpeedScale {
  let s = scales.get(d);
  if (!s) {
    const g = speedGrid(d);
    let total = 0;
    for (let k = 0; k < g.weights.length; k++) total += g.weights[k];
    const idx = Array.from(g.speeds.keys()).sort((a, b) => g.speeds[a] - g.speeds[b]);
    let acc = 0, lo = g.speeds[idx[0]], hi = g.speeds[idx[idx.length - 1]];
    let loSet = false;
    for (const k of idx) {
      acc += g.weights[k] / total;
      if (!loSet && acc >= 0.1) {
        lo = g.speeds[k];
        loSet = true;
      }
      if (acc >= 0.9) {
        hi = g.speeds[k];
        break;
      }
    }
    s = { m2: inverseSpeedMoment(d, 2), q: lo > 0 && hi > 0 ? 1 / (lo * lo) - 1 / (hi * hi) : 0 };
    scales.set(d, s);
  }
  return s;
}

/** The geometric full width of the undeflected beam at plane y along one axis (orifice and collimator). */
function geometricWidth(t: Track, axis: 'x' | 'z', y: number): number {
  const e = beamExtent(t, axis, y);
  return e.hi - e.lo;
}

/**
 * For every element, the farthest distance a path goes from the element's entrance on (its gap not included), over
 * every route behind it: the last plane at which two sub-beams that arrive there are compared.
 */
const reaches = new WeakMap<object, Map<string, number>>();
function reachFrom(ctx: WalkCtx, id: string): number {
  let byId = reaches.get(ctx.line);
  if (!byId) reaches.set(ctx.line, (byId = new Map()));
  const known = byId.get(id);
  if (known !== undefined) return known;
  // depth first without recursion; a route met again while open (a cycle the walk refuses anyway) counts as the end
  const open = new Set<string>();
  const stack: { id: string; outs: string[]; i: number; best: number }[] = [];
  const push = (eid: string): void => {
    const e = ctx.byId.get(eid);
    open.add(eid);
    stack.push({ id: eid, outs: e ? outputsOf(e).map((o) => o.target) : [], i: 0, best: 0 });
  };
  push(id);
  let result = 0;
  while (stack.length) {
    const top = stack[stack.length - 1];
    if (top.i < top.outs.length) {
      const next = top.outs[top.i++];
      if (next === 'stop' || open.has(next)) continue;
      const k = byId.get(next);
      const ne = ctx.byId.get(next);
      if (k !== undefined) top.best = Math.max(top.best, (ne ? ne.gap : 0) + k);
      else if (ne) push(next);
      continue;
    }
    stack.pop();
    open.delete(top.id);
    const e = ctx.byId.get(top.id);
    const value = (e ? lengthOf(e) : 0) + top.best;
    byId.set(top.id, value);
    result = value;
    const parent = stack[stack.length - 1];
    if (parent) parent.best = Math.max(parent.best, (e ? e.gap : 0) + value);
  }
  return result;
}

/** The planes at which two forks leaving for `target` are compared: every clipping strip, the current plane and the farthest one. */
function comparePlanes(ctx: WalkCtx, w: Walk, target: string): number[] {
  const ys = w.track.strips.map((s) => s.y);
  const e = ctx.byId.get(target);
  ys.push(w.y, w.y + (e ? e.gap + reachFrom(ctx, target) : 0));
  return ys;
}

/**
 * A fork's deflection coefficients (deflection × v², m³/s²) and the geometric width of its beam at each compared plane,
 * x and z interleaved: what `coincide` compares.
 */
interface Profile {
  coef: Float64Array;
  width: Float64Array;
}

function profileOf(t: Track, planes: readonly number[]): Profile {
  const coef = new Float64Array(planes.length * 2), width = new Float64Array(planes.length * 2);
  planes.forEach((y, p) => {
    // the deflection at y times v²
    const c = deflection(t.kicks, y, 1);
    coef[2 * p] = c.x;
    coef[2 * p + 1] = c.z;
    width[2 * p] = geometricWidth(t, 'x', y);
    width[2 * p + 1] = geometricWidth(t, 'z', y);
  });
  return { coef, width };
}

/** True when two forks' mean deflections agree within the fraction f of the sub-beam's width at every compared plane. */
function coincide(a: Profile, b: Profile, sc: SpeedScale, f: number): boolean {
  const ca = a.coef, cb = b.coef, w = a.width;
  for (let i = 0; i < ca.length; i++) {
    const diff = Math.abs(ca[i] - cb[i]) * sc.m2;
    if (diff === 0) continue;
    if (!(diff <= f * (w[i] + Math.abs(ca[i] + cb[i]) * 0.5 * sc.q))) return false;
  }
  return true;
}

/** True when some two of the profiles coincide within the fraction f (either as the seed: the width is the seed's). */
function anyCoincide(profiles: readonly Profile[], sc: SpeedScale, f: number): boolean {
  for (let i = 1; i < profiles.length; i++) {
    for (let j = 0; j < i; j++) if (coincide(profiles[j], profiles[i], sc, f) || coincide(profiles[i], profiles[j], sc, f)) return true;
  }
  return false;
}

/** Forks of one bundle have passed the same elements: the same kicks but for their sizes. */
function sameStructure(a: Track, b: Track): boolean {
  if (a.kicks.length !== b.kicks.length || a.strips.length !== b.strips.length) return false;
  for (let i = 0; i < a.kicks.length; i++) {
    const ka = a.kicks[i], kb = b.kicks[i];
    if (ka.exitY !== kb.exitY || ka.length !== kb.length || ka.n !== kb.n) return false;
  }
  return true;
}

/**
 * True when no atom of the sub-beam passes some aperture it has met: at a strip's plane, the undeflected beam's extent
 * (every line from the oven orifice through the collimator) moved by the deflections of the fastest to the slowest
 * speeds of the distribution lies wholly beside the strip. Such a sub-beam goes no further (its flux is lost there);
 * speeds outside speedRange hold under 1e-9 of the flux.
 */
export function blockedByApertures(t: Track, d: VelocityDistribution): boolean {
  if (!t.collimator || t.kicks.length === 0) return false;
  const [vmin, vmax] = speedRange(d);
  for (const s of t.strips) {
    if (s.y < t.kicks[0].exitY - t.kicks[0].length) continue;
    const { lo, hi } = beamExtent(t, s.axis, s.y);
    const coef = deflection(t.kicks, s.y, 1)[s.axis];
    if (coef === 0) continue;
    const fast = coef / (vmax * vmax), slow = vmin > 0 ? coef / (vmin * vmin) : coef * Infinity;
    const dlo = Math.min(fast, slow), dhi = Math.max(fast, slow);
    if (hi + dhi < s.lo || lo + dlo > s.hi) return true;
  }
  return false;
}

/**
 * The sum of the spin states of a cluster of merged sub-beams. States that went through the same propagators (equal
 * μ, as the members of one bundle do) add without leaving their bases: W = [W_1 | W_2 | …], every term block-diagonal
 * (Σ_i W_i X_i W_i† = W X W†), exact and cheap where the lab-frame sum would expand each member into one dense term
 * per Bohr frequency (241 of 16 × 16 for a Cs-133 state behind a transverse field). Otherwise, or where the joined
 * basis would cost more to average than the lab-frame terms, the states add pairwise (addStates).
 */
export function mergeStates(states: readonly State[]): State | null {
  const joined = states.every((s) => !isNodes(s)) ? joinBases(states as readonly SpecState[]) : null;
  if (joined) return joined;
  let st: State | null = states[0];
  for (let k = 1; k < states.length && st; k++) st = addStates(st, states[k]);
  return st;
}

function joinBases(sts: readonly SpecState[]): SpecState | null {
  const mu0 = sts[0].mu;
  for (const s of sts) {
    if ((s.mu === null) !== (mu0 === null)) return null;
    if (s.mu && mu0 && (s.mu.length !== mu0.length || s.mu.some((m, i) => m !== mu0[i]))) return null;
  }
  const d = sts[0].W.rows;
  const phis = new Map<number, number>();
  let cols = 0, labTerms = 0;
  const diffs = new Set<number>();
  if (mu0) for (const a of mu0) for (const b of mu0) diffs.add(a - b);
  for (const s of sts) {
    cols += s.W.cols;
    labTerms += s.terms.length * Math.max(1, diffs.size);
    for (const t of s.terms) if (!phis.has(t.phi)) phis.set(t.phi, phis.size);
  }
  // averaging costs about (terms × entries): the joined basis's against the lab frame's
  if (phis.size * cols * cols > labTerms * d * d) return null;
  const W = cmatZeros(d, cols);
  const xs = Array.from(phis.keys(), () => cmatZeros(cols, cols));
  const mu = mu0 ? new Float64Array(cols) : null;
  let off = 0;
  for (const s of sts) {
    const w = s.W, r = w.cols;
    for (let i = 0; i < d; i++) for (let j = 0; j < r; j++) {
      W.re[i * cols + off + j] = w.re[i * r + j];
      W.im[i * cols + off + j] = w.im[i * r + j];
    }
    if (mu && s.mu) for (let j = 0; j < r; j++) mu[off + j] = s.mu[j];
    for (const t of s.terms) {
      const x = xs[phis.get(t.phi)!];
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        x.re[(off + a) * cols + off + b] += t.X.re[a * r + b];
        x.im[(off + a) * cols + off + b] += t.X.im[a * r + b];
      }
    }
    off += r;
  }
  const terms = Array.from(phis.keys(), (phi, i) => ({ phi, X: xs[i] }));
  return { W, mu, terms, shared: {}, memo: {} };
}

/** ρ_a + ρ_b: lab-frame terms merged by phase-length, or node by node on one speed grid. */
export function addStates(a: State, b: State): State | null {
  if (isNodes(a) || isNodes(b)) {
    const na = isNodes(a) ? a : null, nb = isNodes(b) ? b : null;
    const grid = (na ?? nb)!;
    if (na && nb && (na.speeds !== nb.speeds || na.weights !== nb.weights)) return null;
    const at = (s: State, k: number): CMat => (isNodes(s) ? s.rhos[k] : specAt(s, grid.speeds[k]));
    const rhos = grid.speeds.length ? Array.from(grid.speeds, (_, k) => {
      const x = at(a, k), y = at(b, k);
      const out = cmatZeros(x.rows, x.cols);
      for (let i = 0; i < out.re.length; i++) {
        out.re[i] = x.re[i] + y.re[i];
        out.im[i] = x.im[i] + y.im[i];
      }
      return out;
    }) : [];
    const out: NodeState = { nodes: true, speeds: grid.speeds, weights: grid.weights, rhos };
    return out;
  }
  const terms = mergeTerms([...specExpand(a as SpecState), ...specExpand(b as SpecState)]);
  const out: SpecState = { W: cmatIdentity((a as SpecState).W.rows), mu: null, terms, shared: {}, memo: {} };
  return out;
}

/**
 * The forks of one bundle that go the same way (one port to one target). Up to MAX_BUNDLE of them go on as they are;
 * more are merged where their trajectories coincide within the smallest fraction of their width that brings them to
 * MAX_BUNDLE (greedy clusters around the heaviest members, each member joining the first cluster whose seed it
 * coincides with). `at` names the magnet (for the run's report). Returns the members in their first-seen order.
 */
export function mergeForks(ctx: WalkCtx, at: string, target: string, forks: readonly Member[]): Member[] {
  const fmax = ctx.opts.mergeFraction ?? MERGE_FRACTION;
  if (forks.length <= MAX_BUNDLE || !(fmax > 0)) return [...forks];
  const sc = speedScale(ctx.dist);
  const planes = comparePlanes(ctx, forks[0].walk, target);
  const t0 = forks[0].walk.track;
  if (!forks.every((m) => sameStructure(t0, m.walk.track))) return [...forks];
  const profiles = forks.map((m) => profileOf(m.walk.track, planes));
  // coinciding grows with the fraction: where no two forks coincide at the largest, none merge at all
  if (!anyCoincide(profiles, sc, fmax)) return [...forks];
  const weights = forks.map((m) => Math.max(0, averagedTrace(ctx, m.st)));
  const order = forks.map((_, i) => i).sort((i, j) => weights[j] - weights[i] || i - j);
  const ladder = [...MERGE_FRACTIONS.filter((f) => f < fmax), fmax];
  let clusterOf = new Int32Array(0), count = forks.length, used = 0;
  for (const f of ladder) {
    const seeds: number[] = [];
    const cl = new Int32Array(forks.length).fill(-1);
    for (const i of order) {
      for (let c = 0; c < seeds.length; c++) {
        if (coincide(profiles[seeds[c]], profiles[i], sc, f)) {
          cl[i] = c;
          break;
        }
      }
      if (cl[i] < 0) {
        cl[i] = seeds.length;
        seeds.push(i);
      }
    }
    if (seeds.length < count) {
      clusterOf = cl;
      count = seeds.length;
      used = f;
    }
    if (seeds.length <= MAX_BUNDLE) break;
  }
  if (count > MAX_UNMERGED) {
    throw new RunError(`${at}: ${forks.length.toLocaleString('en-US')} sub-beams leave for ${target}, and ${count.toLocaleString('en-US')} of them still differ by more than ${(fmax * 100).toPrecision(1)} % of their width somewhere along the line; each magnet behind would multiply them again. Route the ports you do not measure to "stop", shorten the chain of deflecting magnets, or split the line into parts`);
  }
  if (count === forks.length) return [...forks];
  const members: number[][] = Array.from({ length: count }, () => []);
  for (let i = 0; i < forks.length; i++) members[clusterOf[i]].push(i);
  const out: Member[] = [];
  for (const idx of members.sort((p, q) => p[0] - q[0])) {
    if (idx.length === 1) {
      out.push(forks[idx[0]]);
      continue;
    }
    const st = mergeStates(idx.map((i) => forks[i].st));
    if (!st) {
      for (const i of idx) out.push(forks[i]);
      continue;
    }
    ctx.merged.count += idx.length - 1;
    ctx.merged.at.add(at);
    ctx.merged.fraction = Math.max(ctx.merged.fraction, used);
    out.push({ st, walk: { ...forks[idx[0]].walk, track: meanTrack(idx.map((i) => forks[i].walk.track), idx.map((i) => weights[i])) } });
  }
  return out;
}

/** The tracks' flux-weighted mean kicks (equal weights where none carries flux). */
function meanTrack(tracks: readonly Track[], weights: readonly number[]): Track {
  let total = 0;
  for (const w of weights) total += w;
  const ws = total > 0 ? weights.map((w) => w / total) : weights.map(() => 1 / weights.length);
  const kicks = tracks[0].kicks.map((k, i) => {
    let a = 0;
    for (let t = 0; t < tracks.length; t++) a += ws[t] * tracks[t].kicks[i].accel;
    return { ...k, accel: a };
  });
  return { ...tracks[0], kicks };
}
