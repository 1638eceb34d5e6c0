/**
 * Evaluation reuse (docs/design.md, "Evaluation reuse"): the evaluations of one compiled line that a scan makes
 * differ in one or two set-points, and the walk up to the element that holds them is the same at every point.
 *
 * The state arriving at an element along a path depends only on the oven, the species, the ambient field and the
 * elements before it on that path. An `EvaluationSession` (RunOptions.session) keeps a few recorded walks: a walk
 * recorded at a cut element C is the sequence of what the walk did outside C's region (the elements that only paths
 * through C reach), in order — the leaves it ended, its warnings, the positions it placed, the lost flux it added,
 * the merged sub-beams, the Hermiticity and positivity of its averages, the averages it used — and, at each arrival
 * at C, the state and the walk (or the bundle of paths) that arrived. A later run whose line has the same objects
 * outside C's region (`lineWithValuesFrom` keeps the objects of every part it did not read again) replays that
 * record: it applies the recorded effects in the recorded order and walks C's region itself from each recorded
 * arrival. Each effect lands in the same order as in a walk of the whole line, and every number the region computes
 * starts from the same state objects, so the run is the same bit for bit as one that walked everything.
 *
 * A cut qualifies when something stands before it, its region is closed (no element in it is reached by a path that
 * avoids C), no RF flipper lies outside it and no field twist outside it has C behind it (those walk the subtree behind
 * them more than once and read its leaves; a twist whose subtree does not hold C is walked whole within one segment,
 * and only its last grid's leaves, warnings, lost flux and sampled error reach the record). Where the changed element's
 * own region does not qualify (a twist before it), the smallest qualifying region that holds it is recorded (the
 * twist's). Where a
 * magnet outside the region sorts into sub-beams, its merging compares them at the planes behind it, so the record
 * also needs the region's gaps and lengths unchanged. A run that finds no record that holds walks the whole line and
 * records it at the element whose set-points changed most often from one evaluation to the next (a scan's inner
 * parameter).
 */
import type { Beamline, Element } from '../beamline/types.ts';
import { lengthOf, outputsOf } from '../beamline/elements/registry.ts';
import { type LineWithValues, type ParameterizedLine, lineWithValuesFrom } from '../beamline/parameters.ts';
import type { Problem } from '../beamline/types.ts';
import type { Averaged } from './average.ts';
import type { FinePath } from './detector-plane.ts';
import { checkLeafCount } from './leaf.ts';
import type { Member } from './merge.ts';
import type { State } from './nodes.ts';
import type { Walk, WalkCtx } from './steps/step.ts';
import { type WalkCut, setWalkCut, visit, visitBundle } from './walk.ts';

/**
 * What one run walked in its cut's region (`EvaluationSession.probe`, set by the caller before the run): the cut and,
 * for each arrival in the walk's order, its isotope's context, the arriving state and walk, and the paths the region's
 * walk from it ended (scan.ts forms the other points of a row from these: batch.ts).
 */
export interface RegionProbe {
  cut: string | null;
  /** False where a bundle of sub-beams arrived: its members are not listed. */
  plain: boolean;
  arrivals: { ctx: WalkCtx; st: State; walk: Walk; leaves: FinePath[] }[];
}

/** What runLine asks of RunOptions.session: a walker for the line, or undefined to walk it plainly. */
export interface WalkSession {
  walker(line: Beamline): Walker | undefined;
}

/** Walks one run's line for each isotope, then learns that the walk completed. */
export interface Walker {
  walk(ctx: WalkCtx, isotope: number, st0: State, walk0: Walk): void;
  done(): void;
}

/** The recorded walks a session keeps (a scan's row needs one; a second parameter's rows one each in turn). */
const MAX_RECORDS = 4;

/** What a walk did between two arrivals at the cut (or before the first, or after the last). */
interface Segment {
  leaves: FinePath[];
  warnings: string[];
  positions: [string, { entrance: number; exit: number }][];
  /** The lost flux added, each addition on its own (their sum depends on the order). */
  lost: number[];
  hermiticity: number;
  positive: boolean;
  mergedCount: number;
  mergedFraction: number;
  mergedAt: string[];
  blocked: string[];
  sampledNodes: number;
  /** What field twists in the segment added to the sampled error, each on its own, and the grids they left unconverged. */
  sampledErrors: number[];
  unconverged: [string, { error: number; speeds: number }][];
  /** The averages used, in order (their quadrature nodes count once per run, average.ts CharCache.use). */
  averages: Averaged[];
}

type Arrival = { st: State; walk: Walk; members?: undefined } | { members: readonly Member[] };

interface IsotopeLog {
  /** One more segment than arrivals: segment k comes before arrival k. */
  segments: Segment[];
  arrivals: Arrival[];
}

interface Recording {
  readonly cut: string;
  readonly line: Beamline;
  readonly outside: readonly number[];
  readonly inside: readonly number[];
  /** A magnet outside sorts into sub-beams: the region's gaps and lengths must be the recorded ones. */
  readonly planesMatter: boolean;
  readonly isotopes: IsotopeLog[];
}

interface Region {
  /** The elements reached from the oven by paths that avoid the cut (by index). */
  readonly outside: number[];
  /** The cut and every element only paths through it reach. */
  readonly inside: number[];
}

/**
 * The recorded walks of one compiled line (bounded: MAX_RECORDS) and, for `lineAt`, the last line read with its
 * values. Pass it as RunOptions.session to runLine or plan.ts `evaluate`; scan.ts keeps one per plan.
 */
export class EvaluationSession implements WalkSession {
  private ids: string[] | null = null;
  private outs: number[][] = [];
  private kinds: string[] = [];
  private ovenTo = -1;
  private readonly regions = new Map<number, Region | null>();
  private prev: Beamline | null = null;
  private changes = new Int32Array(0);
  private records: Recording[] = [];
  private read: { source: ParameterizedLine; last: LineWithValues | undefined; kept: Map<string, Element> } | null = null;
  /** How many runs replayed a record and how many recorded one (for tests and the benchmark); `batched`: points a scan formed without a run (batch.ts). */
  readonly stats = { replayed: 0, recorded: 0, plain: 0, batched: 0 };
  /** Where set, the next run lists what it walked in its cut's region here (RegionProbe). */
  probe: RegionProbe | null = null;

  /** The line of `source` at these values, read again only where they differ from the last line this session read. */
  lineAt(source: ParameterizedLine, values: ReadonlyMap<string, number> | Readonly<Record<string, number>>):
    { ok: true; line: Beamline } | { ok: false; problems: Problem[] } {
    if (this.read?.source !== source) this.read = { source, last: undefined, kept: new Map() };
    const r = lineWithValuesFrom(source, this.read.last, values, this.read.kept);
    if (!r.ok) return r;
    this.read.last = r.value;
    return { ok: true, line: r.value.line };
  }

  walker(line: Beamline): Walker | undefined {
    if (!this.sameStructure(line)) return this.plain();
    const prev = this.prev;
    this.prev = line;
    if (prev && sameTop(prev, line)) {
      for (let k = 0; k < line.elements.length; k++) if (line.elements[k] !== prev.elements[k]) this.changes[k]++;
    }
    let best: Recording | undefined;
    for (const r of this.records) if (holds(r, line) && (!best || r.outside.length > best.outside.length)) best = r;
    if (best) {
      this.records = [best, ...this.records.filter((r) => r !== best)];
      this.stats.replayed++;
      return new Replayer(best, this.probe);
    }
    const cut = this.cutToRecord();
    if (cut === undefined) return this.plain();
    const region = this.regions.get(cut)!;
    this.stats.recorded++;
    return new Recorder(this, line, this.ids![cut], region, this.probe);
  }

  /**
   * `points` evaluations of lines that differ from the last one walked in the cut's element only, formed without a run
   * (batch.ts): counted as changes of that element, as their runs would have been, so the next record is made there.
   */
  noteBatched(cut: string, points: number): void {
    const k = this.ids?.indexOf(cut) ?? -1;
    if (k >= 0) this.changes[k] += points;
    this.stats.batched += points;
  }

  /** A finished recording: kept first, the oldest beyond MAX_RECORDS dropped. */
  keep(r: Recording): void {
    this.records = [r, ...this.records].slice(0, MAX_RECORDS);
  }

  private plain(): undefined {
    this.stats.plain++;
    return undefined;
  }

  /** The element changed most often between evaluations (later in the line on a tie) whose region qualifies. */
  private cutToRecord(): number | undefined {
    const order = [...this.changes.keys()].filter((k) => this.changes[k] > 0).sort((a, b) => this.changes[b] - this.changes[a] || b - a);
    for (const k of order) {
      if (this.region(k)) return k;
      // behind a field twist the element's own region does not qualify: the smallest region that holds it and does
      const around = this.enclosing(k);
      if (around !== undefined) return around;
    }
    return undefined;
  }

  /** The element other than k with the smallest qualifying region that holds k (a twist before k), if any. */
  private enclosing(k: number): number | undefined {
    let best: number | undefined, size = Infinity;
    for (let c = 0; c < this.outs.length; c++) {
      if (c === k || !this.reaches(c, k)) continue;
      const r = this.region(c);
      if (r && r.inside.length < size && r.inside.includes(k)) {
        best = c;
        size = r.inside.length;
      }
    }
    return best;
  }

  /** True when the line has this session's elements in this order (the first line sets them). */
  private sameStructure(line: Beamline): boolean {
    const els = line.elements;
    if (!this.ids) {
      this.ids = els.map((e) => e.id);
      const at = new Map(this.ids.map((id, k) => [id, k]));
      this.outs = els.map((e) => outputsOf(e).map((o) => at.get(o.target)).filter((k): k is number => k !== undefined));
      this.kinds = els.map((e) => e.kind);
      this.ovenTo = at.get(line.oven.to) ?? -1;
      this.changes = new Int32Array(els.length);
      return true;
    }
    if (els.length !== this.ids.length) return false;
    for (let k = 0; k < els.length; k++) if (els[k].id !== this.ids[k]) return false;
    return true;
  }

  /** True when element `to` lies behind element `from` (on some path from it). */
  private reaches(from: number, to: number): boolean {
    const seen = new Uint8Array(this.outs.length);
    const stack = [...this.outs[from]];
    while (stack.length) {
      const k = stack.pop()!;
      if (k === to) return true;
      if (seen[k]) continue;
      seen[k] = 1;
      stack.push(...this.outs[k]);
    }
    return false;
  }

  /** The region of cut `c`, or null where it does not qualify (module doc). */
  private region(c: number): Region | null {
    let r = this.regions.get(c);
    if (r !== undefined) return r;
    const n = this.outs.length;
    const out = new Uint8Array(n);
    const stack = this.ovenTo >= 0 ? [this.ovenTo] : [];
    let reached = this.ovenTo === c;
    while (stack.length) {
      const k = stack.pop()!;
      if (k === c) {
        reached = true;
        continue;
      }
      if (out[k]) continue;
      out[k] = 1;
      for (const t of this.outs[k]) stack.push(t);
    }
    // closed: nothing behind the cut is reached by another path; no RF flipper or twist outside
    let ok = reached;
    const seen = new Uint8Array(n);
    const behind = [...this.outs[c]];
    while (ok && behind.length) {
      const k = behind.pop()!;
      if (out[k] || k === c) ok = false;
      else if (!seen[k]) {
        seen[k] = 1;
        behind.push(...this.outs[k]);
      }
    }
    const outside: number[] = [], inside: number[] = [];
    for (let k = 0; k < n; k++) {
      if (!out[k]) inside.push(k);
      else {
        outside.push(k);
        // an RF flipper walks what follows it once per entry phase; a twist walks it on each of its grids and keeps
        // the last: a record cannot cut into either, but a twist whose subtree does not hold the cut is one segment
        if (this.kinds[k] === 'rf' || (this.kinds[k] === 'twist' && this.reaches(k, c))) ok = false;
      }
    }
    // nothing before the cut (it is the oven's own target): a record would save no walk
    r = ok && outside.length > 0 ? { outside, inside } : null;
    this.regions.set(c, r);
    return r;
  }
}

/** The parts of two lines of one session other than the elements are the same objects. */
function sameTop(a: Beamline, b: Beamline): boolean {
  for (const key of Object.keys(b) as (keyof Beamline)[]) if (key !== 'elements' && a[key] !== b[key]) return false;
  return Object.keys(a).length === Object.keys(b).length;
}

/** A record holds for a line whose objects outside the cut's region are the recorded ones (module doc). */
function holds(r: Recording, line: Beamline): boolean {
  if (r.line === line) return true;
  if (!sameTop(r.line, line)) return false;
  const now = line.elements, then = r.line.elements;
  for (const k of r.outside) if (now[k] !== then[k]) return false;
  if (r.planesMatter) {
    for (const k of r.inside) {
      if (now[k] !== then[k] && (now[k].gap !== then[k].gap || lengthOf(now[k]) !== lengthOf(then[k]))) return false;
    }
  }
  return true;
}

/** A magnet that sorts into sub-beams (a gradient or a pole-gap aperture; steps/magnet.ts), whose merging reads the planes behind it. */
function sortsSubBeams(e: Element): boolean {
  return e.kind === 'magnet' && (e.gradient !== undefined || e.aperture !== undefined);
}

function emptySegment(): Segment {
  return {
    leaves: [], warnings: [], positions: [], lost: [], hermiticity: 0, positive: true,
    mergedCount: 0, mergedFraction: 0, mergedAt: [], blocked: [], sampledNodes: 0, sampledErrors: [], unconverged: [], averages: [],
  };
}

/** Walks the whole line and records it at the cut. */
class Recorder implements Walker, WalkCut {
  ctx!: WalkCtx;
  private log: IsotopeLog = { segments: [], arrivals: [] };
  private readonly isotopes: IsotopeLog[] = [];
  private usable = true;
  private close: (() => void) | null = null;

  constructor(private readonly session: EvaluationSession, private readonly line: Beamline, readonly id: string, private readonly region: Region,
    private readonly probe: RegionProbe | null) {
    if (probe) probe.cut = id;
  }

  walk(ctx: WalkCtx, isotope: number, st0: State, walk0: Walk): void {
    this.ctx = ctx;
    this.log = { segments: [], arrivals: [] };
    this.isotopes[isotope] = this.log;
    this.open();
    const before = setWalkCut(this);
    try {
      visit(ctx, ctx.line.oven.to, st0, walk0);
    } finally {
      setWalkCut(before);
      this.close?.();
    }
  }

  done(): void {
    if (!this.usable) return;
    const planesMatter = this.region.outside.some((k) => sortsSubBeams(this.line.elements[k]));
    this.session.keep({ cut: this.id, line: this.line, outside: this.region.outside, inside: this.region.inside, planesMatter, isotopes: this.isotopes });
  }

  reach(ctx: WalkCtx, st: State, walk: Walk): void {
    this.close?.();
    this.log.arrivals.push({ st, walk });
    const before = setWalkCut(null);
    const n0 = ctx.leaves.length;
    try {
      visit(ctx, this.id, st, walk);
    } finally {
      setWalkCut(before);
    }
    this.probe?.arrivals.push({ ctx, st, walk, leaves: ctx.leaves.slice(n0) });
    this.open();
  }

  reachBundle(ctx: WalkCtx, members: readonly Member[]): void {
    this.close?.();
    this.log.arrivals.push({ members });
    if (this.probe) this.probe.plain = false;
    const before = setWalkCut(null);
    try {
      visitBundle(ctx, this.id, members);
    } finally {
      setWalkCut(before);
    }
    this.open();
  }

  /** Starts a segment: what the walk adds from here on is written into it as well (module doc). */
  private open(): void {
    const ctx = this.ctx;
    const seg = emptySegment();
    this.log.segments.push(seg);
    const leaves0 = ctx.leaves.length;
    const keys0 = new Set(Object.keys(ctx.positions));
    const h0 = { ...ctx.hermiticity };
    ctx.hermiticity.max = 0;
    ctx.hermiticity.positive = true;
    const count0 = ctx.merged.count, fraction0 = ctx.merged.fraction;
    ctx.merged.fraction = 0;
    const nodes0 = ctx.sampled.nodes;
    const warnings = ctx.warnings, at = ctx.merged.at, blocked = ctx.blocked;
    warnings.add = logged(warnings, seg.warnings);
    at.add = logged(at, seg.mergedAt);
    blocked.add = logged(blocked, seg.blocked);
    // each addition to the lost flux on its own (and to a twist's sampled error), and a twist's unconverged grids as
    // they are set
    const restoreLost = loggedSum(ctx.lost, 'spin', seg.lost);
    const restoreError = loggedSum(ctx.sampled, 'error', seg.sampledErrors);
    const unconverged = ctx.sampled.unconverged;
    unconverged.set = (k, v) => {
      seg.unconverged.push([k, v]);
      return Map.prototype.set.call(unconverged, k, v) as typeof unconverged;
    };
    ctx.chi.trail = seg.averages;
    this.close = () => {
      this.close = null;
      ctx.chi.trail = null;
      restoreLost();
      restoreError();
      delete (unconverged as { set?: unknown }).set;
      delete (warnings as { add?: unknown }).add;
      delete (at as { add?: unknown }).add;
      delete (blocked as { add?: unknown }).add;
      if (ctx.leaves.length < leaves0) this.usable = false;
      seg.leaves = ctx.leaves.slice(leaves0);
      for (const k of Object.keys(ctx.positions)) if (!keys0.has(k)) seg.positions.push([k, ctx.positions[k]]);
      seg.hermiticity = ctx.hermiticity.max;
      seg.positive = ctx.hermiticity.positive;
      ctx.hermiticity.max = Math.max(h0.max, seg.hermiticity);
      ctx.hermiticity.positive = h0.positive && seg.positive;
      seg.mergedCount = ctx.merged.count - count0;
      seg.mergedFraction = ctx.merged.fraction;
      ctx.merged.fraction = Math.max(fraction0, seg.mergedFraction);
      seg.sampledNodes = ctx.sampled.nodes - nodes0;
    };
  }
}

/**
 * A number that the walk only adds to (`obj[key] += x`), made to log each addition: inside the segment the walk reads
 * 0, so it writes the addition itself, which is kept in `log` and added to the value. Returns what puts the plain
 * property back, with the sum of the additions in their order.
 */
function loggedSum<K extends string>(obj: Record<K, number>, key: K, log: number[]): () => void {
  let value = obj[key];
  Object.defineProperty(obj, key, {
    configurable: true, enumerable: true,
    get: () => 0,
    set: (x: number) => {
      log.push(x);
      value += x;
    },
  });
  return () => Object.defineProperty(obj, key, { configurable: true, enumerable: true, writable: true, value });
}

/** A set's `add` that also writes each value added into `log` (an own property over Set.prototype.add, removed after). */
function logged<T>(set: Set<T>, log: T[]): (v: T) => Set<T> {
  return (v: T) => {
    log.push(v);
    return Set.prototype.add.call(set, v) as Set<T>;
  };
}

/** Replays a record: its segments applied, the cut's region walked from each recorded arrival. */
class Replayer implements Walker {
  constructor(private readonly r: Recording, private readonly probe: RegionProbe | null) {
    if (probe) probe.cut = r.cut;
  }

  walk(ctx: WalkCtx, isotope: number): void {
    const log = this.r.isotopes[isotope];
    const probe = this.probe;
    for (let k = 0; k < log.segments.length; k++) {
      apply(ctx, log.segments[k]);
      const a = log.arrivals[k];
      if (!a) continue;
      if (a.members) {
        if (probe) probe.plain = false;
        visitBundle(ctx, this.r.cut, a.members);
      } else {
        const n0 = ctx.leaves.length;
        visit(ctx, this.r.cut, a.st, a.walk);
        probe?.arrivals.push({ ctx, st: a.st, walk: a.walk, leaves: ctx.leaves.slice(n0) });
      }
    }
  }

  done(): void {}
}

/** A recorded segment's effects on this run, in their order within each kind (module doc). */
function apply(ctx: WalkCtx, s: Segment): void {
  for (const l of s.leaves) {
    checkLeafCount(ctx, l.path, l.target);
    ctx.leaves.push(l);
  }
  for (const w of s.warnings) ctx.warnings.add(w);
  for (const [k, p] of s.positions) if (!ctx.positions[k]) ctx.positions[k] = p;
  for (const x of s.lost) ctx.lost.spin += x;
  ctx.hermiticity.max = Math.max(ctx.hermiticity.max, s.hermiticity);
  if (!s.positive) ctx.hermiticity.positive = false;
  ctx.merged.count += s.mergedCount;
  ctx.merged.fraction = Math.max(ctx.merged.fraction, s.mergedFraction);
  for (const a of s.mergedAt) ctx.merged.at.add(a);
  for (const b of s.blocked) ctx.blocked.add(b);
  ctx.sampled.nodes += s.sampledNodes;
  for (const x of s.sampledErrors) ctx.sampled.error += x;
  for (const [k, v] of s.unconverged) ctx.sampled.unconverged.set(k, v);
  for (const a of s.averages) ctx.chi.use(a);
}
