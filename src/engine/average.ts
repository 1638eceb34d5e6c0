/**
 * The velocity average of a path's state: ⟨ρ⟩ = W A W† with A = Σ_t X_t ∘ χ(φ_t + Ω), χ the characteristic
 * function of the beam's velocity distribution (physics/velocity.ts), each Bohr frequency on its own
 * (spectral.ts has the form of the state). For a table or a single speed the sum is exact and separable
 * (d phase factors per speed), in WebAssembly where it runs (physics/kernels.ts) and in JavaScript otherwise;
 * the trace of the average (a path's yield), its positivity test, the trace at the speed nodes of the
 * detector-plane geometry and the second moment ⟨Tr ρ · s²⟩.
 */
import { type CMat, cmatZeros, zeroedF64 } from '../physics/cmat.ts';
import { charFunction, effusiveCharInto, type VelocityDistribution } from '../physics/velocity.ts';
import { expNegI } from '../physics/trig.ts';
import { tableKernel, denseKernels } from '../physics/kernels.ts';
import { type SpecState, type SpecTerm, type SharedAverages, addPhased, basisCols, phaseLength, significance } from './spectral.ts';
import { type BasisFactors, blocksGramEntries, blocksSandwich, gramOf } from './blocks.ts';
import { workArray } from './work.ts';

/**
 * What computing one average did to the run's CharCache: the table sums' speeds (and whether the WebAssembly kernel
 * ran) and every χ looked up that keeps quadrature nodes, with its value and nodes. An average is kept with its
 * state and may serve later runs (a scan's unchanged prefix); the first time a run uses it, the journal is applied
 * to that run's cache as if the average were computed there, so the run reports the same nodes as one that
 * computed everything itself.
 */
interface ChiJournal {
  table: number;
  wasm: boolean;
  readonly phis: number[];
  readonly values: CharValue[];
}

/** χ(φ) = re + i·im, its error and the quadrature nodes it took. */
type CharValue = readonly [number, number, number, number];

/** Caches χ(Φ) of one distribution (many leaves share frequencies); one per run and isotope. */
export class CharCache {
  private readonly map = new Map<number, CharValue>();
  nodes = 0;
  /** True once a table sum ran in the WebAssembly kernel (physics/kernels.ts). */
  wasm = false;
  /** The averages this run has used (computed or kept from an earlier run). */
  private readonly used = new WeakSet<Averaged>();
  /** The journal of the average being computed. */
  journal: ChiJournal | null = null;
  /** Where a recorded walk lists the averages it uses (replay.ts), in order. */
  trail: Averaged[] | null = null;
  constructor(readonly dist: VelocityDistribution) {}
  private readonly out = new Float64Array(3);
  /**
   * χ(φ) as into[0] + i·into[1] with its error into[2], in an array of the cache that the next call
   * overwrites (the effusive panels are read without allocating).
   */
  into(phi: number): Float64Array {
    const o = this.out;
    if (this.dist.kind === 'effusive' && effusiveCharInto(this.dist.a, phi, o)) return o;
    const v = this.get(phi);
    o[0] = v[0];
    o[1] = v[1];
    o[2] = v[2];
    return o;
  }
  get(phi: number): CharValue {
    if (phi === 0) return [1, 0, 0, 0];
    let v = this.map.get(phi);
    if (!v) {
      const c = charFunction(this.dist, phi, 0);
      this.nodes += c.nodes;
      v = [c.re, c.im, c.error, c.nodes];
      // a value read off the effusive panels (no quadrature nodes) is cheaper to evaluate again than to keep
      if (c.nodes === 0) return v;
      this.keep(phi, v);
    }
    if (this.journal) {
      this.journal.phis.push(phi);
      this.journal.values.push(v);
    }
    return v;
  }
  private keep(phi: number, v: CharValue): void {
    if (this.map.size > 200_000) this.map.clear();
    this.map.set(phi, v);
  }
  /** The table sums of one average: their speeds as nodes. */
  tableSum(speeds: number, wasm: boolean): void {
    this.nodes += speeds;
    if (wasm) this.wasm = true;
    if (this.journal) {
      this.journal.table += speeds;
      if (wasm) this.journal.wasm = true;
    }
  }
  /**
   * A run uses an average (`computed`: it has just computed it with this cache); the first time, what computing it
   * did to the cache is done to this one (ChiJournal).
   */
  use(avg: Averaged, computed = false): void {
    this.trail?.push(avg);
    if (this.used.has(avg)) return;
    this.used.add(avg);
    if (computed) return;
    const j = avg.journal;
    if (!j) return;
    this.nodes += j.table;
    if (j.wasm) this.wasm = true;
    for (let i = 0; i < j.phis.length; i++) {
      const phi = j.phis[i];
      if (this.map.has(phi)) continue;
      this.nodes += j.values[i][3];
      this.keep(phi, j.values[i]);
    }
  }
}

export interface Averaged {
  /** A (r×r): the beam average of the state in its basis W. */
  readonly A: CMat;
  /** What computing A did to the run's CharCache (CharCache.use). */
  readonly journal?: ChiJournal;
  readonly error: number;
  readonly hermiticity: number;
  /** False when A has an eigenvalue below −(1e-12·Tr A + 1e-15) (fractions of the oven flux). */
  readonly positive: boolean;
}

/** A = Σ_t X_t ∘ χ(φ_t + Ω), computed once per state (module doc). */
export function specAverageBasis(st: SpecState, chi: CharCache): Averaged {
  const hit = st.shared.avg;
  if (hit) {
    chi.use(hit);
    return hit;
  }
  const journal: ChiJournal = { table: 0, wasm: false, phis: [], values: [] };
  const outer = chi.journal;
  chi.journal = journal;
  try {
    const res = averageBasis(st, chi, journal);
    st.shared.avg = res;
    chi.use(res, true);
    return res;
  } finally {
    chi.journal = outer;
  }
}

/** specAverageBasis's computation (chi writes what it looks up into the journal of the average). */
function averageBasis(st: SpecState, chi: CharCache, journal: ChiJournal): Averaged {
  const r = basisCols(st);
  const A = cmatZeros(r, r);
  let error = 0;
  const d = chi.dist;
  // how far rounding can move A: a phase φ·s is known to about ε·|φ·s| (s = 1/v), so an entry summed over the
  // terms moves by up to ε Σ_t |X_t,ab| |φ_t + Ω_ab| s_max; the positivity test allows that much (and the
  // quadrature's own error estimate below)
  let vmin = 0;
  if ((d.kind === 'table' || d.kind === 'fixed') && st.mu) {
    const speeds = d.kind === 'fixed' ? Float64Array.of(d.speed) : d.speeds;
    chi.tableSum(d.kind === 'fixed' ? 1 : d.speeds.length, separableAverage(st, speeds, d.kind === 'fixed' ? Float64Array.of(1) : d.weights, A));
    vmin = Infinity;
    for (let k = 0; k < speeds.length; k++) vmin = Math.min(vmin, speeds[k]);
  } else {
    for (const t of st.terms) {
      // for φ = 0, χ(Ω_ba) = conj χ(Ω_ab): one evaluation serves both entries
      const sym = t.phi === 0 && st.mu !== null;
      for (let a = 0; a < r; a++) for (let b = sym ? a : 0; b < r; b++) {
        const i = a * r + b;
        const xr = t.X.re[i], xi = t.X.im[i];
        const j = b * r + a;
        const yr = sym ? t.X.re[j] : 0, yi = sym ? t.X.im[j] : 0;
        if (xr === 0 && xi === 0 && yr === 0 && yi === 0) continue;
        const c = chi.into(phaseLength(st, t, a, b));
        const cr = c[0], ci = c[1], ce = c[2];
        A.re[i] += xr * cr - xi * ci;
        A.im[i] += xr * ci + xi * cr;
        // |x|·error (the entries are fractions of the flux: no overflow in the square)
        error += Math.sqrt(xr * xr + xi * xi) * ce;
        if (sym && a !== b) {
          A.re[j] += yr * cr + yi * ci;
          A.im[j] += yi * cr - yr * ci;
          error += Math.sqrt(yr * yr + yi * yi) * ce;
        }
      }
    }
  }
  let herm = 0, tr = 0;
  for (let a = 0; a < r; a++) {
    tr += A.re[a * r + a];
    for (let b = a + 1; b < r; b++) {
      const dr = A.re[a * r + b] - A.re[b * r + a], di = A.im[a * r + b] + A.im[b * r + a];
      herm = Math.max(herm, dr * dr + di * di);
    }
    herm = Math.max(herm, A.im[a * r + a] * A.im[a * r + a] * 4);
  }
  herm = Math.sqrt(herm);
  const delta = 1e-12 * Math.abs(tr) + 1e-15 + error;
  // the rounding bound is formed only where the plain test fails (it costs a pass over the terms)
  const positive = isPositive(A, delta) || (vmin > 0 && isPositive(A, delta + phaseRounding(st, r) / vmin));
  return { A, error, hermiticity: herm, positive, journal };
}

/** 8 ε Σ_t Σ_ab |X_t,ab| |φ_t + Ω_ab| (rad·m/s): over the slowest speed, a bound on what rounding the phases moves A by. */
function phaseRounding(st: SpecState, r: number): number {
  let sum = 0;
  for (const t of st.terms) {
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      const x = Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]);
      if (x !== 0) sum += x * Math.abs(phaseLength(st, t, a, b));
    }
  }
  return 8 * Number.EPSILON * sum;
}

/**
 * A_ab = Σ_k w_k Σ_t X_t,ab e^{−iφ_t s_k} z_a(k) z̄_b(k), z_a(k) = e^{−iμ_a s_k}, s_k = 1/v_k: the exact
 * finite sum of a table (or one speed), d phase factors per speed instead of d². Returns true when the
 * WebAssembly kernel did the sums.
 */
function separableAverage(st: SpecState, speeds: Float64Array, weights: Float64Array, A: CMat): boolean {
  const r = basisCols(st);
  const mu = st.mu!;
  // the WebAssembly kernel (physics/kernels.ts) where it runs, else the same sums in JavaScript
  const kernel = tableKernel();
  kernel?.table(speeds, weights);
  const wasm = kernel !== null && kernel.phases(mu);
  // with φ = 0 the diagonal S_aa = Σ_k w_k |e^{−iμ_a s_k}|² is the weights' sum for every a: no pair sum
  const wsum = weightSum(weights);
  // in the kernel, A = Σ_t X_t ∘ S_t stays in the module from the pairs to the sum (no copies of S);
  // a term it declines (a phase of 3e9 rad or more) takes the JavaScript path below
  let pending: readonly SpecTerm[] = st.terms;
  if (wasm) {
    kernel.beginAverage();
    const rest: SpecTerm[] = [];
    for (const term of st.terms) if (!kernel.accumulate(term.phi, term.X, wsum)) rest.push(term);
    kernel.endAverage(A);
    pending = rest;
  }
  if (pending.length === 0) return wasm;
  // S is read only where todo is set, after the JavaScript path wrote it there
  const S = pairScratch(2 * r * r);
  const todo = todoScratch(r * r);
  const js = jsTable(mu, speeds, weights, r);
  for (const term of pending) {
    const cut = 1e-18 * significance(term);
    const xr = term.X.re, xi = term.X.im;
    const hermitian = term.phi === 0;
    // entries needed: with φ = 0, S is Hermitian and only b > a is summed (S_ba = conj S_ab)
    let any = false;
    if (hermitian) {
      for (let a = 0; a < r; a++) {
        todo[a * r + a] = 0;
        for (let b = a + 1; b < r; b++) {
          const i = a * r + b, j = b * r + a;
          const need = Math.abs(xr[i]) + Math.abs(xi[i]) > cut || Math.abs(xr[j]) + Math.abs(xi[j]) > cut;
          todo[i] = need ? 1 : 0;
          todo[j] = 0;
          any ||= need;
        }
      }
    } else {
      for (let i = 0; i < r * r; i++) {
        const need = Math.abs(xr[i]) + Math.abs(xi[i]) > cut;
        todo[i] = need ? 1 : 0;
        any ||= need;
      }
    }
    if (hermitian) for (let a = 0; a < r; a++) {
      const i = a * r + a;
      A.re[i] += xr[i] * wsum;
      A.im[i] += xi[i] * wsum;
    }
    if (!any) continue;
    jsPairs(js, term.phi, todo, S);
    for (let a = 0; a < r; a++) {
      for (let b = hermitian ? a + 1 : 0; b < r; b++) {
        const i = a * r + b;
        if (!todo[i]) continue;
        const j = b * r + a;
        const sr = S[2 * i], si = S[2 * i + 1];
        A.re[i] += xr[i] * sr - xi[i] * si;
        A.im[i] += xr[i] * si + xi[i] * sr;
        if (hermitian) {
          A.re[j] += xr[j] * sr + xi[j] * si;
          A.im[j] += xi[j] * sr - xr[j] * si;
        }
      }
    }
  }
  return wasm;
}

interface JsTable {
  readonly n: number;
  readonly r: number;
  readonly s: Float64Array;
  readonly zr: Float64Array;
  readonly zi: Float64Array;
  /** Weights applied to both factors (√w), or once, in the weighting of each term (negative weights). */
  readonly split: boolean;
  readonly weights: Float64Array;
}

const inverseSpeeds = new WeakMap<Float64Array, Float64Array>();
const weightSums = new WeakMap<Float64Array, number>();
/** Σ_k w_k of a table, in order. */
function weightSum(weights: Float64Array): number {
  let sum = weightSums.get(weights);
  if (sum === undefined) {
    sum = 0;
    for (let k = 0; k < weights.length; k++) sum += weights[k];
    weightSums.set(weights, sum);
  }
  return sum;
}
/**
 * z_a(k) = √w_k e^{−iμ_a s_k} in JavaScript, stored by row a (contiguous in k), with s_k = 1/v_k, as the
 * kernel has them (physics/kernels.ts); a table with a negative weight keeps z unweighted instead.
 */
function jsTable(mu: Float64Array, speeds: Float64Array, weights: Float64Array, r: number): JsTable {
  const n = speeds.length;
  let s = inverseSpeeds.get(speeds);
  if (!s) {
    s = new Float64Array(n);
    for (let k = 0; k < n; k++) s[k] = 1 / speeds[k];
    inverseSpeeds.set(speeds, s);
  }
  const split = weights.every((w) => w >= 0);
  const sc = scratch(2 * n * r);
  const zr = sc.subarray(0, n * r), zi = sc.subarray(n * r, 2 * n * r);
  for (let a = 0; a < r; a++) {
    const m = mu[a], o = a * n;
    for (let k = 0; k < n; k++) {
      expNegI(m * s[k], zr, zi, o + k);
      if (split) {
        const q = Math.sqrt(weights[k]);
        zr[o + k] *= q;
        zi[o + k] *= q;
      }
    }
  }
  return { n, r, s, zr, zi, split, weights };
}

/** The JavaScript path of one term's pair sums: e_k = e^{−iφ s_k} (times w_k where z is unweighted), S = Σ_k e_k z_a conj z_b. */
function jsPairs(t: JsTable, phi: number, todo: Uint8Array, S: Float64Array): void {
  const { n, r, s, zr, zi, split, weights } = t;
  if (phi === 0 && split) {
    pairSums(zr, zi, zr, zi, n, r, todo, S);
    return;
  }
  const es = scratch3(2 * n);
  const er = es.subarray(0, n), ei = es.subarray(n, 2 * n);
  for (let k = 0; k < n; k++) {
    if (phi === 0) {
      er[k] = 1;
      ei[k] = 0;
    } else expNegI(phi * s[k], er, ei, k);
    if (!split) {
      er[k] *= weights[k];
      ei[k] *= weights[k];
    }
  }
  const ys = scratch2(2 * n * r);
  const yr = ys.subarray(0, n * r), yi = ys.subarray(n * r, 2 * n * r);
  for (let a = 0; a < r; a++) {
    const o = a * n;
    for (let k = 0; k < n; k++) {
      yr[o + k] = er[k] * zr[o + k] - ei[k] * zi[o + k];
      yi[o + k] = er[k] * zi[o + k] + ei[k] * zr[o + k];
    }
  }
  pairSums(yr, yi, zr, zi, n, r, todo, S);
}

// the table sums' work arrays
const scratch = workArray((n) => new Float64Array(n)), scratch2 = workArray((n) => new Float64Array(n)), scratch3 = workArray((n) => new Float64Array(n));
const todoBuffer = workArray((n) => new Uint8Array(n)), pairScratch = workArray((n) => new Float64Array(n));
function todoScratch(n: number): Uint8Array {
  return todoBuffer(n).subarray(0, n);
}

/**
 * S_ab = Σ_k y_a(k) conj(z_b(k)) for the entries marked in `todo`, in 2×2 blocks of (a, b) so that
 * each loaded speed serves four sums (S is written only where todo is set).
 */
function pairSums(yr: Float64Array, yi: Float64Array, zr: Float64Array, zi: Float64Array, n: number, r: number, todo: Uint8Array, S: Float64Array): void {
  const half = r & ~1;
  for (let a = 0; a < half; a += 2) {
    const oa = a * n, oa1 = oa + n;
    for (let b = 0; b < half; b += 2) {
      const i = a * r + b;
      if (!(todo[i] | todo[i + 1] | todo[i + r] | todo[i + r + 1])) continue;
      const ob = b * n, ob1 = ob + n;
      if (a === b && !(todo[i] | todo[i + r] | todo[i + r + 1])) {
        // a diagonal block of a Hermitian S: only (a, a + 1)
        let sr = 0, si = 0;
        for (let k = 0; k < n; k++) {
          const ar = yr[oa + k], ai = yi[oa + k], br = zr[ob1 + k], bi = zi[ob1 + k];
          sr += ar * br + ai * bi;
          si += ai * br - ar * bi;
        }
        S[2 * i + 2] = sr;
        S[2 * i + 3] = si;
        continue;
      }
      let p00r = 0, p00i = 0, p01r = 0, p01i = 0, p10r = 0, p10i = 0, p11r = 0, p11i = 0;
      for (let k = 0; k < n; k++) {
        const a0r = yr[oa + k], a0i = yi[oa + k], a1r = yr[oa1 + k], a1i = yi[oa1 + k];
        const b0r = zr[ob + k], b0i = zi[ob + k], b1r = zr[ob1 + k], b1i = zi[ob1 + k];
        p00r += a0r * b0r + a0i * b0i; p00i += a0i * b0r - a0r * b0i;
        p01r += a0r * b1r + a0i * b1i; p01i += a0i * b1r - a0r * b1i;
        p10r += a1r * b0r + a1i * b0i; p10i += a1i * b0r - a1r * b0i;
        p11r += a1r * b1r + a1i * b1i; p11i += a1i * b1r - a1r * b1i;
      }
      const q = 2 * i, q1 = q + 2 * r;
      S[q] = p00r; S[q + 1] = p00i; S[q + 2] = p01r; S[q + 3] = p01i;
      S[q1] = p10r; S[q1 + 1] = p10i; S[q1 + 2] = p11r; S[q1 + 3] = p11i;
    }
  }
  // the odd row and column, if r is odd
  for (let a = 0; a < r; a++) for (let b = a < half ? half : 0; b < r; b++) {
    const i = a * r + b;
    if (!todo[i]) continue;
    const oa = a * n, ob = b * n;
    let sr = 0, si = 0;
    for (let k = 0; k < n; k++) {
      const ar = yr[oa + k], ai = yi[oa + k], br = zr[ob + k], bi = zi[ob + k];
      sr += ar * br + ai * bi;
      si += ai * br - ar * bi;
    }
    S[2 * i] = sr;
    S[2 * i + 1] = si;
  }
}

/** Cholesky of A + δ·1: succeeds exactly when every eigenvalue of the Hermitian part exceeds −δ. */
export function isPositive(a: CMat, delta: number): boolean {
  const n = a.rows;
  // the same factorisation in WebAssembly where it runs (physics/kernels.wat chol)
  const dense = denseKernels();
  if (dense) return dense.positive(a.re, a.im, n, delta);
  const lr = zeroedF64(n * n), li = zeroedF64(n * n);
  for (let j = 0; j < n; j++) {
    let djj = 0.5 * (a.re[j * n + j] + a.re[j * n + j]) + delta;
    for (let k = 0; k < j; k++) djj -= lr[j * n + k] ** 2 + li[j * n + k] ** 2;
    if (!(djj > 0)) return false;
    const ljj = Math.sqrt(djj);
    lr[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      // Hermitian part entry (i, j)
      let sr = 0.5 * (a.re[i * n + j] + a.re[j * n + i]);
      let si = 0.5 * (a.im[i * n + j] - a.im[j * n + i]);
      for (let k = 0; k < j; k++) {
        // L_ik conj(L_jk)
        sr -= lr[i * n + k] * lr[j * n + k] + li[i * n + k] * li[j * n + k];
        si -= li[i * n + k] * lr[j * n + k] - lr[i * n + k] * li[j * n + k];
      }
      lr[i * n + j] = sr / ljj;
      li[i * n + j] = si / ljj;
    }
  }
  return true;
}

/** Tr⟨ρ⟩ = Σ_ab (W†W)_ba A_ab without forming ⟨ρ⟩. */
export function specAverageTrace(st: SpecState, chi: CharCache): { value: number; error: number; hermiticity: number; positive: boolean } {
  const av = specAverageBasis(st, chi);
  // W and the shared A of a state never change: its trace is computed once (a scan's unchanged prefix)
  const memo = (st.memo ??= {});
  let value = memo.trace;
  if (value === undefined) {
    value = st.fac ? traceFactored(st.fac, av.A, st.shared) : traceWAW(st.W, av.A);
    memo.trace = value;
  }
  return { value, error: av.error, hermiticity: av.hermiticity, positive: av.positive };
}

/** Speed sets whose phase factors a state keeps (the detector plane's grids), and the largest set kept. */
const KEPT_SPEED_SETS = 8;
const KEPT_SPEEDS_MAX = 8192;

/**
 * Tr ρ(s) on a set of speeds, keeping only terms whose phase-length is below `phiMax` (faster terms
 * average out against the smooth weights they are used with; phiMax = Infinity keeps all). The
 * matrices Σ_t X_t ∘ e^{−i(φ_t+Ω)/v_k} are computed once per state and speed set.
 */
export function specTraceAt(st: SpecState, speeds: ArrayLike<number>, phiMax: number): Float64Array {
  const r = basisCols(st);
  // kept per speed set (the detector plane's grids of doubling panels each have theirs); a large set (a simulated
  // run's atoms) is used once and not kept
  const kept = (st.shared.nodesBy ??= []);
  let hit = kept.find((h) => h.speeds === speeds && h.phiMax === phiMax);
  if (!hit) {
    // the contributions (term, entry (a, b)) with |φ + Ω_ab| ≤ phiMax, found once: the other entries
    // are 0 at every speed
    const slotOf = new Map<number, number>();
    const pairs: number[] = [];
    const cSlot: number[] = [], cRe: number[] = [], cIm: number[] = [], cF: number[] = [];
    for (const t of st.terms) {
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        const i = a * r + b;
        const xr = t.X.re[i], xi = t.X.im[i];
        if (xr === 0 && xi === 0) continue;
        const f = phaseLength(st, t, a, b);
        if (Math.abs(f) > phiMax) continue;
        let slot = slotOf.get(i);
        if (slot === undefined) {
          slot = pairs.length;
          slotOf.set(i, slot);
          pairs.push(i);
        }
        cSlot.push(slot); cRe.push(xr); cIm.push(xi); cF.push(f);
      }
    }
    const np = pairs.length;
    // a state without phases (every contribution's phase-length 0) is the same at every speed: one row serves all
    const still = cF.every((f) => f === 0);
    const ns = still ? Math.min(1, speeds.length) : speeds.length;
    const mre = new Float64Array(ns * np), mim = new Float64Array(ns * np);
    for (let k = 0; k < ns; k++) {
      const v = speeds[k], o = k * np;
      for (let c = 0; c < cSlot.length; c++) addPhased(mre, mim, o + cSlot[c], cRe[c], cIm[c], cF[c] / v);
    }
    hit = { speeds, phiMax, pairs: Int32Array.from(pairs), mre, mim, still };
    if (ns <= KEPT_SPEEDS_MAX) {
      kept.push(hit);
      if (kept.length > KEPT_SPEED_SETS) kept.shift();
    }
  }
  // Tr(W M W†) = Σ_ab M_ab (W†W)_ba over the active entries: (W†W)_ba = Σ_c conj(W_cb) W_ca
  const { pairs, mre, mim } = hit;
  const np = pairs.length;
  const gre = new Float64Array(np), gim = new Float64Array(np);
  const f = st.fac;
  if (f) blocksGramEntries(f, r, pairs, gre, gim);
  else {
    const W = st.W, d = W.rows;
    for (let p = 0; p < np; p++) {
      const i = pairs[p], a = (i / r) | 0, b = i - a * r;
      let sr = 0, si = 0;
      for (let c = 0; c < d; c++) {
        const xr = W.re[c * r + b], xi = -W.im[c * r + b];
        if (xr === 0 && xi === 0) continue;
        const yr = W.re[c * r + a], yi = W.im[c * r + a];
        sr += xr * yr - xi * yi;
        si += xr * yi + xi * yr;
      }
      gre[p] = sr; gim[p] = si;
    }
  }
  const out = new Float64Array(speeds.length);
  const rows = hit.still ? Math.min(1, out.length) : out.length;
  const dense = denseKernels();
  if (dense) dense.rowDots(mre, mim, gre, gim, rows, np, out);
  else {
    for (let k = 0; k < rows; k++) {
      const o = k * np;
      let tr = 0;
      for (let p = 0; p < np; p++) tr += mre[o + p] * gre[p] - mim[o + p] * gim[p];
      out[k] = tr;
    }
  }
  if (rows < out.length) out.fill(out[0], rows);
  return out;
}

/**
 * ⟨Tr ρ(s) · s²⟩ over the distribution, each frequency on its own (χ₂ of physics/velocity.ts): as for
 * the yield, A₂ = Σ_t X_t ∘ χ₂(φ_t + Ω) is computed once per state and shared by its branches.
 */
export function specTraceMoment(st: SpecState, dist: VelocityDistribution, n: number, cache: Map<number, [number, number]>): number {
  const r = st.W.cols;
  let A = st.shared.m2;
  if (!A) {
    A = cmatZeros(r, r);
    for (const t of st.terms) {
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        const i = a * r + b;
        const xr = t.X.re[i], xi = t.X.im[i];
        if (xr === 0 && xi === 0) continue;
        const f = phaseLength(st, t, a, b);
        const key = Math.abs(f);
        let c = cache.get(key);
        if (!c) {
          const v = charFunction(dist, key, n);
          c = [v.re, v.im];
          cache.set(key, c);
        }
        const ci = f < 0 ? -c[1] : c[1];
        A.re[i] += xr * c[0] - xi * ci;
        A.im[i] += xr * ci + xi * c[0];
      }
    }
    st.shared.m2 = A;
  }
  // as the trace: B A₂ B† once for the states that share A₂, then Tr(L†L · B A₂ B†) per state
  if (st.fac) return traceLab(st.fac, (st.shared.lab2 ??= blocksSandwich(st.fac, A)));
  return traceWAW(st.W, A);
}

/**
 * Tr(W A W†) for W = L·B as Tr(L†L · N), N = B A B† (A's Hermitian part) computed once for all the
 * states that share A and B (the ports of one magnet), each entry over the few columns of two rows of
 * B; L†L is kept with L.
 */
function traceFactored(f: BasisFactors, A: CMat, shared: SharedAverages): number {
  return traceLab(f, (shared.lab ??= blocksSandwich(f, A)));
}

/** Tr(L†L · N) for N = B A B† of a factored basis. */
function traceLab(f: BasisFactors, n: CMat): number {
  const d = n.rows;
  if (!f.left) {
    let tr = 0;
    for (let i = 0; i < d; i++) tr += n.re[i * d + i];
    return tr;
  }
  const m = gramOf(f.left);
  // Σ_ij M_ij N_ji with both Hermitian: the diagonal plus twice the real part above it
  let diag = 0, off = 0;
  for (let i = 0; i < d; i++) {
    diag += m.re[i * d + i] * n.re[i * d + i];
    for (let j = i + 1; j < d; j++) off += m.re[i * d + j] * n.re[i * d + j] + m.im[i * d + j] * n.im[i * d + j];
  }
  return diag + 2 * off;
}

/**
 * Re Tr(W A W†) = Re Σ_ab (W†W)_ba A_ab. Only the Hermitian part H = (A + A†)/2 contributes to the real
 * part (the anti-Hermitian part gives an imaginary trace), and with G = W†W Hermitian too the sum is
 * Σ_a H_aa G_aa + 2 Σ_{a<b} Re(H_ab G_ba): half of G is computed.
 */
function traceWAW(W: CMat, A: CMat): number {
  const d = W.rows, r = W.cols;
  const wr = W.re, wi = W.im;
  let tr = 0;
  for (let a = 0; a < r; a++) {
    for (let b = a; b < r; b++) {
      // G_ba = Σ_i conj(W_ib) W_ia
      let gr = 0, gi = 0;
      for (let i = 0; i < d; i++) {
        const o = i * r;
        const xr = wr[o + b], xi = wi[o + b], yr = wr[o + a], yi = wi[o + a];
        gr += xr * yr + xi * yi;
        gi += xr * yi - xi * yr;
      }
      const hr = 0.5 * (A.re[a * r + b] + A.re[b * r + a]), hi = 0.5 * (A.im[a * r + b] - A.im[b * r + a]);
      const t = hr * gr - hi * gi;
      tr += a === b ? t : 2 * t;
    }
  }
  return tr;
}
