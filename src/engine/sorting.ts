/**
 * Magnet sorting and port selection in the walk: a magnet's (or recombiner's) sorting of the states
 * (system.ts sortStates), cached per element and by value; the states a port selects from a path's state,
 * kept with that state; where each port is routed; and whether a drift before the magnet can be skipped.
 */
import { BoundedCache, CacheFamily, IdentityCache } from '../physics/cache.ts';
import { type CMat, cmatZeros, cmatMul, cmatOwn } from '../physics/cmat.ts';
import { vecCross, vecDot, vecNorm, vecUnit, type Vec3 } from '../physics/rotation.ts';
import type { Magnet, Recombiner } from '../beamline/types.ts';
import { sortStates, projectorOf, SpeciesError, type Sorting, type Component } from './system.ts';
import { specKraus, specProjectDiag, type SpecState } from './spectral.ts';
import { type NodeState, type State, PureNodes, ScaledNodes, isNodes, mapNodes, conj } from './nodes.ts';
import { RunError } from './errors.ts';
import type { WalkCtx } from './steps/step.ts';

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

export function getSorting(ctx: WalkCtx, e: Magnet | Recombiner): Sorting {
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
export function selectStates(st: State, comps: readonly Component[], leafNext = false): State {
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

/**
 * ⟨k|ρ_s|k⟩ at every node of pure nodes, ρ_s's entries formed one by one as PureNodes forms them and summed in the
 * order of the general loop below: the same numbers without a matrix per node.
 */
function pureScales(st: PureNodes, v: CMat): Float64Array {
  const d = st.d, vr = v.re, vi = v.im, yr = st.yr, yi = st.yi, xr = st.xr, xi = st.xi;
  const scales = new Float64Array(st.speeds.length);
  for (let k = 0; k < scales.length; k++) {
    const o = k * d;
    let sr = 0;
    for (let i = 0; i < d; i++) {
      const pr = yr[o + i], pi = yi[o + i];
      const qr = 0 + (pr * xr - pi * xi), qi = 0 + (pr * xi + pi * xr);
      let tr = 0, ti = 0;
      for (let j = 0; j < d; j++) {
        const cr = yr[o + j], ci = -yi[o + j];
        const rr = 0 + (qr * cr - qi * ci), ri = 0 + (qr * ci + qi * cr);
        tr += rr * vr[j] - ri * vi[j];
        ti += rr * vi[j] + ri * vr[j];
      }
      sr += vr[i] * tr + vi[i] * ti;
    }
    scales[k] = sr;
  }
  return scales;
}

function selectNodes(st: NodeState, comps: readonly Component[], leafNext: boolean): NodeState {
  if (comps.length === 1) {
    // |k⟩⟨k| ρ |k⟩⟨k| = ⟨k|ρ|k⟩ |k⟩⟨k|
    const v = comps[0].vector, p = rank1Cached(comps[0]);
    if (st instanceof PureNodes) return new ScaledNodes(st.speeds, st.weights, p, pureScales(st, v));
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
export function portComponents(sorting: Sorting, port: string): readonly Component[] {
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

const commuteCache = new WeakMap<Sorting, Map<CMat, boolean>>();

/** True when every state the magnet sorts into is an eigenvector of the line's drift Hamiltonian. */
export function driftCommutesWithSort(ctx: WalkCtx, e: Magnet): boolean {
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

/** Where a magnet sends the states of a component's port (by name, else "*"). */
export function routeOf(e: Magnet, c: Component): string {
  const to = e.ports[c.port] ?? e.ports['*'];
  if (to === undefined) throw new RunError(`${e.path}.ports: port "${c.port}" is not routed (route it by name or with "*")`);
  return to;
}
