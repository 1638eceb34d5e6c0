/**
 * What a run will cost, estimated before it starts (docs/design.md, "What a run costs, before it runs"). The
 * estimate follows the line's routing as the walk will, without any physics: how many sub-beams reach each
 * element (a magnet's port passes its states on, MAX_BUNDLE per port where merging applies; an RF flipper repeats what follows
 * once per entry phase), whether the state there is still spectral or already evaluated speed by speed (from the
 * first field twist on), and how many frequency terms a spectral state carries (each field not along the one
 * before multiplies them by up to d²). Each element adds its work in units of complex multiply-adds, and the
 * sum over the elements, divided by a rate measured on the benchmark machine, is the estimated time.
 *
 * The estimate is an order of magnitude, not a promise: it ranks the elements by their work so that a refusal can
 * name the one that makes a line expensive, and it gives the run's progress a denominator. Above ASK_SECONDS a
 * run stops before it starts unless it is told to go on (`RunOptions.acceptCost`, the app's "Run anyway", the
 * command line's --accept-cost); above REFUSE_SECONDS or REFUSE_BYTES it stops regardless.
 */
import type { Beamline, Element, RfFlipper } from '../beamline/types.ts';
import { outputsOf } from '../beamline/elements/registry.ts';
import { MAX_SPEC_TERMS } from './spectral.ts';
import { MAX_BUNDLE, MAX_UNMERGED } from './merge.ts';
import { RunError } from './errors.ts';
import type { HyperfineParams } from '../physics/hyperfine.ts';
import { speciesSystems } from './system.ts';
import { vecDot, vecNorm, vecUnit, type Vec3 } from '../physics/rotation.ts';
import { MAX_DEPTH } from './walk.ts';

/** Above this estimated time (s) a run asks first. */
export const ASK_SECONDS = 10;
/** Above this estimated time (s) a run is refused even when told to go on. */
export const REFUSE_SECONDS = 3600;
/** Above this estimated memory (bytes) a run is refused even when told to go on. */
export const REFUSE_BYTES = 4e9;
/**
 * Complex multiply-adds a second, measured on the benchmark machine (docs/bench.md, "What a run costs"): the
 * samples' and the long lines' estimated work divided by their measured times, the median taken.
 */
export const OPS_PER_SECOND = 1e8;

/** Speeds at which a subtree behind a field twist is evaluated, over its doubling grids (twist.ts: 2×8 to 2×128 panels of 8 nodes). */
const TWIST_NODES = 2 * 8 * (8 + 16 + 32 + 64 + 128);
/** The work of one path's detector-plane geometry (speed nodes × clipping polygons), in the same units, and of each sub-beam it carries. */
const GEOMETRY_PATH_OPS = 2e6;
const GEOMETRY_MEMBER_OPS = 2e5;

export interface CostEstimate {
  /** Estimated time on the benchmark machine (s). */
  readonly seconds: number;
  /** Estimated peak memory of the states kept (bytes). */
  readonly bytes: number;
  /** Estimated number of paths (leaves) the walk will end: routes through the line, per isotope and RF entry phase. */
  readonly paths: number;
  /** Estimated number of sub-beams (sorted states) along them, at most merge.ts MAX_UNMERGED per port. */
  readonly subBeams: number;
  /** Element steps the walk will take (the run's progress counts them). */
  readonly steps: number;
  /** The element's share of the work (0–1). */
  readonly share: number;
  /** The JSON path and id of the element with the largest share of the work ("elements[4] (T1)"); "the line" ("line") where none has a quarter of it, "the oven" ("oven") for a line without elements. */
  readonly element: string;
  readonly elementId: string;
  /** What makes that element expensive and what to change. */
  readonly reason: string;
}

/** A run stopped before it started by its estimated cost: `hard` where no "go on" lets it run. */
export class CostLimitError extends RunError {
  constructor(message: string, readonly estimate: CostEstimate & { readonly message: string }, readonly hard: boolean) {
    super(message);
  }
}

interface Frame {
  target: string;
  /** Sub-beams travelling together here. */
  m: number;
  /** Paths they make (a leaf each): more than 1 behind an RF flipper's entry phases. */
  p: number;
  /** Speeds each is evaluated at (1: spectral). */
  nodes: number;
  /** Frequency terms of a spectral state. */
  terms: number;
  /** Unit vector of the last field the state crossed (a field along it adds no terms), or null. */
  axis: Vec3 | null;
  depth: number;
}

interface Species { d: number; statesPerPort: number; mjPorts: number; phaseCount: number; defaultGroup: 'mJ' | 'each' }

/** The estimate of a line's run; `params` are the isotopes' spin constants (engine/system.ts SpinSystem.params). */
export function estimateRun(line: Beamline, params: readonly HyperfineParams[]): CostEstimate {
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const indexOf = new Map(line.elements.map((e, i) => [e.id, i]));
  const work = new Map<string, number>();
  let total = 0, bytes = 0, paths = 0, subBeams = 0, steps = 0;
  const add = (id: string, ops: number) => {
    total += ops;
    work.set(id, (work.get(id) ?? 0) + ops);
  };
  const ambient = line.ambient;
  const ambientAxis = unit(ambient);
  const dist = line.oven.velocity.kind;
  // without an oven aperture there is no detector-plane geometry to follow
  const geometry = line.oven.aperture ? 1 : 0;
  // with geometry, a port's sub-beams whose trajectories coincide are merged down to MAX_BUNDLE (merge.ts); without, none are
  const bundle = geometry ? MAX_BUNDLE : MAX_UNMERGED;
  const twistNodes = dist === 'fixed' ? 1 : dist === 'table' ? line.oven.velocity.points.length : TWIST_NODES;
  const sp: Species[] = params.map((p) => ({
    d: (p.i2 + 1) * (p.j2 + 1),
    statesPerPort: p.i2 > 0 ? p.i2 + 1 : 1,   // a hyperfine port by m_J: 2I + 1 states (one by each F, m_F: 1)
    mjPorts: p.j2 + 1,
    // a bare spin's ports are its 2j + 1 states, one each
    defaultGroup: p.i2 > 0 && p.j2 === 1 ? 'mJ' : 'each',
    phaseCount: 2 * (p.i2 + p.j2) + 1,
  }));
  // work of the walk stays finite past the refusal bound; beyond it the count stops early
  const stopAt = REFUSE_SECONDS * OPS_PER_SECOND * 10;
  for (const s of sp) {
    const d = s.d, d2 = d * d, d3 = d2 * d;
    const stack: Frame[] = [{ target: line.oven.to, m: 1, p: 1, nodes: 1, terms: 1, axis: null, depth: 0 }];
    while (stack.length > 0 && total < stopAt) {
      const f = stack.pop()!;
      if (f.target === 'stop') {
        leaf('oven', f, d2);
        continue;
      }
      const e = byId.get(f.target);
      if (!e || f.depth > MAX_DEPTH) continue;
      steps += f.nodes > 1 ? 5 : 1;
      // the drift over the gap in an ambient field
      let terms = f.terms, axis = f.axis;
      if (ambientAxis && e.gap > 0 && f.nodes === 1) ({ terms, axis } = crossField(terms, axis, ambientAxis, d2));
      if (terms === Infinity) continue;
      const per = f.nodes === 1 ? terms * d2 + d3 : f.nodes * d3;
      add(e.id, f.m * per);
      const next = (target: string, extra: Partial<Frame> = {}) => stack.push({ target, m: f.m, p: f.p, nodes: f.nodes, terms, axis, depth: f.depth, ...extra });
      switch (e.kind) {
        case 'detector':
          leaf(e.id, { ...f, terms }, d2);
          break;
        case 'magnet': {
          const byMj = (e.group ?? s.defaultGroup) === 'mJ';
          const k = byMj ? s.statesPerPort : 1;
          // a port the document does not route ends its path there (a leaf to "stop")
          const listed = outputsOf(e);
          const unlisted = Math.max(0, (byMj ? s.mjPorts : s.d) - listed.length);
          // the sub-beams each port passes on
          const m = Math.min(f.m * k, Math.max(bundle, f.m));
          if (unlisted > 0) leaf(e.id, { ...f, p: f.p * unlisted, m: m * unlisted, terms }, d2);
          for (const o of listed) {
            if (o.target === 'stop') {
              leaf(e.id, { ...f, m, terms }, d2);
              continue;
            }
            // the walk counts the magnets along a path (walk.ts refuses one of more than MAX_DEPTH)
            next(o.target, { m, axis: unit(e.axis), depth: f.depth + 1 });
          }
          break;
        }
        case 'field': {
          const c = f.nodes === 1 ? crossField(terms, axis, unit(e.field), d2) : { terms, axis };
          next(e.to, c);
          break;
        }
        case 'twist': {
          if (f.nodes === 1) {
            // from here on speed by speed: the state formed from its terms at every node, the twist's eigenbases per node
            add(e.id, f.m * twistNodes * (terms * d2 + 4 * d3));
            bytes = Math.max(bytes, f.m * twistNodes * d2 * 16 * 2);
            next(e.to, { nodes: twistNodes, terms: 1 });
          } else next(e.to);
          break;
        }
        case 'rf': {
          const n = (e as RfFlipper).phase === undefined ? s.phaseCount : 1;
          const c = f.nodes === 1 ? crossField(terms, axis, null, d2) : { terms, axis };
          if (c.terms !== Infinity) add(e.id, f.m * n * (f.nodes === 1 ? c.terms * d2 : f.nodes * d3));
          next(e.to, { ...c, m: f.m * n, p: f.p * n });
          break;
        }
        default:
          for (const o of outputsOf(e as Element & { to: string })) next(o.target);
      }
    }
  }
  function leaf(id: string, f: Frame, d2: number): void {
    paths += f.p;
    subBeams += f.m;
    add(id, f.m * (f.nodes === 1 ? f.terms * d2 * 8 : f.nodes * d2) + geometry * (f.p * GEOMETRY_PATH_OPS + f.m * GEOMETRY_MEMBER_OPS));
    bytes += f.m * (f.nodes === 1 ? f.terms * d2 * 16 : f.nodes * 8);
  }
  let top = 'oven', topWork = -1;
  for (const [id, w] of work) if (w > topWork) [top, topWork] = [id, w];
  const i = indexOf.get(top);
  const el = i === undefined ? undefined : line.elements[i];
  const share = total > 0 ? topWork / total : 1;
  const reason = !el ? 'the sub-beams of the whole line'
    : share >= 0.25 ? reasonFor(el, line)
      : `the work is spread over the line's elements (none has more than ${Math.max(1, Math.ceil(share * 100))} % of it): ${paths.toLocaleString('en-US')} paths with ${subBeams.toLocaleString('en-US')} sub-beams, each followed to its detector plane; route the ports you do not measure to "stop", or split the line into parts`;
  return {
    seconds: total / OPS_PER_SECOND,
    bytes,
    paths,
    subBeams,
    steps,
    element: !el ? 'the oven' : share >= 0.25 ? `elements[${i}] (${el.id})` : 'the line',
    elementId: !el ? 'oven' : share >= 0.25 ? el.id : 'line',
    share,
    reason,
  };
}

/** The estimate of a line's run, its species resolved here (a RunError where the species cannot be). */
export function estimateLine(line: Beamline): CostEstimate {
  let params: HyperfineParams[];
  try {
    params = speciesSystems(line.species).map((s) => s.system.params);
  } catch (err) {
    throw new RunError((err as Error).message);
  }
  return estimateRun(line, params);
}

/**
 * A state crossing a field along `b`: a field not along the last one multiplies its frequency terms by up to d². Past
 * MAX_SPEC_TERMS the count is Infinity: the walk refuses such a path itself when it gets there (with the exact
 * count, spectral.ts), so its work is not counted here and does not make the run ask first.
 */
function crossField(terms: number, axis: Frame['axis'], b: Frame['axis'], d2: number): { terms: number; axis: Frame['axis'] } {
  if (b && axis && Math.abs(Math.abs(vecDot(b, axis)) - 1) < 1e-9) return { terms, axis };
  // past the bound the walk refuses the path on its own, within seconds, with the exact count (spectral.ts)
  return { terms: terms * d2 > MAX_SPEC_TERMS ? Infinity : terms * d2, axis: b };
}

/** The direction of a field, or null for none. */
function unit(v: Vec3): Vec3 | null {
  return vecNorm(v) > 0 ? vecUnit(v) : null;
}

function reasonFor(e: Element, line: Beamline): string {
  switch (e.kind) {
    case 'twist':
      return line.oven.velocity.kind === 'fixed'
        ? 'the field twist turns the state at every speed'
        : 'behind a field twist every element is evaluated speed by speed, at up to ' + TWIST_NODES.toLocaleString('en-US') + ' speeds of the velocity distribution, with the state formed from all its frequency terms at each; a single speed ("velocity": {"kind": "fixed"}) or a coarse velocity table runs it at those speeds only, and a twist placed before the field regions (or a field region along the twist\'s start) carries fewer terms';
    case 'rf':
      return 'an RF flipper without a "phase" repeats everything behind it once per RF entry phase (a continuous beam); give it a "phase" for a beam locked to the RF, or route fewer ports through it';
    case 'magnet':
      return 'each magnet passes every state of a routed port on as a sub-beam; route the ports you do not measure to "stop"';
    case 'field':
      return 'a field region not along the field before it multiplies the spin state\'s frequency terms; a field along the previous one adds none';
    case 'detector':
      return 'many sub-beams end here, each with its detector-plane geometry; route the ports you do not measure to "stop"';
    default:
      return 'many sub-beams pass it';
  }
}

/** The estimate as a sentence: "about 3 min and 1.2 GB, mostly at elements[4] (T1): …". */
export function describeCost(c: CostEstimate): string {
  const where = c.share >= 0.25 ? `, mostly at ${c.element}` : '';
  return `about ${formatSeconds(c.seconds)} and ${formatBytes(c.bytes)} (${Math.round(c.paths).toLocaleString('en-US')} path${c.paths === 1 ? '' : 's'})${where}: ${c.reason}`;
}

export function formatSeconds(s: number): string {
  if (s < 60) return `${s < 10 ? s.toPrecision(2) : Math.round(s)} s`;
  if (s < 3600) return `${Math.round(s / 60)} min`;
  if (s < 86400 * 2) return `${(s / 3600).toPrecision(2)} h`;
  return `${Math.round(s / 86400).toLocaleString('en-US')} days`;
}

export function formatBytes(b: number): string {
  if (b < 1e6) return `${Math.max(1, Math.round(b / 1e3))} kB`;
  if (b < 1e9) return `${Math.round(b / 1e6)} MB`;
  return `${(b / 1e9).toPrecision(2)} GB`;
}

/**
 * The check a tool that evaluates a line many times (a scan, budget, fit) makes once before its first evaluation: the
 * CostLimitError of the line's estimate, thrown, where it is over the limits; its evaluations then pass `costChecked`.
 */
export function checkCost(line: Beamline, opts: { acceptCost?: boolean }): void {
  const limit = costLimit(estimateLine(line), opts.acceptCost === true);
  if (limit) throw limit;
}

/** The CostLimitError for an estimate over the limits, or null: `accept` lifts the ask limit, not the refusal. */
export function costLimit(c: CostEstimate, accept: boolean): CostLimitError | null {
  const hard = c.seconds > REFUSE_SECONDS || c.bytes > REFUSE_BYTES;
  if (!hard && (accept || c.seconds <= ASK_SECONDS)) return null;
  const text = describeCost(c);
  const message = hard
    ? `${c.element}: this run would take ${text}; that is beyond what the engine starts (${formatSeconds(REFUSE_SECONDS)} or ${formatBytes(REFUSE_BYTES)})`
    : `${c.element}: this run would take ${text}; start it anyway with "Run anyway" in the app or --accept-cost on the command line`;
  return new CostLimitError(message, { ...c, message }, hard);
}
