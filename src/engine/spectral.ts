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
 */
import { type CMat, cmatMul, cmatDagger, cmatZeros, cmatIdentity, cmatNorm, zeroedF64, copyF64, cmatOwn, cmatSandwichParts } from '../physics/cmat.ts';
import { charFunction, effusiveCharInto, type VelocityDistribution } from '../physics/velocity.ts';
import { expNegI } from '../physics/trig.ts';
import { tableKernel, denseKernels } from '../physics/kernels.ts';
import type { ColumnSupport } from '../physics/hyperfine.ts';

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
  /** run.ts: the states its ports select from this one (kept and leaf-next forms). */
  selections?: [Map<unknown, SpecState>, Map<unknown, SpecState>];
  /**
   * For a lab-frame state (mu = null) whose terms are Hermitian: Q_t = M X_t M† with M = R†W, by field-axis
   * rotation R (null: some term is not Hermitian). A field region along that axis then needs only
   * B† Q_t B per point (specPropagate), and a scan over the field's size reuses Q_t.
   */
  rotated?: Map<CMat | null, CMat[] | null>;
}

interface SharedAverages {
  avg?: Averaged;
  /** For a factored basis W = L·B: B A B† (Hermitian part of A), shared by the states that differ by L. */
  lab?: CMat;
  /** The same for the second moment m2. */
  lab2?: CMat;
  m2?: CMat;
  nodes?: { speeds: ArrayLike<number>; phiMax: number; pairs: Int32Array; mre: Float64Array; mim: Float64Array };
}

/** The phase-length φ_t + Ω_ab (rad·m/s) of entry (a, b) of term t: its phase at speed v is that over v. */
function phaseLength(st: SpecState, t: SpecTerm, a: number, b: number): number {
  return t.phi + (st.mu ? st.mu[a] - st.mu[b] : 0);
}

function state(W: CMat, mu: Float64Array | null, terms: readonly SpecTerm[]): SpecState {
  return { W, mu, terms, shared: {}, memo: {} };
}

/**
 * The basis of a state propagated through a field: W = left · blocks, blocks the block-diagonal
 * eigenvectors of the field's m_F blocks (a few non-zero rows per column), left the rotation to the
 * field's axis and the Kraus operators applied since (left = undefined: the identity). A scan over the
 * field's size keeps left fixed, so everything built from left alone is cached with it.
 */
export interface BasisFactors {
  readonly left: CMat | undefined;
  readonly blocks: CMat;
  readonly support: ColumnSupport;
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
function basisCols(st: SpecState): number {
  return st.fac ? st.fac.blocks.cols : st.W.cols;
}

/** left · blocks over the non-zero rows of each column. */
function leftTimesBlocks(fac: BasisFactors): CMat {
  const l = fac.left!, b = fac.blocks, { start, rows } = fac.support;
  const d = l.rows, dm = l.cols, r = b.cols;
  const out = cmatZeros(d, r);
  for (let c = 0; c < r; c++) for (let q = start[c]; q < start[c + 1]; q++) {
    const p = rows[q];
    const xr = b.re[p * r + c], xi = b.im[p * r + c];
    if (xr === 0 && xi === 0) continue;
    for (let i = 0; i < d; i++) {
      const ar = l.re[i * dm + p], ai = l.im[i * dm + p];
      out.re[i * r + c] += ar * xr - ai * xi;
      out.im[i * r + c] += ar * xi + ai * xr;
    }
  }
  return out;
}

/**
 * A value computed from two long-lived matrices (a port's projector, a field's axis rotation, a scan's
 * unchanged basis), kept per pair of objects; each first key keeps at most 16 second keys.
 */
function pairCache<K extends object, L>(compute: (a: K, b: L) => CMat): (a: K, b: L) => CMat {
  const table = new WeakMap<K, Map<L, CMat>>();
  return (a, b) => {
    let byB = table.get(a);
    if (!byB) table.set(a, (byB = new Map()));
    let out = byB.get(b);
    if (!out) {
      out = cmatOwn(compute(a, b));
      if (byB.size > 16) byB.clear();
      byB.set(b, out);
    }
    return out;
  };
}

const kLeft = pairCache((k: CMat, left: CMat) => cmatMul(k, left));
/** k · left (k alone where left is the identity). */
function kTimesLeft(k: CMat, left: CMat | undefined): CMat {
  return left ? kLeft(k, left) : k;
}

const grams = new WeakMap<CMat, CMat>();
/** left† · left, kept with left. */
function gramOf(left: CMat): CMat {
  let g = grams.get(left);
  if (!g) {
    g = cmatOwn(cmatMul(cmatDagger(left), left));
    grams.set(left, g);
  }
  return g;
}

export function specInitial(rho: CMat): SpecState {
  return state(cmatIdentity(rho.rows), null, [{ phi: 0, X: rho }]);
}

/** ρ → K ρ K† for a velocity-independent K. */
export function specKraus(st: SpecState, k: CMat): SpecState {
  if (st.fac) return factoredState({ left: kTimesLeft(k, st.fac.left), blocks: st.fac.blocks, support: st.fac.support }, st.mu, st.terms, st.shared);
  return { W: cmatMul(k, st.W), mu: st.mu, terms: st.terms, shared: st.shared, memo: {} };
}

function significance(t: SpecTerm): number {
  let xmax = 0;
  for (let i = 0; i < t.X.re.length; i++) xmax = Math.max(xmax, Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]));
  return xmax;
}

/** Lab-frame terms Σ_t M_t e^{−iφ_t s}, merged by phase-length. */
export function specExpand(st: SpecState): SpecTerm[] {
  const out: SpecTerm[] = [];
  const Wd = cmatDagger(st.W);
  const r = st.W.cols;
  for (const t of st.terms) {
    if (!st.mu) {
      out.push({ phi: t.phi, X: cmatMul(cmatMul(st.W, t.X), Wd) });
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
    for (const [f, idx] of groups) {
      const x = cmatZeros(r, r);
      for (const i of idx) {
        x.re[i] = t.X.re[i];
        x.im[i] = t.X.im[i];
      }
      out.push({ phi: t.phi + f, X: cmatMul(cmatMul(st.W, x), Wd) });
    }
  }
  return mergeTerms(out);
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
const orderScratch = workArray((n) => new Int32Array(n));

/**
 * ρ(s) → U(s) ρ(s) U(s)† with U(s) = V e^{−iΛℓs} V† (H = V Λ V†, Λ in rad/s). The step is skipped when
 * every term commutes with H (then U ρ U† = ρ exactly: e.g. a hyperfine drift of a state diagonal in F).
 */
export function specPropagate(st: SpecState, vectors: () => CMat, lambda: ArrayLike<number>, length: number, factors?: PropagatorFactors): SpecState {
  const d = lambda.length;
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

/** A zeroed rows×cols matrix in the product work array (one at a time: the next call reuses it). */
function scratchMat(rows: number, cols: number): CMat {
  const n = rows * cols;
  const w = productScratch(2 * n);
  w.fill(0, 0, 2 * n);
  return { rows, cols, re: w.subarray(0, n), im: w.subarray(n, 2 * n) };
}

/**
 * B†M over the non-zero rows of each column of B, in a work array: the product is read once, by the
 * sandwiches of the propagation that asked for it, and not kept.
 */
function blocksDaggerTimes(f: PropagatorFactors, m: CMat): CMat {
  const b = f.blocks, { start, rows } = f.support;
  const r = b.cols, dm = m.cols;
  const out = scratchMat(r, dm);
  for (let c = 0; c < r; c++) for (let q = start[c]; q < start[c + 1]; q++) {
    const p = rows[q];
    const xr = b.re[p * r + c], xi = -b.im[p * r + c];
    if (xr === 0 && xi === 0) continue;
    for (let j = 0; j < dm; j++) {
      const ar = m.re[p * dm + j], ai = m.im[p * dm + j];
      out.re[c * dm + j] += xr * ar - xi * ai;
      out.im[c * dm + j] += xr * ai + xi * ar;
    }
  }
  return out;
}

/** V = rot · blocks, the factors of an eigenbasis from the m_F blocks (physics/hyperfine.ts zeemanEigen). */
export interface PropagatorFactors {
  readonly rot: CMat | undefined;
  readonly blocks: CMat;
  readonly support: ColumnSupport;
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

/**
 * B† Q B for Q Hermitian, over the non-zero rows of each column of B: the sandwich of blocksSandwich
 * with B† (sparse by rows where B is sparse by columns) in a work array.
 */
function blocksDaggerSandwich(f: PropagatorFactors, q: CMat): CMat {
  const b = f.blocks, { start, rows } = f.support;
  const d = b.rows, r = b.cols;
  const bd = scratchMat(r, d);
  for (let c = 0; c < r; c++) for (let k = start[c]; k < start[c + 1]; k++) {
    const p = rows[k];
    bd.re[c * d + p] = b.re[p * r + c];
    bd.im[c * d + p] = -b.im[p * r + c];
  }
  return blocksSandwich({ left: undefined, blocks: bd, support: { start: f.support.rowStart, rows: f.support.cols, rowStart: start, cols: rows } }, q);
}

/** R†W, kept per (W, R) object pair. */
const rotatedBasisOf = pairCache((w: CMat, rot: CMat) => cmatMul(cmatDagger(rot), w));
function rotatedBasis(rot: CMat, w: CMat): CMat {
  return rotatedBasisOf(w, rot);
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

/** Caches χ(Φ) of one distribution (many leaves share frequencies). */
export class CharCache {
  private readonly map = new Map<number, [number, number, number]>();
  nodes = 0;
  /** True once a table sum ran in the WebAssembly kernel (physics/kernels.ts). */
  wasm = false;
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
  get(phi: number): [number, number, number] {
    if (phi === 0) return [1, 0, 0];
    const hit = this.map.get(phi);
    if (hit) return hit;
    const c = charFunction(this.dist, phi, 0);
    this.nodes += c.nodes;
    const v: [number, number, number] = [c.re, c.im, c.error];
    // a value read off the effusive panels (no quadrature nodes) is cheaper to evaluate again than to keep
    if (c.nodes === 0) return v;
    if (this.map.size > 200_000) this.map.clear();
    this.map.set(phi, v);
    return v;
  }
}

export interface Averaged {
  /** A (r×r): the beam average of the state in its basis W. */
  readonly A: CMat;
  readonly error: number;
  readonly hermiticity: number;
  /** False when A has an eigenvalue below −(1e-12·Tr A + 1e-15) (fractions of the oven flux). */
  readonly positive: boolean;
}

/** A = Σ_t X_t ∘ χ(φ_t + Ω), computed once per state (module doc). */
export function specAverageBasis(st: SpecState, chi: CharCache): Averaged {
  const hit = st.shared.avg;
  if (hit) return hit;
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
    if (separableAverage(st, speeds, d.kind === 'fixed' ? Float64Array.of(1) : d.weights, A)) chi.wasm = true;
    chi.nodes += d.kind === 'fixed' ? 1 : d.speeds.length;
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
  const res = { A, error, hermiticity: herm, positive };
  st.shared.avg = res;
  return res;
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

/** A reusable work array of at least n entries (every entry is written before it is read). */
function workArray<T extends Float64Array | Uint8Array | Int32Array>(make: (n: number) => T): (n: number) => T {
  let buf = make(0);
  return (n) => {
    if (buf.length < n) buf = make(2 * n);
    return buf;
  };
}
// the table sums' work arrays
const scratch = workArray((n) => new Float64Array(n)), scratch2 = workArray((n) => new Float64Array(n)), scratch3 = workArray((n) => new Float64Array(n));
const gramScratch = workArray((n) => new Float64Array(n)), productScratch = workArray((n) => new Float64Array(n));
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

/**
 * Tr ρ(s) on a set of speeds, keeping only terms whose phase-length is below `phiMax` (faster terms
 * average out against the smooth weights they are used with; phiMax = Infinity keeps all). The
 * matrices Σ_t X_t ∘ e^{−i(φ_t+Ω)/v_k} are computed once per state and speed set.
 */
export function specTraceAt(st: SpecState, speeds: ArrayLike<number>, phiMax: number): Float64Array {
  const r = basisCols(st);
  let hit = st.shared.nodes;
  if (!hit || hit.speeds !== speeds || hit.phiMax !== phiMax) {
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
    const np = pairs.length, ns = speeds.length;
    const mre = new Float64Array(ns * np), mim = new Float64Array(ns * np);
    for (let k = 0; k < ns; k++) {
      const v = speeds[k], o = k * np;
      for (let c = 0; c < cSlot.length; c++) addPhased(mre, mim, o + cSlot[c], cRe[c], cIm[c], cF[c] / v);
    }
    hit = { speeds, phiMax, pairs: Int32Array.from(pairs), mre, mim };
    st.shared.nodes = hit;
  }
  // Tr(W M W†) = Σ_ab M_ab (W†W)_ba over the active entries: (W†W)_ba = Σ_c conj(W_cb) W_ca
  const { pairs, mre, mim } = hit;
  const np = pairs.length;
  const gre = new Float64Array(np), gim = new Float64Array(np);
  const f = st.fac;
  if (f) {
    // (B†(L†L)B)_ba over the few non-zero rows of columns a and b of B, without forming W
    const bl = f.blocks, { start, rows } = f.support, m = f.left ? gramOf(f.left) : null, dm = bl.rows;
    for (let p = 0; p < np; p++) {
      const i = pairs[p], a = (i / r) | 0, b = i - a * r;
      let sr = 0, si = 0;
      for (let q = start[b]; q < start[b + 1]; q++) {
        const c = rows[q];
        const xr = bl.re[c * r + b], xi = -bl.im[c * r + b];
        if (xr === 0 && xi === 0) continue;
        let yr = 0, yi = 0;
        if (m) {
          for (let u = start[a]; u < start[a + 1]; u++) {
            const j = rows[u];
            const mr = m.re[c * dm + j], mi = m.im[c * dm + j], br = bl.re[j * r + a], bi = bl.im[j * r + a];
            yr += mr * br - mi * bi;
            yi += mr * bi + mi * br;
          }
        } else {
          yr = bl.re[c * r + a];
          yi = bl.im[c * r + a];
        }
        sr += xr * yr - xi * yi;
        si += xr * yi + xi * yr;
      }
      gre[p] = sr; gim[p] = si;
    }
  } else {
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
  const dense = denseKernels();
  if (dense) {
    dense.rowDots(mre, mim, gre, gim, out.length, np, out);
    return out;
  }
  for (let k = 0; k < out.length; k++) {
    const o = k * np;
    let tr = 0;
    for (let p = 0; p < np; p++) tr += mre[o + p] * gre[p] - mim[o + p] * gim[p];
    out[k] = tr;
  }
  return out;
}

const cosOut = new Float64Array(1), sinOut = new Float64Array(1);
/** re[o] + i·im[o] += (xr + i·xi) e^{−i·phase}. */
function addPhased(re: Float64Array, im: Float64Array, o: number, xr: number, xi: number, phase: number): void {
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

/** ρ at one speed v (a plain matrix), leaving out terms with |φ + Ω_ab| > phiMax. */
/** True when ρ(v) is the same at every speed: no term carries a phase (φ_t = 0, and no Ω_ab between distinct μ). */
export function specIsStatic(st: SpecState): boolean {
  if (!st.terms.every((t) => t.phi === 0)) return false;
  const mu = st.mu;
  if (mu === null) return true;
  for (let a = 1; a < mu.length; a++) if (mu[a] !== mu[0]) return false;
  return true;
}

export function specAt(st: SpecState, v: number, phiMax: number = Infinity): CMat {
  const w = st.W;
  return cmatSandwichParts(w.re, w.im, w.rows, w.cols, phasedBasis(st, v, phiMax));
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
 * Re Tr(W A W†) = Re Σ_ab (W†W)_ba A_ab. Only the Hermitian part H = (A + A†)/2 contributes to the real
 * part (the anti-Hermitian part gives an imaginary trace), and with G = W†W Hermitian too the sum is
 * Σ_a H_aa G_aa + 2 Σ_{a<b} Re(H_ab G_ba): half of G is computed.
 */
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

/** N = B H B†, H = (A + A†)/2, over the non-zero columns of each row of B; N is Hermitian. */
function blocksSandwich(f: BasisFactors, A: CMat): CMat {
  const b = f.blocks, { rowStart, cols } = f.support;
  const d = b.rows, r = b.cols;
  const out = cmatZeros(d, d);
  // the same sums in WebAssembly where it runs (physics/kernels.wat bhb)
  const dense = denseKernels();
  if (dense) {
    dense.bhb(b, rowStart, cols, d, r, A, out);
    return out;
  }
  const br = b.re, bi = b.im, ar = A.re, ai = A.im;
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      // N_ij = Σ_{a ∈ cols(i), c ∈ cols(j)} B_ia H_ac conj(B_jc)
      let sr = 0, si = 0;
      for (let p = rowStart[i]; p < rowStart[i + 1]; p++) {
        const a = cols[p];
        const xr = br[i * r + a], xi = bi[i * r + a];
        let tr = 0, ti = 0;
        for (let q = rowStart[j]; q < rowStart[j + 1]; q++) {
          const c = cols[q];
          const hr = 0.5 * (ar[a * r + c] + ar[c * r + a]), hi = 0.5 * (ai[a * r + c] - ai[c * r + a]);
          const yr = br[j * r + c], yi = -bi[j * r + c];
          tr += hr * yr - hi * yi;
          ti += hr * yi + hi * yr;
        }
        sr += xr * tr - xi * ti;
        si += xr * ti + xi * tr;
      }
      out.re[i * d + j] = sr;
      out.im[i * d + j] = i === j ? 0 : si;
      if (j !== i) {
        out.re[j * d + i] = sr;
        out.im[j * d + i] = -si;
      }
    }
  }
  return out;
}

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
