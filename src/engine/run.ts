/**
 * Runs a beamline: every path from the oven to a leaf, with its velocity-averaged density matrix.
 *
 * The line is walked depth first; a magnet forks the walk into the states it sorts (one rank-one
 * selection |k⟩⟨k| each, docs/design.md "Magnet entry and exit"), so paths that share elements share the
 * work up to the fork. Steps independent of speed act as Kraus operators; propagators keep the state
 * exact frequency by frequency (spectral.ts). A field twist has no such form (its eigenphases are not
 * linear in 1/v): from the first twist on, the subtree is evaluated speed by speed on a Gauss–Legendre
 * grid that is doubled until the leaf yields agree (sampled.ts).
 */
import { BoundedCache, CacheFamily, IdentityCache } from '../physics/cache.ts';
import { type CMat, cmatZeros, cmatCombine, cmatSandwichParts, cmatMulInto, cmatScale, cmatMul, cmatDagger, copyF64, cmatOwn, zeroedF64 } from '../physics/cmat.ts';
import { eigh, expmiHermitian, spectralFunction } from '../physics/eigh.ts';
import { reduceAngle, expNegI } from '../physics/trig.ts';
import { rotationOperator, vecCross, vecDot, vecNorm, vecUnit, type Vec3 } from '../physics/rotation.ts';
import { BOHR_MAGNETON } from '../physics/constants.ts';
import { densityUnpolarized } from '../physics/density.ts';
import { zeroFieldStates, zeemanEigen } from '../physics/hyperfine.ts';
import {
  effusiveDistribution, supersonicDistribution, tableDistribution, oscillationGrid, densityAt, speedRange,
  type VelocityDistribution,
} from '../physics/velocity.ts';
import { collimatedFlux, lookupSpecies } from '../species/index.ts';
import type { Beamline, Element, Magnet, Recombiner, Detector, Rect } from '../beamline/types.ts';
import { speciesSystems, sortStates, projectorOf, SpeciesError, type SpinSystem, type Sorting, type Component } from './system.ts';
import { specInitial, specKraus, specPropagate, type PropagatorFactors, specAverageTrace, specAt, specIsStatic, specProjectDiag, specPhaseWeights, CharCache, type SpecState } from './spectral.ts';
import type { RunResult, LeafResult, DetectorResult } from './result.ts';
import { evaluateGeometry, type Track, type FinePath } from './leafgeom.ts';
import { RfError, phaseSpread, rfMap } from './rf.ts';

export class RunError extends Error {}
export class CancelledError extends Error {}

export interface RunOptions {
  isCancelled?: () => boolean;
  onProgress?: (fraction: number) => void;
  /** Relative precision ε for the detector's time-to-precision figure (default 0.01). */
  epsilon?: number;
  /** Leave out the table-resolution check and the velocity plot (inner points of a scan). */
  light?: boolean;
}

/** Above this spread of the yields over the RF entry phases (fraction of the oven flux) a line is told that its result depended on the phase. */
const RF_PHASE_NOTICE = 1e-6;

/**
 * A state evaluated speed by speed (after a field twist): one density matrix per grid speed, with the
 * grid's flux weights (normalised over the grid).
 */
interface NodeState {
  readonly nodes: true;
  readonly speeds: Float64Array;
  readonly weights: Float64Array;
  readonly rhos: readonly CMat[];
}
type State = SpecState | NodeState;

function isNodes(st: State): st is NodeState {
  return (st as NodeState).nodes === true;
}

/**
 * Nodes whose every ρ_k is scales[k]·common: a port that keeps one state, |k⟩⟨k| ρ |k⟩⟨k| = ⟨k|ρ|k⟩ |k⟩⟨k|.
 * The leaves behind such a port read only the traces; the matrices are formed where something reads them.
 */
class ScaledNodes implements NodeState {
  readonly nodes = true as const;
  private formed: CMat[] | undefined = undefined;
  constructor(readonly speeds: Float64Array, readonly weights: Float64Array, readonly common: CMat, readonly scales: Float64Array) {}
  get rhos(): readonly CMat[] {
    return (this.formed ??= Array.from(this.scales, (s) => cmatScale(this.common, s)));
  }
}

function realTrace(m: CMat): number {
  let t = 0;
  for (let i = 0; i < m.rows; i++) t += m.re[i * m.rows + i];
  return t;
}

function mapNodes(st: NodeState, f: (rho: CMat, k: number) => CMat): NodeState {
  return { nodes: true, speeds: st.speeds, weights: st.weights, rhos: st.rhos.map(f) };
}

/** U ρ U† (both d×d), with U ρ in a scratch array: one allocation, the result. */
function conj(u: CMat, rho: CMat): CMat {
  return cmatSandwichParts(u.re, u.im, u.rows, u.rows, rho);
}

function nodeTrace(st: NodeState): number {
  if (st instanceof ScaledNodes) {
    let ws = 0;
    for (let k = 0; k < st.scales.length; k++) ws += st.weights[k] * st.scales[k];
    return ws * realTrace(st.common);
  }
  let s = 0;
  for (let k = 0; k < st.rhos.length; k++) {
    const r = st.rhos[k], d = r.rows;
    let t = 0;
    for (let i = 0; i < d; i++) t += r.re[i * d + i];
    s += st.weights[k] * t;
  }
  return s;
}

interface WalkCtx {
  sys: SpinSystem;
  fraction: number;
  dist: VelocityDistribution;
  chi: CharCache;
  line: Beamline;
  byId: Map<string, Element>;
  leaves: FinePath[];
  lost: { spin: number };
  warnings: Set<string>;
  positions: Record<string, { entrance: number; exit: number }>;
  opts: RunOptions;
  counter: { steps: number };
  hermiticity: { max: number; positive: boolean };
  sampled: { nodes: number; error: number; unconverged: Map<string, { error: number; speeds: number }> };
  /** χ₂ values of this distribution, shared by the leaves. */
  moment2: Map<number, [number, number]>;
  /** Elements whose sorting warnings this run has added. */
  seen: Set<object>;
  /** Eigenstates of the field regions met in this run, by field (a short list, compared by value). */
  fieldEigen: { field: Vec3; e: EigenFactors }[];
  /** H/ħ of the line's ambient field (the drift Hamiltonian) and whether it vanishes. */
  hAmbient: CMat;
  ambientZero: boolean;
}

interface Walk {
  path: string[];
  y: number;
  track: Track;
  depth: number;
}

const distCache = new IdentityCache<object, Map<number, VelocityDistribution>>('velocity distributions of tables');
const distByValue = new BoundedCache<string, VelocityDistribution>('velocity distributions', 64);

/**
 * One distribution object per velocity set-point and mass, so that what is kept with it (grids,
 * panels) serves every run: a table by its object, the others by their values (a document read again
 * after an edit elsewhere keeps them).
 */
function distributionFor(line: Beamline, sys: SpinSystem): VelocityDistribution {
  const v = line.oven.velocity;
  if (v.kind !== 'table') {
    const key = `${v.kind}|${v.kind === 'fixed' ? v.speed : v.kind === 'effusive' ? v.temperature : `${v.speed}|${v.ratio}`}|${sys.massKg}`;
    return distByValue.getOr(key, () => makeDistribution(line, sys));
  }
  let byMass = distCache.get(v);
  if (!byMass) {
    byMass = new Map();
    distCache.set(v, byMass);
  }
  let d = byMass.get(sys.massKg);
  if (!d) {
    d = makeDistribution(line, sys);
    byMass.set(sys.massKg, d);
  }
  return d;
}

function makeDistribution(line: Beamline, sys: SpinSystem): VelocityDistribution {
  const v = line.oven.velocity;
  switch (v.kind) {
    case 'fixed': return { kind: 'fixed', speed: v.speed };
    case 'effusive': return effusiveDistribution(v.temperature, sys.massKg);
    case 'supersonic': return supersonicDistribution(v.speed, v.ratio);
    case 'table': return tableDistribution(v.points);
  }
}

const initialSpecs = new IdentityCache<object, Map<string, SpecState>>('oven states');

/** The oven's state as a spectral state, one object per oven and system (so runs can share a prefix). */
function initialSpec(line: Beamline, sys: SpinSystem): SpecState {
  let bySys = initialSpecs.get(line.oven);
  if (!bySys) initialSpecs.set(line.oven, (bySys = new Map()));
  let st = bySys.get(sys.key);
  if (!st) {
    st = specInitial(initialState(line, sys));
    bySys.set(sys.key, st);
  }
  return st;
}

function initialState(line: Beamline, sys: SpinSystem): CMat {
  const st = line.oven.state;
  const d = sys.dim;
  if (st.kind === 'unpolarized') return densityUnpolarized(d);
  const zf = zeroFieldStates(sys.params, st.axis);
  const rho = cmatZeros(d, d);
  const add = (label: string, p: number) => {
    const i = zf.labels.indexOf(label);
    if (i < 0) throw new RunError(`oven.state: "${label}" is not a state of ${sys.name} (states: ${zf.labels.join(', ')})`);
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      const ar = zf.vectors.re[a * d + i], ai = zf.vectors.im[a * d + i];
      const br = zf.vectors.re[b * d + i], bi = -zf.vectors.im[b * d + i];
      rho.re[a * d + b] += p * (ar * br - ai * bi);
      rho.im[a * d + b] += p * (ar * bi + ai * br);
    }
  };
  if (st.kind === 'pure') add(st.m, 1);
  else {
    const total = Object.values(st.p).reduce((s, x) => s + x, 0);
    for (const [k, p] of Object.entries(st.p)) add(k, p / total);
  }
  return rho;
}

function lengthOf(e: Element): number {
  switch (e.kind) {
    case 'magnet': return e.length ?? 0;
    case 'field': case 'twist': case 'rf': return e.length;
    default: return 0;
  }
}

function elementPath(ctx: WalkCtx, id: string): string {
  return ctx.byId.get(id)?.path ?? id;
}

/** A warning for an analysing axis with a component along the beam (docs/design.md, "Axes and angles"). */
function axisWarning(path: string, n: Vec3): string | null {
  if (Math.abs(n.y) < 1e-9) return null;
  const t = Math.hypot(n.x, n.z) < 1e-12 ? { x: 0, y: 0, z: 1 } : vecUnit({ x: n.x, y: 0, z: n.z });
  const k = vecCross(t, n);
  const ang = Math.acos(Math.max(-1, Math.min(1, vecDot(n, t))));
  const kn = vecNorm(k);
  const ku = kn > 1e-12 ? vecUnit(k) : { x: 1, y: 0, z: 0 };
  const f = (x: number) => (Math.abs(x) < 5e-4 ? '0' : x.toFixed(3));
  return `${path}.axis: has a component along the beam (n_y = ${n.y.toFixed(3)}); a gradient magnet analyses along its transverse field, so this is an idealisation. It is realised by a rotator of ${(ang * 180 / Math.PI).toFixed(2)}° about (${f(ku.x)}, ${f(ku.y)}, ${f(ku.z)}) before a magnet along (${f(t.x)}, 0, ${f(t.z)}), and its inverse after`;
}

/**
 * Sortings depend only on the isotope and the magnet's axis, field, group and entry: cached per element
 * object (a line run again, or the unchanged elements of a scan) and by those values (an element rebuilt
 * with the same set-points). The element's warnings are added once per run.
 */
const sortCache = new BoundedCache<string, Sorting>('magnet sortings', 256);
const sortByElement = new IdentityCache<Magnet | Recombiner, Map<string, Sorting>>('magnet sortings by element');
/** The states a port selects from a state, kept with that state (a scan's points share the states before the change). */
const selections = new CacheFamily('port selections per state', 64);

function getSorting(ctx: WalkCtx, e: Magnet | Recombiner): Sorting {
  let byName = sortByElement.get(e);
  let s = byName?.get(ctx.sys.key);
  if (!s) {
    const key = `${ctx.sys.key}|${e.path}|${e.axis.x},${e.axis.y},${e.axis.z}|${e.field}|${e.group}|${e.entry}`;
    s = sortCache.get(key);
    if (!s) {
      try {
        s = sortStates(ctx.sys, { axis: e.axis, field: e.field, group: e.group, entry: e.entry, path: e.path });
      } catch (err) {
        if (err instanceof SpeciesError) throw new RunError(err.message);
        throw err;
      }
      s = { ...s, components: s.components.map((c) => ({ ...c, vector: cmatOwn(c.vector) })) };
      sortCache.set(key, s);
    }
    if (!byName) sortByElement.set(e, (byName = new Map()));
    byName.set(ctx.sys.key, s);
  }
  if (!ctx.seen.has(e)) {
    ctx.seen.add(e);
    for (const w of s.warnings) ctx.warnings.add(w);
    const aw = axisWarning(e.path, e.axis);
    if (aw) ctx.warnings.add(aw);
  }
  return s;
}

/**
 * The outgoing state of a port: Σ_k P_k ρ P_k over its states (different energies dephase in the magnet).
 * Where a leaf follows at once only the trace matters, and the Lüders P ρ P with P = Σ_k P_k has the
 * same trace, so the cheaper form is used.
 */
function selectStates(st: State, comps: readonly Component[], leafNext = false): State {
  if (isNodes(st)) return selectNodes(st, comps, leafNext);
  // kept with the incoming state: a scan or a repeated run whose lines share a prefix (the same state
  // objects) sorts it once, and the shared averages of the outgoing state are computed once too
  const key = comps.length === 1 ? comps[0] : comps;
  const m = (st.memo ??= {});
  const memo = (m.selections ??= [new Map(), new Map()]);
  const byKey = memo[leafNext ? 1 : 0];
  let out = byKey.get(key);
  if (!out) {
    selections.misses++;
    out = selectSpec(st, comps, leafNext);
    selections.put(byKey, key, out);
  } else selections.hits++;
  return out;
}

function selectNodes(st: NodeState, comps: readonly Component[], leafNext: boolean): NodeState {
  if (comps.length === 1) {
    // |k⟩⟨k| ρ |k⟩⟨k| = ⟨k|ρ|k⟩ |k⟩⟨k|
    const v = comps[0].vector, p = rank1Cached(comps[0]);
    const d = v.rows, vr = v.re, vi = v.im;
    const rhos = st.rhos, scales = new Float64Array(rhos.length);
    for (let k = 0; k < rhos.length; k++) {
      const rho = rhos[k];
      let sr = 0;
      for (let i = 0; i < d; i++) {
        // conj(v_i) Σ_j ρ_ij v_j, real part (ρ Hermitian)
        let tr = 0, ti = 0;
        for (let j = 0; j < d; j++) {
          const rr = rho.re[i * d + j], ri = rho.im[i * d + j];
          tr += rr * vr[j] - ri * vi[j];
          ti += rr * vi[j] + ri * vr[j];
        }
        sr += vr[i] * tr + vi[i] * ti;
      }
      scales[k] = sr;
    }
    return new ScaledNodes(st.speeds, st.weights, p, scales);
  }
  if (leafNext) {
    // P ρ P with P Hermitian: conj(P, ρ)
    const p = portProjector(comps);
    return mapNodes(st, (rho) => conj(p, rho));
  }
  const ps = comps.map(rank1);
  return mapNodes(st, (rho) => {
    const out = cmatZeros(rho.rows, rho.cols);
    for (const p of ps) {
      const x = cmatMul(cmatMul(p, rho), p);
      for (let i = 0; i < out.re.length; i++) { out.re[i] += x.re[i]; out.im[i] += x.im[i]; }
    }
    return out;
  });
}

function selectSpec(st: SpecState, comps: readonly Component[], leafNext: boolean): SpecState {
  // one state: |k⟩⟨k| ρ |k⟩⟨k| is a single Kraus operator, and the state keeps its frequency terms;
  // without phase terms it is just |k⟩ with its population
  if (comps.length === 1) return st.mu === null ? specProjectDiag(st, [comps[0].vector]) : specKraus(st, rank1Cached(comps[0]));
  if (leafNext) return specKraus(st, portProjector(comps));
  return specProjectDiag(st, comps.map((c) => c.vector));
}

const projectors = new WeakMap<readonly Component[], CMat>();

/** Σ_k |k⟩⟨k| over a port's states, cached with the (cached) sorting they come from. */
function portProjector(comps: readonly Component[]): CMat {
  let p = projectors.get(comps);
  if (!p) {
    p = projectorOf(comps[0].vector.rows, comps);
    p = cmatOwn(p);
    projectors.set(comps, p);
  }
  return p;
}

/** The states of one port of a sorting, as one stable array (so its projector is cached). */
function portComponents(sorting: Sorting, port: string): readonly Component[] {
  let byPort = portCache.get(sorting);
  if (!byPort) {
    byPort = new Map();
    portCache.set(sorting, byPort);
  }
  let c = byPort.get(port);
  if (!c) {
    c = sorting.components.filter((x) => x.port === port);
    byPort.set(port, c);
  }
  return c;
}
const portCache = new WeakMap<Sorting, Map<string, readonly Component[]>>();

const rank1s = new WeakMap<Component, CMat>();
function rank1Cached(c: Component): CMat {
  let p = rank1s.get(c);
  if (!p) {
    p = rank1(c);
    p = cmatOwn(p);
    rank1s.set(c, p);
  }
  return p;
}

function rank1(c: Component): CMat {
  const v = c.vector;
  const d = v.rows;
  const out = cmatZeros(d, d);
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
    out.re[i * d + j] = v.re[i] * v.re[j] + v.im[i] * v.im[j];
    out.im[i * d + j] = v.im[i] * v.re[j] - v.re[i] * v.im[j];
  }
  return out;
}

/** The state's beam-averaged trace (the fraction of flux on this path so far). */
function averagedTrace(ctx: WalkCtx, st: State): number {
  return isNodes(st) ? nodeTrace(st) : specAverageTrace(st, ctx.chi).value;
}

type EigenFactors = { values: ArrayLike<number>; readonly vectors: CMat; factors?: PropagatorFactors };
const eigenCache = new WeakMap<CMat, EigenFactors>();
/** H/ħ = V Λ V†: a field Hamiltonian through the m_F blocks (hyperfine.ts zeemanEigen), else eigh. */
function eigenOf(ctx: WalkCtx, h: CMat | null, field?: Vec3): EigenFactors {
  if (field) {
    // kept for the run (every sub-beam through one field region shares it)
    let e: EigenFactors | undefined;
    for (const c of ctx.fieldEigen) if (c.field.x === field.x && c.field.y === field.y && c.field.z === field.z) e = c.e;
    if (!e) {
      const b = vecNorm(field);
      const z = zeemanEigen(ctx.sys.params, b, b > 0 ? field : { x: 0, y: 0, z: 1 });
      const values = zeroedF64(z.values.length);
      for (let i = 0; i < values.length; i++) values[i] = 2 * Math.PI * z.values[i];
      // the dense eigenvectors are formed only where a path needs them (specPropagate keeps the factors)
      e = { values, get vectors(): CMat { return z.vectors; }, factors: z.factors };
      ctx.fieldEigen.push({ field, e });
    }
    return e;
  }
  if (!h) throw new Error('eigenOf: neither a Hamiltonian nor a field');
  const hit = eigenCache.get(h);
  if (hit) return hit;
  const e = eigh(h);
  eigenCache.set(h, e);
  return e;
}

/**
 * ρ → U ρ U†, U = e^{−iHℓ/v}: H given as a matrix, or (h = null) as the species' Hamiltonian in
 * `field`, which is then never built as a matrix (its eigenstates come from the m_F blocks).
 */
function applyLinear(ctx: WalkCtx, st: State, h: CMat | null, length: number, field?: Vec3): State {
  if (length === 0) return st;
  if (h) {
    let hn = 0;
    for (let i = 0; i < h.re.length; i++) hn = Math.max(hn, Math.abs(h.re[i]), Math.abs(h.im[i]));
    if (hn === 0) return st;
  } else {
    const p = ctx.sys.params;
    if (!field || (vecNorm(field) === 0 && p.aHz === 0 && !p.bHz)) return st;
  }
  const e = eigenOf(ctx, h, field);
  if (isNodes(st)) {
    const eig = { values: copyF64(e.values), vectors: e.vectors };
    return mapNodes(st, (rho, k) => conj(spectralFunction(eig, (l) => {
      const ph = reduceAngle((l * length) / st.speeds[k]);
      return [Math.cos(ph), -Math.sin(ph)];
    }), rho));
  }
  return specPropagate(st, () => e.vectors, e.values, length, e.factors);
}

function applyKraus(st: State, k: CMat): State {
  if (isNodes(st)) return mapNodes(st, (rho) => conj(k, rho));
  return specKraus(st, k);
}

function drift(ctx: WalkCtx, st: State, gap: number): State {
  if (gap <= 0 || ctx.ambientZero) return st;
  return applyLinear(ctx, st, ctx.hAmbient, gap, ctx.line.ambient);
}

/**
 * A warning when the collimated beam, undeflected, is already wider or taller at a magnet's entrance
 * than the magnet's pole-gap aperture: part of the beam is clipped there whatever the spin does (the
 * clipped part is counted as lost).
 */
function apertureWarning(ctx: WalkCtx, e: Magnet, track: Track, y: number): void {
  const ap = e.aperture!;
  const src = track.source, col = track.collimator;
  const extent = (axis: 'x' | 'z'): number => {
    const w0 = src ? (axis === 'x' ? src.width : src.height) : 0;
    if (!col) return w0;
    const w1 = axis === 'x' ? col.rect.width : col.rect.height;
    const r = y / col.y;
    // full width of the sum of the two uniform contributions at this plane
    return w0 * Math.abs(1 - r) + w1 * r;
  };
  const wx = extent('x'), wz = extent('z');
  const over: string[] = [];
  if (wx > ap.width) over.push(`${(wx * 1e3).toPrecision(3)} mm wide against a ${(ap.width * 1e3).toPrecision(3)} mm pole gap`);
  if (wz > ap.height) over.push(`${(wz * 1e3).toPrecision(3)} mm tall against ${(ap.height * 1e3).toPrecision(3)} mm`);
  if (over.length > 0) ctx.warnings.add(`${e.path}.aperture: the collimated beam at the magnet's entrance is ${over.join(' and ')}: part of it is clipped before any deflection (counted as lost)`);
}

const commuteCache = new WeakMap<Sorting, Map<CMat, boolean>>();

/** True when every state the magnet sorts into is an eigenvector of the line's drift Hamiltonian. */
function driftCommutesWithSort(ctx: WalkCtx, e: Magnet): boolean {
  const sorting = getSorting(ctx, e);
  const h = ctx.hAmbient;
  let byH = commuteCache.get(sorting);
  if (!byH) {
    byH = new Map();
    commuteCache.set(sorting, byH);
  }
  const hit = byH.get(h);
  if (hit !== undefined) return hit;
  let hn = 0;
  for (let i = 0; i < h.re.length; i++) hn = Math.max(hn, Math.abs(h.re[i]) + Math.abs(h.im[i]));
  const ok = sorting.components.every((c) => {
    const hv = cmatMul(h, c.vector);
    // λ = ⟨k|H|k⟩; residual ‖H|k⟩ − λ|k⟩‖
    let lr = 0;
    for (let i = 0; i < hv.rows; i++) lr += c.vector.re[i] * hv.re[i] + c.vector.im[i] * hv.im[i];
    let res = 0;
    for (let i = 0; i < hv.rows; i++) res += (hv.re[i] - lr * c.vector.re[i]) ** 2 + (hv.im[i] - lr * c.vector.im[i]) ** 2;
    return Math.sqrt(res) <= 1e-13 * Math.max(hn, 1e-300);
  });
  byH.set(h, ok);
  return ok;
}

function fork(walk: Walk, extra: Partial<Walk>): Walk {
  return {
    path: extra.path ?? walk.path,
    y: extra.y ?? walk.y,
    track: extra.track ?? walk.track,
    depth: walk.depth + 1,
  };
}

function checkCancel(ctx: WalkCtx): void {
  if (++ctx.counter.steps % 64 === 0 && ctx.opts.isCancelled?.()) throw new CancelledError('cancelled');
}

/** Where a magnet sends the states of a component's port (by name, else "*"). */
function routeOf(e: Magnet, c: Component): string {
  const to = e.ports[c.port] ?? e.ports['*'];
  if (to === undefined) throw new RunError(`${e.path}.ports: port "${c.port}" is not routed (route it by name or with "*")`);
  return to;
}

function visit(ctx: WalkCtx, target: string, st: State, walk: Walk): void {
  checkCancel(ctx);
  if (walk.depth > 512) throw new RunError(`${elementPath(ctx, target)}: the line is deeper than 512 elements along one path (a cycle?)`);
  if (target === 'stop') {
    finishLeaf(ctx, st, walk, 'stop', null);
    return;
  }
  const e = ctx.byId.get(target);
  if (!e) throw new RunError(`unknown target "${target}"`);
  const entrance = walk.y + e.gap;
  const exit = entrance + lengthOf(e);
  const pos = ctx.positions[e.id];
  if (!pos) ctx.positions[e.id] = { entrance, exit };
  else if (Math.abs(pos.entrance - entrance) > 1e-3) {
    ctx.warnings.add(`${e.path}: reached at ${(entrance * 100).toFixed(1)} cm along one path and ${(pos.entrance * 100).toFixed(1)} cm along another; the gaps of the paths that share it disagree`);
  }
  if (e.kind === 'detector') {
    finishLeaf(ctx, st, { ...walk, y: entrance }, e.id, e);
    return;
  }
  // a drift just before a magnet whose states are all eigenvectors of the drift Hamiltonian changes
  // nothing the magnet passes on: P_k U ρ U† P_k = P_k ρ P_k when U|k⟩ = e^{−iλt}|k⟩
  const skipDrift = e.kind === 'magnet' && e.gap > 0 && !ctx.ambientZero && driftCommutesWithSort(ctx, e);
  let s = skipDrift ? st : drift(ctx, st, e.gap);
  const sys = ctx.sys;
  switch (e.kind) {
    case 'magnet': {
      const sorting = getSorting(ctx, e);
      const strips = e.aperture ? [
        { y: entrance, lo: e.aperture.x - e.aperture.width / 2, hi: e.aperture.x + e.aperture.width / 2, axis: 'x' as const },
        { y: entrance, lo: e.aperture.z - e.aperture.height / 2, hi: e.aperture.z + e.aperture.height / 2, axis: 'z' as const },
        { y: exit, lo: e.aperture.x - e.aperture.width / 2, hi: e.aperture.x + e.aperture.width / 2, axis: 'x' as const },
        { y: exit, lo: e.aperture.z - e.aperture.height / 2, hi: e.aperture.z + e.aperture.height / 2, axis: 'z' as const },
      ] : [];
      if (e.aperture) apertureWarning(ctx, e, walk.track, entrance);
      const deflects = e.gradient !== undefined && e.length !== undefined && e.length > 0 && e.gradient !== 0;
      if (deflects || e.aperture) {
        // every state its own sub-beam: each has its own moment, so its own deflection
        for (const c of sorting.components) {
          const to = routeOf(e, c);
          const kick = deflects ? [{ exitY: exit, length: e.length!, accel: (c.moment * BOHR_MAGNETON * e.gradient!) / sys.massKg, n: e.axis }] : [];
          const w = fork(walk, {
            path: [...walk.path, `${e.id}:${c.port}`],
            y: exit,
            track: { ...walk.track, kicks: [...walk.track.kicks, ...kick], strips: [...walk.track.strips, ...strips], components: [...walk.track.components, `${e.id}:${c.lowField}`] },
          });
          visit(ctx, to, selectStates(s, [c]), w);
        }
        return;
      }
      // an ideal sorter: the states of one port share one trajectory; Σ_k P_k ρ P_k over the port
      for (const port of sorting.ports) {
        const comps = portComponents(sorting, port);
        const to = routeOf(e, comps[0]);
        const w = fork(walk, { path: [...walk.path, `${e.id}:${port}`], y: exit });
        visit(ctx, to, selectStates(s, comps, to === 'stop' || ctx.byId.get(to)?.kind === 'detector'), w);
      }
      return;
    }
    case 'rotator': {
      s = applyKraus(s, rotationOperator(sys.F, e.axis, e.angle));
      break;
    }
    case 'field': {
      s = applyLinear(ctx, s, null, e.length, e.field);
      break;
    }
    case 'twist': {
      const n1 = e.start, n2 = e.end;
      const cross = vecCross(n1, n2);
      const angle = Math.atan2(vecNorm(cross), vecDot(n1, n2));
      const h1 = sys.hamiltonian({ x: e.field * n1.x, y: e.field * n1.y, z: e.field * n1.z });
      if (angle < 1e-12) {
        s = applyLinear(ctx, s, h1, e.length, { x: e.field * n1.x, y: e.field * n1.y, z: e.field * n1.z });
        break;
      }
      const k = vecUnit(cross);
      const kGen = cmatCombine([[k.x, sys.F.jx], [k.y, sys.F.jy], [k.z, sys.F.jz]]);
      const rot = rotationOperator(sys.F, k, angle);
      const twist = { h1, kGen, angle, rot, length: e.length, rotation: twistRotation(sys.F, h1, n1, k, rot) };
      if (isNodes(s)) {
        s = applyTwist(s, twist);
        break;
      }
      runSampledSubtree(ctx, e, s, twist, { ...walk, y: exit });
      return;
    }
    case 'rf': {
      let map;
      try {
        map = rfMap(sys, e, e.path);
      } catch (err) {
        if (err instanceof RfError) throw new RunError(err.message);
        throw err;
      }
      ctx.warnings.add(`${e.path}: RF flipper solved in the rotating-wave approximation (the counter-rotating part and the component along the static field are dropped)`);
      if (map.rotating.length === 1) {
        s = applyLinear(ctx, applyLinear(ctx, s, map.rotating[0], e.length), map.frame, e.length);
        break;
      }
      // a continuous beam: the subtree once per entry phase, each with weight 1/N (rf.ts)
      const whole = ctx.fraction;
      const n = map.rotating.length;
      const branchYields: number[][] = [];
      try {
        ctx.fraction = whole / n;
        for (const h of map.rotating) {
          const first = ctx.leaves.length;
          visit(ctx, e.to, applyLinear(ctx, applyLinear(ctx, s, h, e.length), map.frame, e.length), { ...walk, y: exit });
          branchYields.push(ctx.leaves.slice(first).map((l) => l.yieldSpin));
        }
      } finally {
        ctx.fraction = whole;
      }
      const spread = phaseSpread(branchYields);
      if (spread === undefined || spread > RF_PHASE_NOTICE) {
        ctx.warnings.add(`${e.path}: the yields behind this RF flipper depend on the RF phase at which an atom enters${spread === undefined ? '' : ` (by up to ${spread.toPrecision(2)} of the oven flux between entry phases)`}: they are averaged over a uniformly distributed phase, as in a continuous beam; a pulsed beam locked to the RF would differ (give the element a "phase" for that case)`);
      }
      return;
    }
    case 'recombiner': {
      const sorting = getSorting(ctx, e);
      const open = sorting.components.filter((c) => e.open.includes(c.port));
      const before = averagedTrace(ctx, s);
      if (e.coherent) {
        const d = sys.dim;
        let k = cmatZeros(d, d);
        for (const port of e.open) {
          const comps = open.filter((c) => c.port === port);
          const ph = e.phases[port] ?? 0;
          k = cmatCombine([[1, k], [1, cmatScale(projectorOf(d, comps), Math.cos(ph), Math.sin(ph))]]);
        }
        s = applyKraus(s, k);
        ctx.lost.spin += ctx.fraction * (before - averagedTrace(ctx, s));
        break;
      }
      const closed = sorting.components.filter((c) => !e.open.includes(c.port));
      if (closed.length > 0) ctx.lost.spin += ctx.fraction * averagedTrace(ctx, applyKraus(s, projectorOf(sys.dim, closed)));
      const w = fork(walk, { y: exit });
      visit(ctx, e.to, selectStates(s, open), w);
      return;
    }
    case 'slit': {
      const sx = { y: entrance, lo: e.x - e.width / 2, hi: e.x + e.width / 2, axis: 'x' as const };
      const sz = { y: entrance, lo: e.z - e.height / 2, hi: e.z + e.height / 2, axis: 'z' as const };
      const track = walk.track.collimator
        ? { ...walk.track, strips: [...walk.track.strips, sx, sz] }
        : { ...walk.track, collimator: { y: entrance, rect: { width: e.width, height: e.height, x: e.x, z: e.z } } };
      visit(ctx, e.to, s, { ...walk, y: exit, track });
      return;
    }
  }
  visit(ctx, (e as { to: string }).to, s, { ...walk, y: exit });
}

function finishLeaf(ctx: WalkCtx, st: State, walk: Walk, target: string, det: Detector | null): void {
  let yieldSpin: number;
  let yieldError = 0;
  let grid: FinePath['grid'];
  let spec: SpecState | undefined;
  if (isNodes(st)) {
    yieldSpin = nodeTrace(st);
    const traces = new Float64Array(st.speeds.length);
    if (st instanceof ScaledNodes) {
      const t = realTrace(st.common);
      for (let k = 0; k < traces.length; k++) traces[k] = st.scales[k] * t;
    } else for (let k = 0; k < traces.length; k++) {
      const r = st.rhos[k], d = r.rows;
      let s = 0;
      for (let i = 0; i < d; i++) s += r.re[i * d + i];
      traces[k] = s;
    }
    grid = { speeds: st.speeds, weights: st.weights, traces };
  } else {
    const avg = specAverageTrace(st, ctx.chi);
    ctx.hermiticity.max = Math.max(ctx.hermiticity.max, avg.hermiticity);
    if (!avg.positive) ctx.hermiticity.positive = false;
    yieldSpin = avg.value;
    yieldError = avg.error;
    spec = st;
  }
  ctx.leaves.push({
    system: ctx.sys.name,
    fraction: ctx.fraction,
    dist: ctx.dist,
    path: walk.path,
    target,
    plane: walk.y,
    yieldSpin: yieldSpin * ctx.fraction,
    yieldError: yieldError * ctx.fraction,
    spec,
    moment2Cache: ctx.moment2,
    track: walk.track,
    grid,
    detector: det,
  });
}

interface TwistOp {
  readonly h1: CMat;
  readonly kGen: CMat;
  readonly angle: number;
  readonly rot: CMat;
  readonly length: number;
  /** Where H₁ = c n̂₁·F (a bare spin): the fixed factors of the closed form (twistRotation). */
  readonly rotation: TwistRotation | null;
}

/**
 * For H₁ = c n̂₁·F the rotating-frame exponent t H₁ − θ k̂·F = α û·F is a rotation generator, with
 * α û = t c n̂₁ − θ k̂ (k̂ ⊥ n̂₁). With n̂₁·F = V₁ diag(m₁) V₁†, q̂·F = V_q diag(m_q) V_q†, q̂ = k̂ × n̂₁
 * (which turns n̂₁ into û by β = atan2(θ, t c)):
 *   exp(−iα û·F) = Q(β) exp(−iα n̂₁·F) Q(β)†,  Q(β) = V_q e^{−iβ m_q} V_q†,
 * so U = R · V_q [e^{−iβ m_q} A e^{−iα m₁} A† e^{iβ m_q}] V_q† with A = V_q†V₁: no eigensolver per speed.
 */
interface TwistRotation {
  readonly c: number;
  readonly m1: Float64Array;
  readonly mq: Float64Array;
  /** A = V_q†V₁ */
  readonly a: CMat;
  /** R·V_q */
  readonly b: CMat;
  /** V_q† */
  readonly vqd: CMat;
}

function twistRotation(ops: SpinSystem['F'], h1: CMat, n1: Vec3, k: Vec3, rot: CMat): TwistRotation | null {
  const g1 = cmatCombine([[n1.x, ops.jx], [n1.y, ops.jy], [n1.z, ops.jz]]);
  let num = 0, den = 0, big = 0;
  for (let i = 0; i < g1.re.length; i++) {
    num += h1.re[i] * g1.re[i] + h1.im[i] * g1.im[i];
    den += g1.re[i] * g1.re[i] + g1.im[i] * g1.im[i];
    big = Math.max(big, Math.abs(h1.re[i]) + Math.abs(h1.im[i]));
  }
  const c = num / den;
  for (let i = 0; i < g1.re.length; i++) {
    if (Math.abs(h1.re[i] - c * g1.re[i]) + Math.abs(h1.im[i] - c * g1.im[i]) > 1e-12 * big) return null;
  }
  const q = vecCross(k, n1);
  const e1 = eigh(g1), eq = eigh(cmatCombine([[q.x, ops.jx], [q.y, ops.jy], [q.z, ops.jz]]));
  const vqd = cmatDagger(eq.vectors);
  return { c, m1: copyF64(e1.values), mq: copyF64(eq.values), a: cmatMul(vqd, e1.vectors), b: cmatMul(rot, eq.vectors), vqd };
}

/** U = exp(−iθF_k) exp(−i(H₁ t − θ F_k)), t = ℓ/v (docs/design.md, "Field twist": the exact rotating-frame solution), per speed. */
function applyTwist(st: NodeState, op: TwistOp): NodeState {
  const tr = op.rotation;
  if (tr) {
    const d = tr.a.rows;
    const er = new Float64Array(d), ei = new Float64Array(d), qr = new Float64Array(d), qi = new Float64Array(d);
    const ar = tr.a.re, ai = tr.a.im;
    // per speed: C, then U = B·C·V_q† in arrays of this twist (cr/ci: C, then B·C; ur/ui: U)
    const n = d * d;
    const cr = new Float64Array(n), ci = new Float64Array(n), pr = new Float64Array(n), pi = new Float64Array(n);
    const ur = new Float64Array(n), ui = new Float64Array(n);
    return mapNodes(st, (rho, k) => {
      twistPhases(op, tr, st.speeds[k], er, ei, qr, qi);
      // C_ij = e^{−iβ m_q,i} (Σ_l A_il E_l conj(A_jl)) e^{iβ m_q,j}
      for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
        let sr = 0, si = 0;
        for (let l = 0; l < d; l++) {
          const xr = ar[i * d + l] * er[l] - ai[i * d + l] * ei[l], xi = ar[i * d + l] * ei[l] + ai[i * d + l] * er[l];
          const yr = ar[j * d + l], yi = -ai[j * d + l];
          sr += xr * yr - xi * yi;
          si += xr * yi + xi * yr;
        }
        // phase q_i conj(q_j)
        const hr = qr[i] * qr[j] + qi[i] * qi[j], hi = qi[i] * qr[j] - qr[i] * qi[j];
        cr[i * d + j] = sr * hr - si * hi;
        ci[i * d + j] = sr * hi + si * hr;
      }
      cmatMulInto(tr.b.re, tr.b.im, cr, ci, d, d, d, pr, pi);
      cmatMulInto(pr, pi, tr.vqd.re, tr.vqd.im, d, d, d, ur, ui);
      return cmatSandwichParts(ur, ui, d, d, rho);
    });
  }
  return mapNodes(st, (rho, k) => {
    const t = op.length / st.speeds[k];
    const u = cmatMul(op.rot, expmiHermitian(cmatCombine([[t, op.h1], [-op.angle, op.kGen]]), 1));
    return conj(u, rho);
  });
}

/**
 * The closed-form twist of a bare spin for a state that is the same at every speed, ρ = W X W† (W d×r):
 * ρ'(v) = Y X Y† with Y = U W = R V_q Q A E A† Q† (V_q† W), applied to the r columns of W without forming
 * U (3d²r products per speed instead of 5d³; r = 1 behind a port that keeps one state).
 */
function applyTwistStatic(speeds: Float64Array, weights: Float64Array, w: CMat, x: CMat, op: TwistOp, tr: TwistRotation): NodeState {
  const d = w.rows, r = w.cols, n = d * r;
  const y0 = cmatMul(tr.vqd, w), ad = cmatDagger(tr.a);
  const er = new Float64Array(d), ei = new Float64Array(d), qr = new Float64Array(d), qi = new Float64Array(d);
  const ur = new Float64Array(n), ui = new Float64Array(n), vr = new Float64Array(n), vi = new Float64Array(n);
  const rhos = new Array<CMat>(speeds.length);
  for (let k = 0; k < speeds.length; k++) {
    twistPhases(op, tr, speeds[k], er, ei, qr, qi);
    // Y = B Q A E A† Q† y0 from the right: rows scaled by the diagonal phases, products into work arrays
    scaleRows(y0.re, y0.im, qr, qi, true, d, r, vr, vi);
    cmatMulInto(ad.re, ad.im, vr, vi, d, d, r, ur, ui);
    scaleRows(ur, ui, er, ei, false, d, r, ur, ui);
    cmatMulInto(tr.a.re, tr.a.im, ur, ui, d, d, r, vr, vi);
    scaleRows(vr, vi, qr, qi, false, d, r, vr, vi);
    cmatMulInto(tr.b.re, tr.b.im, vr, vi, d, d, r, ur, ui);
    // ρ' = Y X Y†
    rhos[k] = cmatSandwichParts(ur, ui, d, r, x);
  }
  return { nodes: true, speeds, weights, rhos };
}

/** e_l = e^{−iα m₁,l} and q_l = e^{−iβ m_q,l} of the twist's closed form at one speed (t = ℓ/v). */
function twistPhases(op: TwistOp, tr: TwistRotation, speed: number, er: Float64Array, ei: Float64Array, qr: Float64Array, qi: Float64Array): void {
  const tc = (op.length / speed) * tr.c;
  const alpha = Math.sqrt(tc * tc + op.angle * op.angle), beta = Math.atan2(op.angle, tc);
  for (let l = 0; l < er.length; l++) {
    expNegI(alpha * tr.m1[l], er, ei, l);
    expNegI(beta * tr.mq[l], qr, qi, l);
  }
}

/** out = diag(p) · m (or diag(conj p) · m) for m d×r by parts; out may be m itself. */
function scaleRows(mr: ArrayLike<number>, mi: ArrayLike<number>, pr: Float64Array, pi: Float64Array, conjugate: boolean, d: number, r: number, or: Float64Array, oi: Float64Array): void {
  for (let i = 0; i < d; i++) {
    const cr = pr[i], ci = conjugate ? -pi[i] : pi[i];
    for (let c = 0; c < r; c++) {
      const xr = mr[i * r + c], xi = mi[i * r + c];
      or[i * r + c] = cr * xr - ci * xi;
      oi[i * r + c] = cr * xi + ci * xr;
    }
  }
}

/**
 * From a field twist on, the subtree is averaged speed by speed: on the tabulated speeds (or the one
 * speed) as they are, or on grids uniform in 1/v below the typical speed and in v above it
 * (physics/velocity.ts oscillationGrid), doubled from 2×8 to 2×128 panels of 8 nodes until no leaf
 * yield moves by 1e-11 (the last change is reported as the error, and as a warning above 1e-9).
 */
/**
 * The first grid of the doubling: levels whose nodes step the fastest phase (the twist's eigenphase
 * spread ℓ·ΔΛ plus the incoming state's largest phase-length, times 1/v) by more than ~2 rad between
 * neighbours cannot have converged, so the doubling starts past them (at most at 64 panels, so that
 * the 64 → 128 change still estimates the error).
 */
function firstPanels(d: VelocityDistribution, st: SpecState, twist: TwistOp): number {
  if (d.kind === 'fixed' || d.kind === 'table') return 8;
  const ev = eigh(twist.h1).values;
  let spread = 0;
  for (let i = 0; i < ev.length; i++) for (let j = 0; j < ev.length; j++) spread = Math.max(spread, ev[i] - ev[j]);
  let phi = spread * twist.length;
  for (const w of specPhaseWeights(st)) phi = Math.max(phi, w.phi);
  const g = oscillationGrid(d, 8, 8);
  let ds = 0;
  for (let k = 1; k < g.speeds.length; k++) ds = Math.max(ds, Math.abs(1 / g.speeds[k] - 1 / g.speeds[k - 1]));
  // at 8 panels the largest step is phi·ds; each doubling halves it
  const limit = Math.min(64, (8 * phi * ds) / 4);
  let panels = 8;
  while (panels * 2 <= limit) panels *= 2;
  return panels;
}

function runSampledSubtree(ctx: WalkCtx, e: Element, st: SpecState, twist: TwistOp, walk: Walk): void {
  const d = ctx.dist;
  const exact = d.kind === 'fixed' || d.kind === 'table';
  const to = (e as { to: string }).to;
  let prev: Map<string, number> | null = null;
  const lostMark = ctx.lost.spin;
  const warnMark = new Set(ctx.warnings);
  for (let panels = firstPanels(d, st, twist); ; panels *= 2) {
    const g = oscillationGrid(d, panels, 8);
    const total = g.weights.reduce((a, b) => a + b, 0);
    const weights = g.weights.map((w) => w / total);
    // a state without phases is the same at every node, ρ = W (Σ_t X_t) W†: the twist's closed form then
    // acts on W's columns; otherwise ρ is formed once and shared by the nodes (nothing mutates a ρ)
    let nodes: NodeState;
    if (specIsStatic(st) && twist.rotation) nodes = applyTwistStatic(g.speeds, weights, st.W, sumTerms(st), twist, twist.rotation);
    else {
      const rho0 = specIsStatic(st) ? specAt(st, g.speeds[0]) : null;
      const rhos: CMat[] = rho0 ? new Array<CMat>(g.speeds.length).fill(rho0) : Array.from(g.speeds, (v) => specAt(st, v));
      nodes = applyTwist({ nodes: true, speeds: g.speeds, weights, rhos }, twist);
    }
    const mark = ctx.leaves.length;
    ctx.lost.spin = lostMark;
    for (const w of [...ctx.warnings]) if (!warnMark.has(w)) ctx.warnings.delete(w);
    visit(ctx, to, nodes, walk);
    ctx.sampled.nodes += g.speeds.length;
    if (exact) return;
    const fresh = ctx.leaves.slice(mark);
    const now = new Map(fresh.map((l, i) => [`${i}|${l.path.join(' ')}|${l.target}`, l.yieldSpin]));
    if (prev) {
      let err = 0, sum = 0;
      for (const [k, y] of now) {
        const dy = Math.abs(y - (prev.get(k) ?? 0));
        err = Math.max(err, dy);
        sum += dy;
      }
      if (err < 1e-11 || panels >= 128) {
        ctx.sampled.error += sum;
        if (err >= 1e-9) {
          const u = ctx.sampled.unconverged.get(e.path);
          ctx.sampled.unconverged.set(e.path, { error: Math.max(err, u?.error ?? 0), speeds: g.speeds.length });
        }
        return;
      }
    }
    prev = now;
    ctx.leaves.length = mark;
  }
}

/** Σ_t X_t of a state (r×r): its ρ = W (Σ_t X_t) W† where no term carries a phase. */
function sumTerms(st: SpecState): CMat {
  const r = st.W.cols;
  const out = cmatZeros(r, r);
  for (const t of st.terms) for (let i = 0; i < r * r; i++) {
    out.re[i] += t.X.re[i];
    out.im[i] += t.X.im[i];
  }
  return out;
}

function resolveFlux(line: Beamline, warnings: Set<string>): number {
  const f = line.oven.flux;
  if (f.kind === 'given') return f.value;
  const ref = line.species;
  const sp = ref.kind === 'named' ? lookupSpecies(ref.name) : undefined;
  if (!sp || sp.kind === 'bare') throw new RunError('oven.flux: a vapor-pressure estimate needs a library species with a vapor-pressure correlation');
  const ap = line.oven.aperture;
  if (!ap) throw new RunError('oven.flux: a vapor-pressure estimate needs the oven aperture (oven.aperture: the orifice)');
  const first = firstSlit(line);
  if (!first) throw new RunError('oven.flux: a vapor-pressure estimate needs a collimating slit after the oven (its area and distance set the solid angle)');
  try {
    const r = collimatedFlux({ species: sp, temperatureK: f.temperature, orificeArea: ap.width * ap.height, collimatorArea: first.rect.width * first.rect.height, distance: first.y });
    for (const w of r.warnings) warnings.add(`oven.flux: ${w}`);
    return r.flux;
  } catch (err) {
    throw new RunError(`oven.flux: ${(err as Error).message}`);
  }
}

function firstSlit(line: Beamline): { rect: Rect; y: number } | null {
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  let id = line.oven.to;
  let y = 0;
  for (let guard = 0; guard < 1000 && id !== 'stop'; guard++) {
    const e = byId.get(id);
    if (!e) return null;
    y += e.gap;
    if (e.kind === 'slit') return { rect: { width: e.width, height: e.height, x: e.x, z: e.z }, y };
    y += lengthOf(e);
    if (e.kind === 'magnet') {
      const first = Object.values(e.ports)[0];
      if (!first) return null;
      id = first;
    } else if (e.kind === 'detector') return null;
    else id = e.to;
  }
  return null;
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
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const flux = resolveFlux(line, warnings);
  const leaves: FinePath[] = [];
  const lost = { spin: 0 };
  const positions: Record<string, { entrance: number; exit: number }> = {};
  const hermiticity = { max: 0, positive: true };
  const sampled = { nodes: 0, error: 0, unconverged: new Map<string, { error: number; speeds: number }>() };
  let chiNodes = 0, chiError = 0, wasmUsed = false;
  const dists: VelocityDistribution[] = [];
  systems.forEach(({ system, fraction }, i) => {
    const dist = distributionFor(line, system);
    dists.push(dist);
    const chi = new CharCache(dist);
    const ctx: WalkCtx = {
      sys: system, fraction, dist, chi, line, byId, leaves, lost, warnings, positions, opts,
      counter: { steps: 0 }, hermiticity, sampled, moment2: new Map(), seen: new Set(), fieldEigen: [],
      hAmbient: system.hamiltonian(line.ambient), ambientZero: false,
    };
    ctx.ambientZero = isZeroMatrix(ctx.hAmbient);
    const st0 = initialSpec(line, system);
    const ap = line.oven.aperture;
    const track: Track = {
      source: ap ? { width: ap.width, height: ap.height, x: ap.x, z: ap.z } : null,
      collimator: null, kicks: [], strips: [], components: [],
    };
    visit(ctx, line.oven.to, st0, { path: [], y: 0, track, depth: 0 });
    chiNodes += chi.nodes;
    if (chi.wasm) wasmUsed = true;
    chiError += 0;
    opts.onProgress?.((i + 1) / (systems.length + 1));
  });
  if (line.oven.velocity.kind === 'table' && !opts.light) checkTable(line, leaves, warnings);
  for (const [path, u] of sampled.unconverged) {
    warnings.add(`${path}: the speed-by-speed average after the field twist did not converge to 1e-9: the yields moved by up to ${u.error.toExponential(1)} between the last two grids (${u.speeds} speeds); a fast phase before, in or after the twist is not resolved, and the yields carry that error`);
  }
  const geo = evaluateGeometry(leaves, flux, opts.epsilon ?? 0.01, lost);
  for (const w of geo.warnings) warnings.add(w);
  chiError = geo.chiError;
  const totalYield = geo.leaves.reduce((s, l) => s + l.yield, 0);
  const lostTotal = lost.spin + geo.clipped;
  const balance = Math.abs(totalYield + lostTotal - 1);
  const leavesOut: LeafResult[] = geo.leaves;
  const detectors: DetectorResult[] = geo.detectors;
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
  };
}

/**
 * The last guard: no number of a result is NaN or infinite. The reader's bounds keep every accepted document
 * finite; should a number still not be, the run fails with a message naming the element instead of printing it.
 */
function requireFinite(line: Beamline, leaves: readonly LeafResult[], detectors: readonly DetectorResult[], lost: number): void {
  const where = (id: string) => {
    const i = line.elements.findIndex((e) => e.id === id);
    return i < 0 ? id : `elements[${i}] (${id})`;
  };
  const bad = (what: string, v: unknown) => typeof v === 'number' && !Number.isFinite(v) ? `${what} is ${v}` : null;
  for (const l of leaves) {
    const target = l.target === 'stop' ? (l.path.at(-1)?.split(':')[0] ?? 'oven') : l.target;
    const found = bad('the yield', l.yield) ?? bad('the rate', l.rate) ?? bad('the displacement', l.displacement?.x) ?? bad('the displacement', l.displacement?.z)
      ?? bad('the spread', l.spread?.x) ?? bad('the spread', l.spread?.z) ?? bad('the captured fraction', l.captured);
    if (found) throw new RunError(`${where(target)}: ${found} on the path ${l.path.join(' ') || '(oven)'}; the set-points give no finite result (check the speeds, fields and distances of this path)`);
  }
  for (const d of detectors) {
    const found = bad('the yield', d.yield) ?? bad('the rate', d.rate) ?? bad('the counts', d.counts) ?? bad('σ', d.sigma)
      ?? bad('S/B', d.signalToBackground) ?? bad('the time to precision', d.timeToPrecision.seconds);
    if (found) throw new RunError(`${where(d.id)}: ${found}; the set-points give no finite result (check its efficiency, background and dwell, and the flux)`);
  }
  if (!Number.isFinite(lost)) throw new RunError(`the lost fraction is ${lost}; the set-points give no finite result`);
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

function velocityPlot(d: VelocityDistribution): RunResult['velocity'] {
  if (d.kind === 'fixed') return { speeds: [d.speed], density: [1], kind: 'fixed' };
  if (d.kind === 'table') return { speeds: [...d.speeds], density: [...d.weights], kind: 'table' };
  const [lo, hi] = speedRange(d);
  const speeds = Array.from({ length: 121 }, (_, i) => lo + ((hi - lo) * i) / 120);
  return { speeds, density: speeds.map((v) => densityAt(d, v)), kind: d.kind };
}

/**
 * docs/design.md, "Velocity distributions": warn when a phase steps by more than π between neighbouring tabulated speeds. The warning
 * says how much of the yield rides on such terms (trace weight × table weight of the pairs concerned).
 */
function checkTable(line: Beamline, leaves: FinePath[], warnings: Set<string>): void {
  const pts = line.oven.velocity.kind === 'table' ? line.oven.velocity.points : [];
  if (pts.length < 2) return;
  const total = pts.reduce((s, p) => s + p[1], 0);
  let worst = 0, weight = 0;
  for (const l of leaves) {
    for (const { phi, weight: w } of l.spec ? specPhaseWeights(l.spec) : []) {
      for (let k = 1; k < pts.length; k++) {
        const step = phi * Math.abs(1 / pts[k - 1][0] - 1 / pts[k][0]);
        if (step > Math.PI) {
          worst = Math.max(worst, step);
          weight = Math.max(weight, w * (pts[k - 1][1] + pts[k][1]) / total);
        }
      }
    }
  }
  if (worst > Math.PI && weight > 1e-9) warnings.add(`oven.velocity.points: a phase steps by up to ${worst.toExponential(2)} rad between neighbouring tabulated speeds (more than π) on terms that carry up to ${weight.toExponential(1)} of a yield: the table cannot resolve them, and its average is the table's, not the beam's`);
}
