/**
 * Runs a beamline: every path from the oven to a leaf, with its velocity-averaged density matrix, then the
 * detector plane and the counts of the result.
 *
 * Where each part lives: the walk (walk.ts) and one step per element kind (steps/, the registry in
 * steps/index.ts); the source (source.ts: velocity distribution, initial state, flux); magnet sorting and port
 * selection (sorting.ts); propagators and Kraus operators (propagate.ts) on spectral states (spectral.ts, the
 * velocity average in average.ts) or, from the first field twist on, on states evaluated speed by speed
 * (nodes.ts, twist.ts); the RF flipper (rf.ts); the end of a path (leaf.ts), each sub-beam's geometry
 * (subbeam.ts) and the detector plane with the counts (detector-plane.ts, counting.ts).
 */
import type { CMat } from '../physics/cmat.ts';
import type { VelocityDistribution } from '../physics/velocity.ts';
import type { Beamline, Detector, Element } from '../beamline/types.ts';
import { outputsOf } from '../beamline/elements/registry.ts';
import { countSigma, countsIn, signalToBackground } from './counting.ts';
import { speciesSystems } from './system.ts';
import { CharCache } from './average.ts';
import type { RunResult, LeafResult, DetectorResult } from './result.ts';
import { evaluateGeometry, type Track, type FinePath } from './detector-plane.ts';
import { RunError } from './errors.ts';
import { distributionFor, initialSpec, resolveFlux, velocityPlot, checkTable } from './source.ts';
import { visit, visitBundle } from './walk.ts';
import { MAX_BUNDLE } from './merge.ts';
import { costLimit, estimateRun } from './cost.ts';
import type { WalkCtx } from './steps/step.ts';
import type { WalkSession } from './replay.ts';

export { RunError, CancelledError } from './errors.ts';

export interface RunOptions {
  isCancelled?: () => boolean;
  onProgress?: (fraction: number) => void;
  /** Relative precision ε for the detector's time-to-precision figure (default 0.01). */
  epsilon?: number;
  /** Leave out the table-resolution check and the velocity plot (inner points of a scan). */
  light?: boolean;
  /** Receives the paths of the run before the detector plane is evaluated (simulate.ts draws atoms along them). */
  onPaths?: (paths: readonly FinePath[], flux: number) => void;
  /**
   * The largest fraction of a sub-beam's width within which sub-beams whose mean deflections coincide at every plane
   * that clips or detects them may be merged, where a port's bundle exceeds merge.ts MAX_BUNDLE (default
   * MERGE_FRACTION, 0.01); 0 follows every sorted state on its own.
   */
  mergeFraction?: number;
  /** Evaluations of one line that share the walk's unchanged part (replay.ts EvaluationSession; a scan passes one). */
  session?: WalkSession;
  /** Run even where the estimated cost is above the ask limit (cost.ts ASK_SECONDS); the refusal limits still hold. */
  acceptCost?: boolean;
  /**
   * The caller has checked the cost of this line already (a scan, budget or fit estimates the document's line once
   * before its first evaluation, cost.ts checkCost): no refusal here, and no estimate unless progress needs one.
   */
  costChecked?: boolean;
  /**
   * Leave out what the planning tools' results do not hold (scan, budget and fit set it): the leaves' profiles and centre
   * lines and the detectors' crosstalk and neighbours. Every other number of the result is the same, bit for bit.
   */
  noProfiles?: boolean;
  /**
   * A scan forms the points of a row after its first run as a batch where the inner parameter belongs to a last
   * analysing magnet (batch.ts; equal to a run to 1e-14 of the flux); false runs every point (default true).
   */
  batchRows?: boolean;
}

/** Runs the line and returns result format v1 (docs/design.md) with this engine's additions. */
export function runLine(line: Beamline, opts: RunOptions = {}): RunResult {
  const warnings = new Set<string>();
  let systems;
  try {
    systems = speciesSystems(line.species);
  } catch (err) {
    throw new RunError((err as Error).message);
  }
  // checked by the caller: estimated here only for the progress's denominator
  const estimate = opts.costChecked && !opts.onProgress ? null : estimateRun(line, systems.map((s) => s.system.params));
  if (estimate && !opts.costChecked) {
    const limit = costLimit(estimate, opts.acceptCost === true);
    if (limit) throw limit;
  }
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const flux = resolveFlux(line, warnings);
  const leaves: FinePath[] = [];
  const lost = { spin: 0 };
  const positions: Record<string, { entrance: number; exit: number }> = {};
  const hermiticity = { max: 0, positive: true };
  const sampled = { nodes: 0, error: 0, unconverged: new Map<string, { error: number; speeds: number }>() };
  const merged = { count: 0, fraction: 0, at: new Set<string>() };
  const blocked = new Set<string>();
  let chiNodes = 0, chiError = 0, wasmUsed = false;
  // the walk's share of the progress (the detector plane follows): element steps taken over those estimated
  const counter = { steps: 0 };
  const progress = opts.onProgress && estimate && estimate.steps > 0 ? { total: estimate.steps, share: 0.8, report: opts.onProgress } : undefined;
  const dists: VelocityDistribution[] = [];
  // a session replays the part of the walk a recorded run shares with this line (replay.ts)
  const walker = opts.session?.walker(line);
  systems.forEach(({ system, fraction }, i) => {
    const dist = distributionFor(line, system);
    dists.push(dist);
    const chi = new CharCache(dist);
    const ctx: WalkCtx = {
      sys: system, fraction, dist, chi, line, byId, leaves, lost, warnings, positions, opts,
      counter, progress, hermiticity, sampled, moment2: new Map(), seen: new Set(), fieldEigen: [],
      hAmbient: system.hamiltonian(line.ambient), ambientZero: false, visit, visitBundle, merged, blocked,
    };
    ctx.ambientZero = isZeroMatrix(ctx.hAmbient);
    const st0 = initialSpec(line, system);
    const ap = line.oven.aperture;
    const track: Track = {
      source: ap ? { width: ap.width, height: ap.height, x: ap.x, z: ap.z } : null,
      collimator: null, kicks: [], strips: [], components: [],
    };
    const walk0 = { path: [], rank: [i], y: 0, track, depth: 0 };
    if (walker) walker.walk(ctx, i, st0, walk0);
    else visit(ctx, line.oven.to, st0, walk0);
    chiNodes += chi.nodes;
    if (chi.wasm) wasmUsed = true;
    chiError += 0;
    if (!progress) opts.onProgress?.((i + 1) / (systems.length + 1));
  });
  walker?.done();
  opts.onProgress?.(0.8);
  if (line.oven.velocity.kind === 'table' && !opts.light) checkTable(line, leaves, warnings);
  for (const [path, u] of sampled.unconverged) {
    warnings.add(`${path}: the speed-by-speed average after the field twist did not converge to 1e-9: the yields moved by up to ${u.error.toExponential(1)} between the last two grids (${u.speeds} speeds); a fast phase before, in or after the twist is not resolved, and the yields carry that error`);
  }
  if (merged.count > 0) {
    const at = [...merged.at];
    warnings.add(`${at.slice(0, 4).join(', ')}${at.length > 4 ? ` and ${at.length - 4} more` : ''}: a port carried more than ${MAX_BUNDLE} sub-beams, so ${merged.count.toLocaleString('en-US')} of them were merged with others whose mean deflections agree within ${(merged.fraction * 100).toPrecision(1)} % of their width at every aperture and detector plane (docs/design.md "Merging sub-beams"); the spin populations are exact, what the apertures clip, the captured fractions and the profiles carry an error of up to about ${(merged.fraction * 100).toPrecision(1)} % for each magnet listed`);
  }
  leaves.sort(byRank);
  opts.onPaths?.(leaves, flux);
  const geo = evaluateGeometry(leaves, flux, opts.epsilon ?? 0.01, lost, undefined, !opts.noProfiles);
  for (const w of geo.warnings) warnings.add(w);
  chiError = geo.chiError;
  const totalYield = geo.leaves.reduce((s, l) => s + l.yield, 0);
  const lostTotal = lost.spin + geo.clipped;
  const balance = Math.abs(totalYield + lostTotal - 1);
  const leavesOut: LeafResult[] = geo.leaves;
  const detectors: DetectorResult[] = geo.detectors;
  // a detector that only sub-beams stopped on the way would reach still counts its background
  for (const det of detectorsBehind(byId, blocked)) {
    if (!detectors.some((d) => d.id === det.id)) detectors.push(emptyDetector(det, opts.epsilon ?? 0.01));
  }
  // written so that NaN fails it too
  if (!(balance <= 1e-12)) warnings.add(`invariant: Σ yields + lost = ${(totalYield + lostTotal).toPrecision(15)}, not 1 within 1e-12`);
  if (hermiticity.max > 1e-12) warnings.add(`invariant: the averaged state lost Hermiticity (‖ρ − ρ†‖ = ${hermiticity.max.toExponential(1)})`);
  if (!hermiticity.positive) warnings.add('invariant: an averaged state has an eigenvalue below −1e-12 of its trace');
  const d0 = dists[0];
  const method = d0.kind === 'effusive'
    // the effusive χ is read off Chebyshev panels fitted to the contour integral (physics/velocity.ts), whose
    // fitting nodes are not counted: a line without geometry can then report 0 nodes, and the text says why
    ? 'each Bohr frequency averaged on its own over the effusive distribution (rotated-contour Gauss–Kronrod, read off Chebyshev panels fitted to it, whose fitting nodes are not counted)'
    : d0.kind === 'supersonic' ? 'each Bohr frequency averaged on its own (adaptive Gauss–Kronrod)'
      : d0.kind === 'table' ? `exact sum over the tabulated speeds${wasmUsed ? ' (WebAssembly SIMD kernel)' : ''}` : 'single speed';
  requireFinite(line, leavesOut, detectors, lostTotal);
  opts.onProgress?.(1);
  return {
    format: 'spinyard.result',
    version: 1,
    leaves: leavesOut,
    detectors,
    // lost is a sum of differences; a negative value within rounding (|lost| < 1e-14) is reported as 0
    lost: lostTotal < 0 && lostTotal > -1e-14 ? 0 : lostTotal,
    warnings: [...warnings],
    quadrature: {
      nodes: chiNodes + sampled.nodes + geo.nodes, error: chiError + sampled.error,
      method: `${method}${sampled.nodes > 0 ? '; after a field twist, speed by speed on doubling Gauss–Legendre grids' : ''}${geo.nodes > 0 ? `; ${geo.nodes} of the nodes are the speeds of the detector-plane geometry` : ''}`,
    },
    flux,
    velocity: opts.light ? undefined : velocityPlot(d0),
    positions,
    invariants: { balance, maxHermiticity: hermiticity.max, positive: hermiticity.positive },
    ...(merged.count > 0 ? { merged: { subBeams: merged.count, fraction: merged.fraction } } : {}),
  };
}

/**
 * The last guard: no number of a result is NaN or infinite. The reader's bounds keep every accepted document
 * finite; should a number still not be, the run fails with a message naming the element instead of printing it.
 */
function requireFinite(line: Beamline, leaves: readonly LeafResult[], detectors: readonly DetectorResult[], lost: number): void {
  for (const l of leaves) {
    const found = notFinite('the yield', l.yield) ?? notFinite('the rate', l.rate) ?? notFinite('the displacement', l.displacement?.x) ?? notFinite('the displacement', l.displacement?.z)
      ?? notFinite('the spread', l.spread?.x) ?? notFinite('the spread', l.spread?.z) ?? notFinite('the captured fraction', l.captured);
    if (found) {
      const target = l.target === 'stop' ? (l.path.at(-1)?.split(':')[0] ?? 'oven') : l.target;
      throw new RunError(`${elementAt(line, target)}: ${found} on the path ${l.path.join(' ') || '(oven)'}; the set-points give no finite result (check the speeds, fields and distances of this path)`);
    }
  }
  for (const d of detectors) {
    const found = notFinite('the yield', d.yield) ?? notFinite('the rate', d.rate) ?? notFinite('the counts', d.counts) ?? notFinite('σ', d.sigma)
      ?? notFinite('S/B', d.signalToBackground) ?? notFinite('the time to precision', d.timeToPrecision.seconds);
    if (found) throw new RunError(`${elementAt(line, d.id)}: ${found}; the set-points give no finite result (check its efficiency, background and dwell, and the flux)`);
  }
  if (!Number.isFinite(lost)) throw new RunError(`the lost fraction is ${lost}; the set-points give no finite result`);
}

/** An element named by its place in the line ("elements[2] (M2)"), or the id alone where no element has it. */
function elementAt(line: Beamline, id: string): string {
  const i = line.elements.findIndex((e) => e.id === id);
  return i < 0 ? id : `elements[${i}] (${id})`;
}

/** "what is v" where v is a number that is not finite, else null. */
function notFinite(what: string, v: unknown): string | null {
  return typeof v === 'number' && !Number.isFinite(v) ? `${what} is ${v}` : null;
}

/** Leaves in the order of their branch indices (lexicographic; no leaf's indices begin another's). */
function byRank(a: FinePath, b: FinePath): number {
  const ra = a.rank ?? [], rb = b.rank ?? [];
  const n = Math.min(ra.length, rb.length);
  for (let i = 0; i < n; i++) if (ra[i] !== rb[i]) return ra[i] - rb[i];
  return ra.length - rb.length;
}

/** The detectors reached from the targets by the line's routing (the targets themselves included), in the line's order. */
function detectorsBehind(byId: ReadonlyMap<string, Element>, targets: ReadonlySet<string>): Detector[] {
  const seen = new Set<string>();
  const stack = [...targets];
  while (stack.length) {
    const id = stack.pop()!;
    if (id === 'stop' || seen.has(id)) continue;
    seen.add(id);
    const e = byId.get(id);
    if (e) for (const o of outputsOf(e)) stack.push(o.target);
  }
  return [...byId.values()].filter((e): e is Detector => e.kind === 'detector' && seen.has(e.id));
}

/** A detector no atom reaches: its background alone. */
function emptyDetector(det: Detector, epsilon: number): DetectorResult {
  const counts = countsIn(det.background, det.dwell);
  const sb = signalToBackground(0, det.background);
  return {
    id: det.id, yield: 0, rate: det.background, counts, sigma: countSigma(counts), signal: 0, background: det.background, dwell: det.dwell,
    ...(Number.isFinite(sb) ? { signalToBackground: sb } : {}),
    timeToPrecision: { epsilon },
  };
}

const zeroMatrices = new WeakMap<CMat, boolean>();
/** True when every entry of h is 0, kept with h (the species' Hamiltonians are cached by field). */
function isZeroMatrix(h: CMat): boolean {
  let z = zeroMatrices.get(h);
  if (z === undefined) {
    z = h.re.every((x) => x === 0) && h.im.every((x) => x === 0);
    zeroMatrices.set(h, z);
  }
  return z;
}
