/**
 * A row of a scan at once (docs/design.md, "Evaluation reuse", "A row at once"): the points of a row differ only
 * in the inner parameter, a set-point of one magnet C. Where C is an ideal sorter (no gradient that deflects, no
 * pole-gap aperture) whose ports end at once in detectors or stops, and the line has no detector-plane geometry,
 * C's region is C and those leaves: a point's numbers differ from those of the row's first run only in the yields
 * of C's ports. The run of the row's first point (through the evaluation session, replay.ts) lists the states that
 * arrive at C (RegionProbe); from each the speed-averaged density matrix ρ̄ = W Ā W† is formed once (the average Ā
 * the arriving state keeps, shared by every Kraus selection of it), and a port's yield at any value of the inner
 * parameter is Tr(P ρ̄) with P the port's projector at that value — one pass over d² numbers, the projectors of each
 * value formed once per scan and kept across rows. The leaves, detectors (rates, counts, σ), the lost fraction and
 * the warnings are assembled as the detector plane (detector-plane.ts) and runLine (run.ts) assemble them, from
 * the row's first run: the parts outside C's region are that run's own numbers.
 *
 * Tr(P ρ̄) equals the run's Tr(L†L · B Ā B†) (average.ts) up to rounding: a batched point equals a run of its line
 * to 1e-14 of the oven's flux (each rate to 1e-14 of flux × efficiency), not bit for bit. The row's first run is
 * checked against its own numbers so formed before any point is batched; a value where C sorts differently (other
 * ports or routes), warns (sorting, axis), needs the drift before C, or where the reader refuses it, or a point
 * whose sums fail the balance invariant, is run on its own. Everything else (RF flippers and twists before C, sub-
 * beams, geometry, a second parameter in C's own part) leaves the row to the plain path.
 */
import type { Beamline, Detector, Magnet } from '../beamline/types.ts';
import { lengthOf } from '../beamline/elements/registry.ts';
import type { CMat } from '../physics/cmat.ts';
import { IdentityCache } from '../physics/cache.ts';
import { countSigma, countsIn } from './counting.ts';
import { roundOffFloor } from './detector-plane.ts';
import { blocksSandwich } from './blocks.ts';
import { CharCache, specAverageBasis } from './average.ts';
import { isNodes, type State } from './nodes.ts';
import type { EvaluationSession, RegionProbe } from './replay.ts';
import type { RunResult } from './result.ts';
import { driftCommutesWithSort, getSorting, portComponents, routeOf } from './sorting.ts';
import type { SpecState } from './spectral.ts';
import type { Component, Sorting } from './system.ts';
import { hasGeometry, type FinePath } from './subbeam.ts';
import type { WalkCtx } from './steps/step.ts';
import type { ScanDetector, ScanLeaf, ScanPoint } from './scan.ts';

/** How far a batched number may be from the run's (in units of its scale: 1 for a yield, flux × efficiency for a rate). */
export const BATCH_TOLERANCE = 1e-14;

// the helpers called per point, bound once (an imported binding is read through a getter per call where the module
// system wraps imports, as tsx does)
const floorOf = roundOffFloor, countsOf = countsIn, sigmaOf = countSigma;

/** Runs of a row tried as its template: the first walks and records, the next replays (replay.ts). */
const MAX_TRIES = 3;
/** Points handed back to be run, beyond which (and four times those formed) a scan stops batching. */
const MAX_MISSES = 8;

/** One port of C at one value: its label, where it ends, and its projector packed for Tr(P ρ̄) (pack below). */
interface PortAt {
  readonly label: string;
  readonly to: string;
  readonly pack: Float64Array;
  /** The port holds one state: a state in the lab basis is projected on its diagonal there (spectral.ts specProjectDiag). */
  readonly single: boolean;
  /** The last port of a sorting whose projectors sum to the identity: its yield is Tr ρ̄ less the others' (complete). */
  readonly rest: boolean;
}

/** C at one value of the inner parameter, per isotope (by the spin system's key): its ports, or null (run on its own). */
interface ValueAt {
  readonly element: Magnet | null;
  readonly ports: Map<string, readonly PortAt[] | null>;
  /** The last isotope's key looked up and its ports (most lines have one isotope). */
  lastKey: string;
  lastPorts: readonly PortAt[] | null;
}

/** A contribution to a result leaf's yield, in the detector plane's order: a fixed number, or arrival `a`'s port `p`. */
interface Part { readonly a: number; readonly p: number; readonly c: number }

interface LeafPlan {
  readonly path: string[];
  readonly target: string;
  readonly parts: readonly Part[];
  readonly eff: number;
  /** Index into the template's detectors, or −1 for a stop. */
  readonly det: number;
}

/** What a row's first run gives every other point of the row. */
interface Template {
  readonly row: number;
  readonly line: Beamline;
  /** Per arrival at C: its isotope's context, ρ̄ packed, its isotope's fraction and whether its state is in the lab basis (mu null). */
  readonly arrivals: readonly { ctx: WalkCtx; q: Float64Array; trace: number; fraction: number; lab: boolean }[];
  /** The labels and targets of C's ports at the row's first value, per isotope key. */
  readonly ports: Map<string, readonly PortAt[]>;
  readonly leaves: readonly LeafPlan[];
  readonly detectors: readonly Detector[];
  readonly flux: number;
  readonly warnings: number[] | undefined;
  /** Yields of each arrival's ports (scratch). */
  readonly vars: Float64Array;
  readonly stride: number;
  /** Each detector's yield and signal as its leaves add them (scratch). */
  readonly detYield: Float64Array;
  readonly detSignal: Float64Array;
  /** runLine's lost fraction as the balance invariant sums it, and as the result reports it. */
  readonly lostTotal: number;
  readonly lost: number;
}

/**
 * The batch of one scan: built when the scan's inner parameter belongs to an ideal sorter whose ports end in detectors
 * or stops, the outer one (if any) to another part of the line, and the line has no detector-plane geometry; null
 * otherwise (RowBatch.applies: a host that deals a scan's points out to workers checks it first).
 */
export class RowBatch {
  private template: Template | null = null;
  private readonly values: (ValueAt | undefined)[] = [];

  private constructor(
    private readonly session: EvaluationSession,
    private readonly c: number,
    private readonly cut: string,
    private readonly read: (j: number, outer: number | undefined) => Beamline | null,
  ) {}

  /** A batch for a scan whose inner parameter lies in element `c` (a magnet), the outer one elsewhere; else null. */
  static of(session: EvaluationSession, line: Beamline, innerPath: string, outerPath: string | undefined,
    read: (j: number, outer: number | undefined) => Beamline | null): RowBatch | null {
    if (!RowBatch.applies(line, innerPath, outerPath)) return null;
    const c = elementIndex(innerPath);
    return new RowBatch(session, c, line.elements[c].id, read);
  }

  /** True when a scan with these parameters may form points as a batch (a host that splits a scan's points checks it). */
  static applies(line: Beamline, innerPath: string, outerPath: string | undefined): boolean {
    const c = elementIndex(innerPath);
    const e = line.elements[c];
    if (c < 0 || e?.kind !== 'magnet' || !idealSorter(e)) return false;
    // C's ports at each value are kept across rows: the outer parameter may not move C, or the drift before it
    if (outerPath !== undefined && (elementIndex(outerPath) === c || outerPath.startsWith('ambient'))) return false;
    // every port of C ends in a detector or a stop as written (a value that routes otherwise is run on its own)
    const kinds = new Map(line.elements.map((x) => [x.id, x.kind]));
    if (Object.values(e.ports).some((to) => to !== 'stop' && kinds.get(to) !== 'detector')) return false;
    // no detector-plane geometry anywhere in the line (an orifice, a slit, a deflecting magnet or a pole gap, a window)
    if (line.oven.aperture) return false;
    return line.elements.every((x) => x.kind !== 'slit' && (x.kind !== 'magnet' || idealSorter(x)) && (x.kind !== 'detector' || !x.window));
  }

  private tries = { row: -1, count: 0 };
  /** Points formed and points handed back to be run; `off` once the values mostly need runs of their own. */
  private formed = 0;
  private missed = 0;
  private off = false;

  /** True when the row's later points can be formed from a run of this row. */
  ready(row: number): boolean {
    return this.template?.row === row;
  }

  /** True while a run of this row may still serve its later points (a few runs of a row are tried, not every one). */
  trying(row: number): boolean {
    if (this.tries.row !== row) this.tries = { row, count: 0 };
    return !this.off && this.template?.row !== row && this.tries.count < MAX_TRIES;
  }

  /** Arms the session to list what the next run walks in its cut's region. */
  arm(): RegionProbe {
    const probe: RegionProbe = { cut: null, plain: true, arrivals: [] };
    this.session.probe = probe;
    return probe;
  }

  /**
   * After the run of point (row, j) with the probe armed: its result, sorted paths and flux, and the point the scan
   * made of it. The row's later points are batched where the run walked C's region from recorded arrivals and the
   * numbers formed as a batch agree with the run's.
   */
  learn(probe: RegionProbe, row: number, j: number, outer: number | undefined, r: RunResult | null, fines: readonly FinePath[] | null, flux: number, point: ScanPoint): void {
    this.session.probe = null;
    this.tries.count++;
    if (!r || !fines || !probe.plain || probe.cut !== this.cut || probe.arrivals.length === 0) return;
    const line = probe.arrivals[0].ctx.line;
    const value = this.valueAt(j, outer, line);
    if (!value?.element) return;
    if (fines.some(hasGeometry)) return;
    const t = buildTemplate(probe, row, line, value, fines, flux, point);
    if (!t) return;
    // the run's own numbers, formed as a batch, must be the run's
    const p = this.form(t, value, point.index, point.values);
    if (!p || !samePoint(p, point, t)) return;
    this.template = t;
  }

  /** Point (row, j) formed from the row's first run, or null where it must be run on its own. */
  point(row: number, j: number, outer: number | undefined, index: number[], values: number[]): ScanPoint | null {
    const t = this.template;
    if (!t || t.row !== row || this.off) return null;
    const v = this.valueAt(j, outer, t.line);
    const p = v?.element ? this.form(t, v, index, values) : null;
    if (p) {
      this.formed++;
      this.session.noteBatched(this.cut, 1);
    } else if (++this.missed >= MAX_MISSES && this.missed > 4 * this.formed) {
      // most values need a run of their own (C warns or sorts otherwise there): the scan stops reading them twice
      this.off = true;
    }
    return p;
  }

  /** C at inner value j: read once per scan (the outer parameter lies in another part), its ports per isotope on demand. */
  private valueAt(j: number, outer: number | undefined, line: Beamline): ValueAt | null {
    let v = this.values[j];
    if (!v) {
      const read = this.read(j, outer);
      const e = read?.elements[this.c];
      const e0 = line.elements[this.c];
      const ok = e !== undefined && e.kind === 'magnet' && e.id === e0.id && idealSorter(e) && e.gap === e0.gap && lengthOf(e) === lengthOf(e0);
      v = { element: ok ? e : null, ports: new Map(), lastKey: '', lastPorts: null };
      this.values[j] = v;
    }
    return v;
  }

  /** The point's numbers from the template at value v; null where this value must be run on its own. */
  private form(t: Template, v: ValueAt, index: number[], values: number[]): ScanPoint | null {
    const e = v.element!;
    const vars = t.vars, stride = t.stride;
    for (let a = 0; a < t.arrivals.length; a++) {
      const arr = t.arrivals[a];
      const ports = portsAt(v, arr.ctx, e);
      const ref = t.ports.get(arr.ctx.sys.key);
      if (!ports || !ref || ports.length !== ref.length) return null;
      const q = arr.q;
      let others = 0;
      for (let p = 0; p < ports.length; p++) {
        const port = ports[p];
        if (port.label !== ref[p].label || port.to !== ref[p].to) return null;
        const y = port.rest ? arr.trace - others : packedTrace(port.pack, q);
        // a single state's population is a state of its own there (specProjectDiag), whose positivity the run tests
        if (arr.lab && port.single && !(y >= -1e-15)) return null;
        others += y;
        vars[a * stride + p] = y * arr.fraction;
      }
    }
    // the detector plane without geometry (detector-plane.ts evaluateGeometry), in its order of sums: each detector's
    // yield and signal summed over its leaves in the leaves' order (scratch), its object made once they are known
    const tl = t.leaves, nl = tl.length;
    const leaves: ScanLeaf[] = new Array(nl);
    const dy = t.detYield, ds = t.detSignal, nd = dy.length;
    dy.fill(0);
    ds.fill(0);
    let total = 0;
    for (let i = 0; i < nl; i++) {
      const l = tl[i], parts = l.parts;
      let y = 0;
      for (let k = 0; k < parts.length; k++) {
        const part = parts[k];
        y += part.a < 0 ? part.c : vars[part.a * stride + part.p];
      }
      y = floorOf(y);
      const rate = t.flux * y * l.eff;
      leaves[i] = { path: l.path, target: l.target, yield: y, rate };
      if (l.det >= 0) {
        dy[l.det] += y;
        ds[l.det] += rate;
      }
      total += y;
    }
    const dets: ScanDetector[] = new Array(nd);
    for (let k = 0; k < nd; k++) {
      const det = t.detectors[k], yieldK = dy[k], signal = ds[k];
      const rate = signal + det.background;
      const counts = countsOf(rate, det.dwell);
      const sigma = sigmaOf(counts);
      if (!Number.isFinite(yieldK) || !Number.isFinite(rate) || !Number.isFinite(counts) || !Number.isFinite(sigma)) return null;
      dets[k] = { id: det.id, yield: yieldK, rate, signal, counts, sigma };
    }
    // runLine's balance invariant: a point that fails it warns, and is run on its own
    if (!(Math.abs(total + t.lostTotal - 1) <= 1e-12)) return null;
    const point: ScanPoint = { index, values, detectors: dets, leaves, lost: t.lost };
    if (t.warnings) point.warnings = t.warnings.slice();
    return point;
  }
}

/** The element index of a parameter's JSON path ("elements[3].axis.roll" → 3), or −1. */
function elementIndex(path: string): number {
  const m = /^elements\[(\d+)\]/.exec(path);
  return m ? Number(m[1]) : -1;
}

/** A magnet whose states of one port share one trajectory (steps/magnet.ts: no deflection, no pole gap). */
function idealSorter(e: Magnet): boolean {
  const deflects = e.gradient !== undefined && e.length !== undefined && e.length > 0 && e.gradient !== 0;
  return !deflects && !e.aperture;
}

/**
 * C's ports at value v for the isotope of `ctx`, as its step walks them (steps/magnet.ts): null where the sorting
 * warns, the drift before C is not the identity on what C selects, or a port goes on to anything but a detector or a
 * stop.
 */
function portsAt(v: ValueAt, ctx: WalkCtx, e: Magnet): readonly PortAt[] | null {
  const key = ctx.sys.key;
  if (key === v.lastKey) return v.lastPorts;
  let ports = v.ports.get(key);
  if (ports !== undefined) {
    v.lastKey = key;
    v.lastPorts = ports;
    return ports;
  }
  ports = null;
  // the sorting's and the axis's warnings land in a set of their own: a value that warns is run on its own
  const probe = { ...ctx, seen: new Set<object>(), warnings: new Set<string>() } as WalkCtx;
  try {
    const sorting = getSorting(probe, e);
    const drifts = e.gap > 0 && !ctx.ambientZero && !driftCommutesWithSort(probe, e);
    if (probe.warnings.size === 0 && !drifts) {
      const packed = packedPorts(sorting);
      const out: PortAt[] = [];
      for (let p = 0; p < sorting.ports.length; p++) {
        const label = sorting.ports[p];
        const to = routeOf(e, packed.first[p]);
        if (to !== 'stop' && ctx.byId.get(to)?.kind !== 'detector') {
          out.length = 0;
          break;
        }
        out.push({ label, to, pack: packed.packs[p], single: packed.single[p], rest: packed.complete && p === sorting.ports.length - 1 });
      }
      if (out.length === sorting.ports.length) ports = out;
    }
  } catch {
    ports = null;
  }
  v.ports.set(key, ports);
  v.lastKey = key;
  v.lastPorts = ports;
  return ports;
}

/** A sorting's ports packed (pack), in its order of ports: the same for every line that sorts this way. */
interface PackedPorts {
  readonly packs: readonly Float64Array[];
  /** The first state of each port (its route, steps/magnet.ts routeOf). */
  readonly first: readonly Component[];
  readonly single: readonly boolean[];
  /** The projectors sum to the identity (complete): the last port's yield is Tr ρ̄ less the others'. */
  readonly complete: boolean;
}

/** The packed ports of a sorting, kept with it (sorting.ts keeps a sorting per magnet setting across scans and plans). */
const packedBySorting = new IdentityCache<Sorting, PackedPorts>('packed ports of a sorting');

function packedPorts(sorting: Sorting): PackedPorts {
  let p = packedBySorting.get(sorting);
  if (!p) {
    const comps = sorting.ports.map((label) => portComponents(sorting, label));
    const packs = comps.map((cs) => pack(cs.map((c) => c.vector)));
    p = { packs, first: comps.map((cs) => cs[0]), single: comps.map((cs) => cs.length === 1), complete: packs.length > 1 && complete(packs) };
    packedBySorting.set(sorting, p);
  }
  return p;
}

/**
 * P = Σ_k |k⟩⟨k| packed for Tr(P Q) with Q Hermitian: the d diagonal entries, then 2 Re P_ij and 2 Im P_ij for
 * i < j (Tr(P Q) = Σ_i P_ii Q_ii + 2 Σ_{i<j} Re(P_ij conj Q_ij)). A projector on a rolled axis is dense.
 */
function pack(vecs: readonly CMat[]): Float64Array {
  const d = vecs[0].rows;
  const out = new Float64Array(d * d);
  let o = d;
  for (let i = 0; i < d; i++) {
    for (const v of vecs) out[i] += v.re[i] * v.re[i] + v.im[i] * v.im[i];
    for (let j = i + 1; j < d; j++) {
      let re = 0, im = 0;
      for (const v of vecs) {
        re += v.re[i] * v.re[j] + v.im[i] * v.im[j];
        im += v.im[i] * v.re[j] - v.re[i] * v.im[j];
      }
      out[o++] = 2 * re;
      out[o++] = 2 * im;
    }
  }
  return out;
}

/** Q packed as P is (pack): Q_ii, then Re Q_ij and Im Q_ij for i < j. */
function packHermitian(q: CMat): Float64Array {
  const d = q.rows;
  const out = new Float64Array(d * d);
  let o = d;
  for (let i = 0; i < d; i++) {
    out[i] = q.re[i * d + i];
    for (let j = i + 1; j < d; j++) {
      out[o++] = 0.5 * (q.re[i * d + j] + q.re[j * d + i]);
      out[o++] = 0.5 * (q.im[i * d + j] - q.im[j * d + i]);
    }
  }
  return out;
}

/** Σ p_i q_i in four running sums (a quarter of the dependent additions; the rounding differs from one sum's by ulps). */
function packedTrace(p: Float64Array, q: Float64Array): number {
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  const n = p.length;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    s0 += p[i] * q[i];
    s1 += p[i + 1] * q[i + 1];
    s2 += p[i + 2] * q[i + 2];
    s3 += p[i + 3] * q[i + 3];
  }
  for (; i < n; i++) s0 += p[i] * q[i];
  return (s0 + s1) + (s2 + s3);
}

/** Tr Q of a packed Q (its first d numbers). */
function packedTraceOf(q: Float64Array): number {
  const d = Math.round(Math.sqrt(q.length));
  let s = 0;
  for (let i = 0; i < d; i++) s += q[i];
  return s;
}

/**
 * True when the ports' projectors sum to the identity (every state of the sorting in one port, an orthonormal set):
 * the last port's yield is then Tr ρ̄ less the others', to a few ulps of Tr ρ̄.
 */
function complete(packs: readonly Float64Array[]): boolean {
  const n = packs[0].length, d = Math.round(Math.sqrt(n));
  for (let k = 0; k < n; k++) {
    let s = 0;
    for (const p of packs) s += p[k];
    if (!(Math.abs(s - (k < d ? 1 : 0)) <= 1e-14)) return false;
  }
  return true;
}

/**
 * ρ̄ = W Ā W† of an arriving spectral state, packed (packHermitian), or null. Ā is the average the state keeps
 * (average.ts); a state in the lab basis whose run selected it only by single states (spectral.ts specProjectDiag)
 * kept none: its average is formed here, on a copy with averages of its own and a cache of its own, so that nothing
 * of the runs changes.
 */
function averagedState(st: State, ctx: WalkCtx): { q: Float64Array; lab: boolean; hermiticity: number } | null {
  if (isNodes(st)) return null;
  const s = st as SpecState;
  let avg = s.shared.avg;
  if (!avg && !s.fac && s.mu === null) avg = specAverageBasis({ W: s.W, mu: null, terms: s.terms, shared: {}, memo: {} }, new CharCache(ctx.dist));
  if (!avg) return null;
  const A = avg.A;
  const lab = s.mu === null, hermiticity = avg.hermiticity;
  if (s.fac) {
    // N = B Ā B† (its Hermitian part, as average.ts traceFactored forms it), then L N L†
    const n = s.shared.lab ?? blocksSandwich(s.fac, A);
    const l = s.fac.left;
    return { q: l ? sandwichPacked(l, n) : packHermitian(n), lab, hermiticity };
  }
  const r = A.rows;
  const h: CMat = { rows: r, cols: r, re: new Float64Array(r * r), im: new Float64Array(r * r) };
  for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
    h.re[a * r + b] = 0.5 * (A.re[a * r + b] + A.re[b * r + a]);
    h.im[a * r + b] = 0.5 * (A.im[a * r + b] - A.im[b * r + a]);
  }
  return { q: sandwichPacked(s.W, h), lab, hermiticity };
}

/** L H L† (L d×m, H m×m Hermitian) packed as packHermitian packs it: T = L H once, then the entries i ≤ j of T L†. */
function sandwichPacked(l: CMat, h: CMat): Float64Array {
  const d = l.rows, m = l.cols;
  const tr = new Float64Array(d * m), ti = new Float64Array(d * m);
  const lr = l.re, li = l.im, hr = h.re, hi = h.im;
  for (let i = 0; i < d; i++) for (let c = 0; c < m; c++) {
    const xr = lr[i * m + c], xi = li[i * m + c];
    if (xr === 0 && xi === 0) continue;
    for (let b = 0; b < m; b++) {
      const yr = hr[c * m + b], yi = hi[c * m + b];
      tr[i * m + b] += xr * yr - xi * yi;
      ti[i * m + b] += xr * yi + xi * yr;
    }
  }
  // Q_ij = Σ_b T_ib conj(L_jb)
  const out = new Float64Array(d * d);
  let o = d;
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      let sr = 0, si = 0;
      for (let b = 0; b < m; b++) {
        const ar = tr[i * m + b], ai = ti[i * m + b], br = lr[j * m + b], bi = -li[j * m + b];
        sr += ar * br - ai * bi;
        si += ar * bi + ai * br;
      }
      if (i === j) out[i] = sr;
      else {
        out[o++] = sr;
        out[o++] = si;
      }
    }
  }
  return out;
}

/** The template of a row from its first run (learn), or null where the row is not batched. */
function buildTemplate(probe: RegionProbe, row: number, line: Beamline, value: ValueAt, fines: readonly FinePath[], flux: number, point: ScanPoint): Template | null {
  const e = value.element!;
  const ports = new Map<string, readonly PortAt[]>();
  const arrivals: Template['arrivals'][number][] = [];
  // each region path: its arrival and port
  const where = new Map<FinePath, [number, number]>();
  let stride = 0;
  for (let a = 0; a < probe.arrivals.length; a++) {
    const { ctx, st, leaves } = probe.arrivals[a];
    const ps = portsAt(value, ctx, e);
    if (!ps || leaves.length !== ps.length) return null;
    const avg = averagedState(st, ctx);
    // a state selected by a single state from a lab-basis one (specProjectDiag) has an average of its own, whose
    // departure from Hermiticity the run reports above 1e-12: such a row is batched only where Ā is Hermitian to 1e-13
    if (!avg || (avg.lab && !(avg.hermiticity <= 1e-13))) return null;
    for (let p = 0; p < ps.length; p++) {
      const f = leaves[p];
      if (f.target !== ps[p].to || f.path[f.path.length - 1] !== `${e.id}:${ps[p].label}`) return null;
      where.set(f, [a, p]);
    }
    ports.set(ctx.sys.key, ps);
    stride = Math.max(stride, ps.length);
    const q = avg.q;
    arrivals.push({ ctx, q, trace: packedTraceOf(q), fraction: ctx.fraction, lab: avg.lab });
  }
  // the result's leaves by path and target, their contributions in the order of the sorted paths
  const byKey = new Map<string, { path: string[]; target: string; parts: Part[]; det: Detector | null }>();
  for (const f of fines) {
    const key = `${f.path.join('|')}→${f.target}`;
    let l = byKey.get(key);
    if (!l) byKey.set(key, (l = { path: [...f.path], target: f.target, parts: [], det: f.detector }));
    const w = where.get(f);
    l.parts.push(w ? { a: w[0], p: w[1], c: 0 } : { a: -1, p: 0, c: f.yieldSpin });
  }
  const detectors: Detector[] = [];
  const leaves: LeafPlan[] = [];
  for (const l of byKey.values()) {
    let det = -1;
    if (l.det) {
      det = detectors.indexOf(l.det);
      if (det < 0) det = detectors.push(l.det) - 1;
    }
    leaves.push({ path: l.path, target: l.target, parts: l.parts, eff: l.det ? l.det.efficiency : 1, det });
  }
  // a detector only blocked sub-beams reach (run.ts emptyDetector) is not formed here: such a row is not batched
  if (!point.detectors || point.detectors.length !== detectors.length || point.detectors.some((d, k) => d.id !== detectors[k].id)) return null;
  // (as runLine sums it: + 0 turns a −0 into 0)
  const lostTotal = probe.arrivals[0].ctx.lost.spin + 0;
  return {
    row, line, arrivals, ports, leaves, detectors, flux, warnings: point.warnings,
    vars: new Float64Array(arrivals.length * stride), stride,
    detYield: new Float64Array(detectors.length), detSignal: new Float64Array(detectors.length),
    lostTotal, lost: lostTotal < 0 && lostTotal > -1e-14 ? 0 : lostTotal,
  };
}

/** σ of two counts near each other: |σa − σb| within |ca − cb| / (σa + σb) and rounding. */
export function sigmaNear(a: { counts: number; sigma: number }, b: { counts: number; sigma: number }): boolean {
  return Math.abs(a.sigma - b.sigma) <= Math.abs(a.counts - b.counts) / Math.max(a.sigma + b.sigma, 1e-300) + 4e-16 * Math.max(a.sigma, b.sigma);
}

/** The numbers of a batched point against the run's (BATCH_TOLERANCE, scaled as the tests scale them). */
function samePoint(p: ScanPoint, q: ScanPoint, t: Template): boolean {
  if (!q.leaves || !q.detectors || p.leaves!.length !== q.leaves.length || p.lost !== q.lost) return false;
  if ((p.warnings ?? []).join() !== (q.warnings ?? []).join()) return false;
  const near = (x: number, y: number, scale: number) => Math.abs(x - y) <= BATCH_TOLERANCE * scale;
  for (let i = 0; i < q.leaves.length; i++) {
    const a = p.leaves![i], b = q.leaves[i], eff = t.leaves[i].eff;
    if (a.target !== b.target || a.path.join() !== b.path.join() || b.captured !== undefined) return false;
    if (!near(a.yield, b.yield, 1) || !near(a.rate, b.rate, t.flux * eff)) return false;
  }
  for (let k = 0; k < q.detectors.length; k++) {
    const a = p.detectors![k], b = q.detectors[k], det = t.detectors[k];
    const scale = t.flux * det.efficiency;
    if (a.id !== b.id || !near(a.yield, b.yield, 1) || !near(a.signal, b.signal, scale) || !near(a.rate, b.rate, scale)) return false;
    // σ = √counts: as near as its counts allow, |√a − √b| = |a − b| / (√a + √b)
    if (!near(a.counts, b.counts, scale * det.dwell) || !sigmaNear(a, b)) return false;
  }
  return true;
}
