/**
 * The velocity-resolved density matrix of one path, kept exact frequency by frequency.
 *
 * With s = 1/v, every step of a line is either independent of v (a Kraus operator K: a selection, a
 * rotator, a recombiner) or a propagator U(s) = V e^{−iΛℓs} V† (a drift, a field region, the two
 * factors of the rotating-wave RF solution). So the state is
 *
 *   ρ(s) = Σ_t W (X_t ∘ e^{−i(φ_t + Ω)s}) W†,      Ω_ab = μ_a − μ_b,  μ = Λℓ  (rad·m/s),
 *
 * a sum of terms with one phase-length φ_t each, written in the basis W (the eigenbasis of the last
 * propagator, carried through the Kraus operators since: W → K W). The beam average of the state is
 * W A W† with A_ab = Σ_t X_t,ab χ(φ_t + Ω_ab), χ the characteristic function of the velocity
 * distribution (physics/velocity.ts): each Bohr frequency is averaged on its own, and no grid of speeds
 * can alias a phase of 10⁷ rad. A is shared by every branch that differs only by Kraus operators, and
 * is computed once. A new propagator first expands the state into lab-frame terms of equal
 * phase-length (merged within 1e-13 of the largest), then changes basis.
 *
 * The average itself (χ, the exact table sums, traces, positivity) is average.ts; the products with a basis
 * kept as the factors of a field's m_F blocks are blocks.ts.
 */
import { type CMat, cmatMul, cmatDagger, cmatZeros, cmatIdentity, cmatNorm, zeroedF64, copyF64, cmatOwn, cmatSandwichParts } from '../physics/cmat.ts';
import { expNegI } from '../physics/trig.ts';
import { denseKernels } from '../physics/kernels.ts';
import type { Averaged } from './average.ts';
import {
  type BasisFactors, type PropagatorFactors, leftTimesBlocks, kTimesLeft, blocksDaggerTimes, blocksDaggerSandwich, rotatedBasis,
} from './blocks.ts';
import { workArray } from './work.ts';
import { CostError } from './errors.ts';

export type { BasisFactors, PropagatorFactors } from './blocks.ts';
export { workArray } from './work.ts';

export interface SpecTerm {
  readonly phi: number;
  readonly X: CMat;
}

export interface SpecState {
  /** d×r basis (formed on first use where the state keeps it as factors). */
  readonly W: CMat;
  /** W = left · blocks with blocks sparse by columns, where the basis came from a field's m_F blocks. */
  readonly fac?: BasisFactors;
  /** μ_a (rad·m/s) of the basis columns, Ω_ab = μ_a − μ_b; null when all phases are in φ. */
  readonly mu: Float64Array | null;
  readonly terms: readonly SpecTerm[];
  /** Averages of the terms, shared by every state that differs only by Kraus operators (filled lazily). */
  readonly shared: SharedAverages;
  /**
   * Values kept with this state object (its trace, the engine's port selections of it), as fields rather
   * than in WeakMaps: a scan makes a new state per point, and weak tables of them slow every collection.
   */
  memo?: StateMemo;
}

export interface StateMemo {
  trace?: number;
  /** sorting.ts: the states its ports select from this one (kept and leaf-next forms). */
  selections?: [Map<unknown, SpecState>, Map<unknown, SpecState>];
  /**
   * For a lab-frame state (mu = null) whose terms are Hermitian: Q_t = M X_t M† with M = R†W, by field-axis
   * rotation R (null: some term is not Hermitian). A field region along that axis then needs only
   * B† Q_t B per point (specPropagate), and a scan over the field's size reuses Q_t.
   */
  rotated?: Map<CMat | null, CMat[] | null>;
}

export interface SharedAverages {
  avg?: Averaged;
  /** For a factored basis W = L·B: B A B† (Hermitian part of A), shared by the states that differ by L. */
  lab?: CMat;
  /** The same for the second moment m2. */
  lab2?: CMat;
  m2?: CMat;
  /** specTraceAt's phased entries per speed set (one row where the state has no phase: `still`). */
  nodesBy?: { speeds: ArrayLike<number>; phiMax: number; pairs: Int32Array; mre: Float64Array; mim: Float64Array; still: boolean }[];
}

/** The phase-length φ_t + Ω_ab (rad·m/s) of entry (a, b) of term t: its phase at speed v is that over v. */
export function phaseLength(st: SpecState, t: SpecTerm, a: number, b: number): number {
  return t.phi + (st.mu ? st.mu[a] - st.mu[b] : 0);
}

function state(W: CMat, mu: Float64Array | null, terms: readonly SpecTerm[]): SpecState {
  return { W, mu, terms, shared: {}, memo: {} };
}

/** A state whose basis is kept as factors; W is formed on first use. */
class FactoredState implements SpecState {
  private w: CMat | undefined = undefined;
  memo: StateMemo = {};
  constructor(readonly fac: BasisFactors, readonly mu: Float64Array | null, readonly terms: readonly SpecTerm[], readonly shared: SharedAverages) {}
  get W(): CMat {
    return (this.w ??= this.fac.left ? leftTimesBlocks(this.fac) : this.fac.blocks);
  }
}

function factoredState(fac: BasisFactors, mu: Float64Array | null, terms: readonly SpecTerm[], shared: SharedAverages = {}): SpecState {
  return new FactoredState(fac, mu, terms, shared);
}

/** The number of basis columns (without forming a factored basis). */
export function basisCols(st: SpecState): number {
  return st.fac ? st.fac.blocks.cols : st.W.cols;
}


export function specInitial(rho: CMat): SpecState {
  return state(cmatIdentity(rho.rows), null, [{ phi: 0, X: rho }]);
}

/** ρ → K ρ K† for a velocity-independent K. */
export function specKraus(st: SpecState, k: CMat): SpecState {
  if (st.fac) return factoredState({ left: kTimesLeft(k, st.fac.left), blocks: st.fac.blocks, support: st.fac.support }, st.mu, st.terms, st.shared);
  return { W: cmatMul(k, st.W), mu: st.mu, terms: st.terms, shared: st.shared, memo: {} };
}

export function significance(t: SpecTerm): number {
  let xmax = 0;
  for (let i = 0; i < t.X.re.length; i++) xmax = Math.max(xmax, Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]));
  return xmax;
}

/** Lab-frame terms Σ_t M_t e^{−iφ_t s}, merged by phase-length. */
export function specExpand(st: SpecState): SpecTerm[] {
  const out: SpecTerm[] = [];
  const W = st.W;
  const r = W.cols;
  let Wd: CMat | null = null;
  for (const t of st.terms) {
    if (!st.mu) {
      if (isIdentity(W)) out.push({ phi: t.phi, X: { rows: r, cols: r, re: copyF64(t.X.re), im: copyF64(t.X.im) } });
      else out.push({ phi: t.phi, X: cmatMul(cmatMul(W, t.X), (Wd ??= cmatDagger(W))) });
      continue;
    }
    const cut = 1e-18 * significance(t);
    const groups = new Map<number, number[]>();
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      if (Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]) <= cut) continue;
      const f = st.mu[a] - st.mu[b];
      const g = groups.get(f);
      if (g) g.push(i);
      else groups.set(f, [i]);
    }
    for (const [f, idx] of groups) out.push({ phi: t.phi + f, X: sparseSandwich(W, t.X, idx) });
  }
  return mergeTerms(out);
}

/** An identity matrix (the basis of a lab-frame state made by merging). */
function isIdentity(w: CMat): boolean {
  const n = w.rows;
  if (w.cols !== n) return false;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    if (w.re[i * n + j] !== (i === j ? 1 : 0) || w.im[i * n + j] !== 0) return false;
  }
  return true;
}

/**
 * W x W† for the x that holds X's entries at idx (ascending row-major indices) and zero elsewhere: W·x over x's
 * non-zero entries only, then (W·x)·W† over W·x's non-zero columns. The products are summed in the order of a dense
 * product (cmatMul skips the same zeros), so the result is the dense one number for number, in a small fraction of
 * its work: a frequency group of a 16-state basis holds one or a few entries.
 */
function sparseSandwich(W: CMat, X: CMat, idx: readonly number[]): CMat {
  const d = W.rows, r = W.cols;
  const wr = W.re, wi = W.im;
  const pr = zeroedF64(d * r), pi = zeroedF64(d * r);
  const used = new Uint8Array(r);
  // P = W·x: column j of P gathers W's column p times x_pj, p ascending (idx is in row-major order)
  for (const k of idx) {
    const p = (k / r) | 0, j = k - p * r;
    const yr = X.re[k], yi = X.im[k];
    used[j] = 1;
    for (let i = 0; i < d; i++) {
      const xr = wr[i * r + p], xi = wi[i * r + p];
      pr[i * r + j] += xr * yr - xi * yi;
      pi[i * r + j] += xr * yi + xi * yr;
    }
  }
  // out = P·W†: (W†)_lj = conj(W_jl); for each row i and each used column l, row i of out gains P_il · conj(W_·l)
  const out = cmatZeros(d, d);
  const or = out.re, oi = out.im;
  for (let i = 0; i < d; i++) {
    for (let l = 0; l < r; l++) {
      if (!used[l]) continue;
      const xr = pr[i * r + l], xi = pi[i * r + l];
      if (xr === 0 && xi === 0) continue;
      for (let j = 0; j < d; j++) {
        const yr = wr[j * r + l], yi = -wi[j * r + l];
        or[i * d + j] += xr * yr - xi * yi;
        oi[i * d + j] += xr * yi + xi * yr;
      }
    }
  }
  return out;
}

/**
 * Merges terms whose phase-lengths agree within 1e-13 of the largest |φ| (and drops empty ones). Positive
 * and negative φ are grouped as mirror images (each side in order of |φ|, a group taking the mean of its
 * members), so that the ±φ partners of a Hermitian state stay exact partners.
 */
export function mergeTerms(ts: SpecTerm[]): SpecTerm[] {
  if (ts.length <= 1) return ts;
  const scale = ts.reduce((m, t) => Math.max(m, Math.abs(t.phi)), 0);
  const tol = 1e-13 * scale + 1e-300;
  const zero: SpecTerm[] = [], pos: SpecTerm[] = [], neg: SpecTerm[] = [];
  for (const t of ts) (Math.abs(t.phi) <= tol ? zero : t.phi > 0 ? pos : neg).push(t);
  const group = (side: SpecTerm[], sign: number): { phi: number; X: CMat }[] => {
    side.sort((x, y) => Math.abs(x.phi) - Math.abs(y.phi));
    const out: { phi: number; X: CMat; first: number; sum: number; n: number }[] = [];
    for (const t of side) {
      const m = Math.abs(t.phi);
      const last = out[out.length - 1];
      if (last && m - last.first <= tol) {
        for (let i = 0; i < t.X.re.length; i++) {
          last.X.re[i] += t.X.re[i];
          last.X.im[i] += t.X.im[i];
        }
        last.sum += m;
        last.n++;
      } else {
        out.push({ phi: 0, first: m, sum: m, n: 1, X: { rows: t.X.rows, cols: t.X.cols, re: copyF64(t.X.re), im: copyF64(t.X.im) } });
      }
    }
    return out.map((g) => ({ phi: (sign * g.sum) / g.n, X: g.X }));
  };
  const merged = [...group(zero, 0), ...group(pos, 1), ...group(neg, -1)];
  // the zero group is one group only if all its members are within tol of 0: fold them together
  const z = merged.filter((t) => t.phi === 0);
  const rest = merged.filter((t) => t.phi !== 0);
  if (z.length > 1) {
    for (let k = 1; k < z.length; k++) for (let i = 0; i < z[0].X.re.length; i++) {
      z[0].X.re[i] += z[k].X.re[i];
      z[0].X.im[i] += z[k].X.im[i];
    }
  }
  const out = [...z.slice(0, 1), ...rest];
  let norm = 0;
  for (const t of out) norm = Math.max(norm, cmatNorm(t.X));
  return out.filter((t) => cmatNorm(t.X) > 1e-17 * norm);
}

/** Eigenvalues closer than 1e-12 of the largest are set equal, so that equal Bohr frequencies coincide. */
function snapDegenerate(lambda: ArrayLike<number>): Float64Array {
  const n = lambda.length;
  // indices in ascending order of λ (insertion sort: n is the dimension of a spin, at most a few dozen)
  const order = orderScratch(n);
  let scale = 0;
  for (let i = 0; i < n; i++) {
    scale = Math.max(scale, Math.abs(lambda[i]));
    const v = lambda[i];
    let j = i - 1;
    while (j >= 0 && lambda[order[j]] > v) {
      order[j + 1] = order[j];
      j--;
    }
    order[j + 1] = i;
  }
  const tol = 1e-12 * scale;
  const out = copyF64(lambda);
  let start = 0;
  for (let i = 1; i <= n; i++) {
    if (i === n || lambda[order[i]] - lambda[order[i - 1]] > tol) {
      if (i - start > 1) {
        let m = 0;
        for (let k = start; k < i; k++) m += lambda[order[k]];
        m /= i - start;
        for (let k = start; k < i; k++) out[order[k]] = m;
      }
      start = i;
    }
  }
  return out;
}
const orderScratch = workArray((n) => new Int32Array(n)), gramScratch = workArray((n) => new Float64Array(n));

/**
 * ρ(s) → U(s) ρ(s) U(s)† with U(s) = V e^{−iΛℓs} V† (H = V Λ V†, Λ in rad/s). The step is skipped when
 * every term commutes with H (then U ρ U† = ρ exactly: e.g. a hyperfine drift of a state diagonal in F).
 */
/**
 * The most frequency terms a state may be expanded into before a propagator. Each non-commuting propagator can
 * multiply the terms by up to r² (the distinct Bohr frequencies of the basis before it): for Cs (16 states) a third
 * field region in a new direction would make 65,536 terms of 16×16, minutes and gigabytes of work.
 */
export const MAX_SPEC_TERMS = 8192;

/** An upper bound on the lab-frame terms specExpand makes: terms × the distinct differences μ_a − μ_b. */
function expandedTermsBound(st: SpecState): number {
  if (!st.mu) return st.terms.length;
  const diffs = new Set<number>();
  const mu = st.mu;
  for (let a = 0; a < mu.length; a++) for (let b = 0; b < mu.length; b++) diffs.add(mu[a] - mu[b]);
  return st.terms.length * diffs.size;
}

export function specPropagate(st: SpecState, vectors: () => CMat, lambda: ArrayLike<number>, length: number, factors?: PropagatorFactors): SpecState {
  const d = lambda.length;
  if (st.mu !== null) {
    const bound = expandedTermsBound(st);
    if (bound > MAX_SPEC_TERMS) {
      throw new CostError(`the spin state arriving here carries ${st.terms.length.toLocaleString('en-US')} frequency terms over ${st.mu.length} states, and this field (not along the one before it) would make up to ${bound.toLocaleString('en-US')} of them (more than ${MAX_SPEC_TERMS.toLocaleString('en-US')}): averaging each frequency over the speeds would take minutes and gigabytes`);
    }
  }
  const snapped = snapDegenerate(lambda);
  let lab: SpecTerm[], xs: CMat[];
  if (st.mu === null) {
    // every term is already lab-frame Σ_t W X_t W† e^{−iφ_t s}: in the new basis Y X_t Y†, Y = V†W;
    // with V = R·B (B sparse by columns), Y = B†(R†W), and R†W is kept with W (a scan over a field's size).
    // Where the terms are Hermitian, Y X_t Y† = B† Q_t B with Q_t = (R†W) X_t (R†W)† kept with the state
    lab = st.terms.slice();
    const qs = factors ? rotatedTerms(st, factors.rot) : null;
    if (factors && qs) xs = qs.map((q) => blocksDaggerSandwich(factors, q));
    else {
      const y = factors ? blocksDaggerTimes(factors, factors.rot ? rotatedBasis(factors.rot, st.W) : st.W) : cmatMul(cmatDagger(vectors()), st.W);
      xs = lab.map((t) => sandwich(y, t.X));
    }
  } else {
    const v = vectors();
    const vd = cmatDagger(v);
    lab = specExpand(st);
    xs = lab.map((t) => cmatMul(cmatMul(vd, t.X), v));
  }
  // every term block-diagonal on the eigenspaces of H commutes with it: then U ρ U† = ρ exactly
  let commutes = true;
  for (const x of xs) {
    let big = 0, off = 0;
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      const re = x.re[a * d + b], im = x.im[a * d + b];
      const m = (re < 0 ? -re : re) + (im < 0 ? -im : im);
      if (m > big) big = m;
      if (m > off && snapped[a] !== snapped[b]) off = m;
    }
    if (off > 1e-14 * big) {
      commutes = false;
      break;
    }
  }
  if (commutes) return st.mu === null ? st : state(cmatIdentity(d), null, lab);
  const mu = zeroedF64(d);
  for (let a = 0; a < d; a++) mu[a] = snapped[a] * length;
  const terms = lab.map((t, i) => ({ phi: t.phi, X: xs[i] }));
  return factors ? factoredState({ left: factors.rot, blocks: factors.blocks, support: factors.support }, mu, terms) : state(vectors(), mu, terms);
}

/** Q_t = M X_t M†, M = R†W (W itself without a rotation), kept with the state; null when a term is not Hermitian. */
function rotatedTerms(st: SpecState, rot: CMat | undefined): CMat[] | null {
  const memo = (st.memo ??= {});
  const byRot = (memo.rotated ??= new Map());
  const key = rot ?? null;
  let qs = byRot.get(key);
  if (qs === undefined) {
    qs = st.terms.every((t) => isHermitian(t.X)) ? st.terms.map((t) => cmatOwn(sandwich(rot ? rotatedBasis(rot, st.W) : st.W, t.X))) : null;
    // a scan over the field's direction brings a new rotation at every point: keep a few (as pairCache)
    if (byRot.size > 16) byRot.clear();
    byRot.set(key, qs);
  }
  return qs;
}

function isHermitian(x: CMat): boolean {
  const r = x.rows;
  if (x.cols !== r) return false;
  for (let a = 0; a < r; a++) for (let b = a; b < r; b++) {
    if (x.re[a * r + b] !== x.re[b * r + a] || x.im[a * r + b] !== -x.im[b * r + a]) return false;
  }
  return true;
}

/** Y X Y†; for a diagonal X (the state after a magnet's sort) as Σ_k x_k y_k y_k†. */
function sandwich(y: CMat, x: CMat): CMat {
  const d = y.rows, r = y.cols;
  let diagonal = true;
  for (let a = 0; a < r && diagonal; a++) for (let b = 0; b < r; b++) {
    if (a !== b && (x.re[a * r + b] !== 0 || x.im[a * r + b] !== 0)) {
      diagonal = false;
      break;
    }
  }
  if (!diagonal) return cmatMul(cmatMul(y, x), cmatDagger(y));
  const out = cmatZeros(d, d);
  const xr = x.re, xi = x.im, or = out.re, oi = out.im;
  let real = true;
  for (let k = 0; k < r; k++) if (xi[k * r + k] !== 0) real = false;
  if (!real) {
    // out_ij = Σ_k x_k y_ik conj(y_jk), x_k complex
    const yr = y.re, yi = y.im;
    for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
      let sr = 0, si = 0;
      for (let k = 0; k < r; k++) {
        const ar = yr[i * r + k], ai = yi[i * r + k], br = yr[j * r + k], bi = yi[j * r + k];
        const cr = ar * br + ai * bi, ci = ai * br - ar * bi;
        const wr = xr[k * r + k], wi = xi[k * r + k];
        sr += wr * cr - wi * ci;
        si += wr * ci + wi * cr;
      }
      or[i * d + j] = sr;
      oi[i * d + j] = si;
    }
    return out;
  }
  // every x_k real: out = Σ_k x_k y_k y_k† is Hermitian; over the columns with x_k ≠ 0, kept as
  // z = y·|x|^{1/2} (column k by column, contiguous) with the sign of x_k apart
  let m = 0;
  for (let k = 0; k < r; k++) if (xr[k * r + k] !== 0) m++;
  // z and the signs are work arrays: every entry read below is written first
  const zs = gramScratch(2 * m * d + m);
  const zr = zs.subarray(0, m * d), zi = zs.subarray(m * d, 2 * m * d), sg = zs.subarray(2 * m * d, 2 * m * d + m);
  let c = 0;
  for (let k = 0; k < r; k++) {
    const w = xr[k * r + k];
    if (w === 0) continue;
    const q = Math.sqrt(Math.abs(w));
    sg[c] = w < 0 ? -1 : 1;
    for (let i = 0; i < d; i++) {
      zr[c * d + i] = q * y.re[i * r + k];
      zi[c * d + i] = q * y.im[i * r + k];
    }
    c++;
  }
  const dense = denseKernels();
  if (dense) {
    dense.gram(zr, zi, sg, m, d, out);
    return out;
  }
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      let sr = 0, si = 0;
      for (let k = 0; k < m; k++) {
        const o = k * d;
        const ar = zr[o + i], ai = zi[o + i], br = zr[o + j], bi = zi[o + j];
        // sg_k z_ik conj(z_jk)
        const s = sg[k];
        sr += s * (ar * br + ai * bi);
        si += s * (ai * br - ar * bi);
      }
      or[i * d + j] = sr;
      oi[i * d + j] = i === j ? 0 : si;
      if (j !== i) {
        or[j * d + i] = sr;
        oi[j * d + i] = -si;
      }
    }
  }
  return out;
}

/**
 * Σ_k P_k ρ P_k over rank-one P_k = |k⟩⟨k| (the dephasing sort of a magnet port): the state becomes
 * diagonal on the vectors |k⟩, each population p_k(s) = ⟨k|ρ(s)|k⟩ a sum of phase terms.
 */
export function specProjectDiag(st: SpecState, vecs: readonly CMat[]): SpecState {
  const d = st.W.rows, r = st.W.cols, K = vecs.length;
  // u_k = ⟨k|W (1×r)
  const ur = zeroedF64(K * r), ui = zeroedF64(K * r);
  for (let k = 0; k < K; k++) {
    const v = vecs[k];
    for (let a = 0; a < r; a++) {
      let sr = 0, si = 0;
      for (let i = 0; i < d; i++) {
        const wr = st.W.re[i * r + a], wi = st.W.im[i * r + a];
        sr += v.re[i] * wr + v.im[i] * wi;
        si += v.re[i] * wi - v.im[i] * wr;
      }
      ur[k * r + a] = sr;
      ui[k * r + a] = si;
    }
  }
  const acc = new Map<number, { re: Float64Array; im: Float64Array }>();
  for (const t of st.terms) {
    const cut = 1e-18 * significance(t);
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      const xr = t.X.re[i], xi = t.X.im[i];
      if (Math.abs(xr) + Math.abs(xi) <= cut) continue;
      const f = phaseLength(st, t, a, b);
      let slot = acc.get(f);
      if (!slot) {
        slot = { re: zeroedF64(K), im: zeroedF64(K) };
        acc.set(f, slot);
      }
      for (let k = 0; k < K; k++) {
        // u_ka X_ab conj(u_kb)
        const ar = ur[k * r + a], ai = ui[k * r + a];
        const br = ur[k * r + b], bi = -ui[k * r + b];
        const pr = ar * xr - ai * xi, pi = ar * xi + ai * xr;
        slot.re[k] += pr * br - pi * bi;
        slot.im[k] += pr * bi + pi * br;
      }
    }
  }
  const W = cmatZeros(d, K);
  for (let k = 0; k < K; k++) for (let i = 0; i < d; i++) {
    W.re[i * K + k] = vecs[k].re[i];
    W.im[i * K + k] = vecs[k].im[i];
  }
  const terms: SpecTerm[] = [];
  for (const [phi, slot] of acc) {
    const X = cmatZeros(K, K);
    for (let k = 0; k < K; k++) {
      X.re[k * K + k] = slot.re[k];
      X.im[k * K + k] = slot.im[k];
    }
    terms.push({ phi, X });
  }
  return state(W, null, mergeTerms(terms));
}

const cosOut = new Float64Array(1), sinOut = new Float64Array(1);
/** re[o] + i·im[o] += (xr + i·xi) e^{−i·phase}. */
export function addPhased(re: Float64Array, im: Float64Array, o: number, xr: number, xi: number, phase: number): void {
  expNegI(phase, cosOut, sinOut, 0);
  const c = cosOut[0], s = sinOut[0]; // cos φ, −sin φ
  re[o] += xr * c - xi * s;
  im[o] += xr * s + xi * c;
}

/** Σ_t X_t ∘ e^{−i(φ_t + Ω)/v} (the state at speed v in its basis W), terms with |φ + Ω_ab| > phiMax left out. */
function phasedBasis(st: SpecState, v: number, phiMax: number): CMat {
  const r = st.W.cols;
  const acc = cmatZeros(r, r);
  for (const t of st.terms) {
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      const xr = t.X.re[i], xi = t.X.im[i];
      if (xr === 0 && xi === 0) continue;
      const f = phaseLength(st, t, a, b);
      if (Math.abs(f) <= phiMax) addPhased(acc.re, acc.im, i, xr, xi, f / v);
    }
  }
  return acc;
}

/** True when ρ(v) is the same at every speed: no term carries a phase (φ_t = 0, and no Ω_ab between distinct μ). */
export function specIsStatic(st: SpecState): boolean {
  if (!st.terms.every((t) => t.phi === 0)) return false;
  const mu = st.mu;
  if (mu === null) return true;
  for (let a = 1; a < mu.length; a++) if (mu[a] !== mu[0]) return false;
  return true;
}


/** ρ at one speed v (a plain matrix), leaving out terms with |φ + Ω_ab| > phiMax. */
export function specAt(st: SpecState, v: number, phiMax: number = Infinity): CMat {
  const w = st.W;
  return cmatSandwichParts(w.re, w.im, w.rows, w.cols, phasedBasis(st, v, phiMax));
}

/** Largest |φ + Ω_ab| among entries whose trace weight exceeds `minWeight`, with the weight they carry. */
export function specPhaseWeights(st: SpecState): { phi: number; weight: number }[] {
  const r = st.W.cols;
  const g = cmatMul(cmatDagger(st.W), st.W);
  const out: { phi: number; weight: number }[] = [];
  for (const t of st.terms) {
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      const w = Math.hypot(t.X.re[i], t.X.im[i]) * Math.hypot(g.re[b * r + a], g.im[b * r + a]);
      if (w < 1e-12) continue;
      const f = Math.abs(phaseLength(st, t, a, b));
      if (f > 0) out.push({ phi: f, weight: w });
    }
  }
  return out;
}
