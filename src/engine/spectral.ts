/**
 * The velocity-resolved density matrix of one path, kept exact frequency by frequency.
 *
 * With s = 1/v, every step of a line is either independent of v (a Kraus operator K: a selection
 * |k⟩⟨k|, a rotator, a recombiner) or a propagator U(s) = V e^{−iΛℓs} V† (a drift, a field region, the
 * two factors of the rotating-wave RF solution). So the state is
 *
 *   ρ(s) = Σ_t W (X_t ∘ e^{−i(φ_t + Ω)s}) W†,      Ω_ab = (λ_a − λ_b)ℓ  (rad·m/s),
 *
 * a sum of terms with one phase-length φ_t each, written in the basis W (the eigenbasis of the last
 * propagator, carried through the Kraus operators since: W → K W). The beam average of any entry is
 * then Σ X_ab χ(φ + Ω_ab) with χ the characteristic function of the velocity distribution
 * (physics/velocity.ts): each Bohr frequency is averaged on its own, and no grid of speeds can alias a
 * phase of 10⁷ rad. A new propagator first expands the entries of the old basis into lab-frame terms of
 * equal phase-length (merged within 1e-13 of the largest), then changes basis.
 */
import { type CMat, cmatMul, cmatDagger, cmatZeros, cmatIdentity, cmatNorm, cmatCommutator } from '../physics/cmat.ts';
import { charFunction, type VelocityDistribution } from '../physics/velocity.ts';

export interface SpecTerm {
  readonly phi: number;
  readonly X: CMat;
}

export interface SpecState {
  /** d×r basis. */
  readonly W: CMat;
  /** r×r phase-lengths Ω_ab, or null when all are zero. */
  readonly omega: Float64Array | null;
  readonly terms: readonly SpecTerm[];
}

export function specInitial(rho: CMat): SpecState {
  return { W: cmatIdentity(rho.rows), omega: null, terms: [{ phi: 0, X: rho }] };
}

/** ρ → K ρ K† for a velocity-independent K. */
export function specKraus(st: SpecState, k: CMat): SpecState {
  return { W: cmatMul(k, st.W), omega: st.omega, terms: st.terms };
}

/** Lab-frame terms Σ_t M_t e^{−iφ_t s}, merged by phase-length. */
export function specExpand(st: SpecState): SpecTerm[] {
  const out: SpecTerm[] = [];
  const Wd = cmatDagger(st.W);
  const r = st.W.cols;
  for (const t of st.terms) {
    if (!st.omega) {
      out.push({ phi: t.phi, X: cmatMul(cmatMul(st.W, t.X), Wd) });
      continue;
    }
    let xmax = 0;
    for (let i = 0; i < t.X.re.length; i++) xmax = Math.max(xmax, Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]));
    const cut = 1e-18 * xmax;
    const groups = new Map<number, number[]>();
    for (let i = 0; i < r * r; i++) {
      if (Math.abs(t.X.re[i]) + Math.abs(t.X.im[i]) <= cut) continue;
      const f = st.omega[i];
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

/** Merges terms whose phase-lengths agree within 1e-13 of the largest |φ| (and drops empty ones). */
export function mergeTerms(ts: SpecTerm[]): SpecTerm[] {
  if (ts.length <= 1) return ts;
  const scale = ts.reduce((m, t) => Math.max(m, Math.abs(t.phi)), 0);
  const tol = 1e-13 * scale + 1e-300;
  const sorted = [...ts].sort((a, b) => a.phi - b.phi);
  const out: { phi: number; X: CMat; n: number }[] = [];
  for (const t of sorted) {
    const last = out[out.length - 1];
    if (last && Math.abs(t.phi - last.phi) <= tol) {
      for (let i = 0; i < t.X.re.length; i++) {
        last.X.re[i] += t.X.re[i];
        last.X.im[i] += t.X.im[i];
      }
    } else {
      out.push({ phi: t.phi, X: { rows: t.X.rows, cols: t.X.cols, re: t.X.re.slice(), im: t.X.im.slice() }, n: 1 });
    }
  }
  let norm = 0;
  for (const t of out) norm = Math.max(norm, cmatNorm(t.X));
  return out.filter((t) => cmatNorm(t.X) > 1e-17 * norm).map((t) => ({ phi: t.phi, X: t.X }));
}

/**
 * ρ(s) → U(s) ρ(s) U(s)† with U(s) = V e^{−iΛℓs} V†. `h` (= V Λ V†) is used to skip the step when every
 * term commutes with it (then U ρ U† = ρ exactly: e.g. a hyperfine drift of a state diagonal in F).
 */
export function specPropagate(st: SpecState, h: CMat, v: CMat, lambda: Float64Array, length: number): SpecState {
  const lab = specExpand(st);
  const hn = cmatNorm(h);
  let commutes = true;
  for (const t of lab) {
    if (cmatNorm(cmatCommutator(h, t.X)) > 1e-14 * hn * cmatNorm(t.X)) {
      commutes = false;
      break;
    }
  }
  const d = h.rows;
  if (commutes) return { W: cmatIdentity(d), omega: null, terms: lab };
  const omega = new Float64Array(d * d);
  for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) omega[a * d + b] = (lambda[a] - lambda[b]) * length;
  const vd = cmatDagger(v);
  return { W: v, omega, terms: lab.map((t) => ({ phi: t.phi, X: cmatMul(cmatMul(vd, t.X), v) })) };
}

/** Caches χ_n(Φ) of one distribution (many leaves share frequencies). */
export class CharCache {
  private readonly map = new Map<number, [number, number, number]>();
  nodes = 0;
  error = 0;
  constructor(readonly dist: VelocityDistribution, readonly n: number = 0) {}
  get(phi: number): [number, number, number] {
    if (phi === 0 && this.n === 0) return [1, 0, 0];
    const hit = this.map.get(phi);
    if (hit) return hit;
    const c = charFunction(this.dist, phi, this.n);
    this.nodes += c.nodes;
    const v: [number, number, number] = [c.re, c.im, c.error];
    this.map.set(phi, v);
    return v;
  }
}

/**
 * The beam-averaged state ⟨ρ⟩ = Σ_t W (X_t ∘ χ(φ_t + Ω)) W† and the error bound Σ|X_ab|·err(χ).
 */
export function specAverage(st: SpecState, chi: CharCache): { rho: CMat; error: number } {
  const r = st.W.cols;
  const acc = cmatZeros(r, r);
  let error = 0;
  for (const t of st.terms) {
    for (let i = 0; i < r * r; i++) {
      const xr = t.X.re[i], xi = t.X.im[i];
      if (xr === 0 && xi === 0) continue;
      const [cr, ci, ce] = chi.get(t.phi + (st.omega ? st.omega[i] : 0));
      acc.re[i] += xr * cr - xi * ci;
      acc.im[i] += xr * ci + xi * cr;
      error += Math.hypot(xr, xi) * ce;
    }
  }
  return { rho: cmatMul(cmatMul(st.W, acc), cmatDagger(st.W)), error };
}

/**
 * Tr ρ(s) on a set of speeds, keeping only terms whose phase-length is below `phiMax` (faster terms
 * average out against the smooth weights they are used with; phiMax = Infinity keeps all).
 */
export function specTraceAt(st: SpecState, speeds: ArrayLike<number>, phiMax: number): Float64Array {
  const r = st.W.cols;
  const g = cmatMul(cmatDagger(st.W), st.W);
  const out = new Float64Array(speeds.length);
  for (const t of st.terms) {
    for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
      const i = a * r + b;
      const xr = t.X.re[i], xi = t.X.im[i];
      if (xr === 0 && xi === 0) continue;
      // Tr(W X W†) = Σ_ab X_ab (W†W)_ba
      const gr = g.re[b * r + a], gi = g.im[b * r + a];
      const cr = xr * gr - xi * gi, ci = xr * gi + xi * gr;
      if (cr === 0 && ci === 0) continue;
      const f = t.phi + (st.omega ? st.omega[i] : 0);
      if (Math.abs(f) > phiMax) continue;
      for (let k = 0; k < speeds.length; k++) {
        const ph = f / speeds[k];
        out[k] += cr * Math.cos(ph) + ci * Math.sin(ph);
      }
    }
  }
  return out;
}

/** ρ at one speed v (a plain matrix). */
export function specAt(st: SpecState, v: number): CMat {
  const r = st.W.cols;
  const acc = cmatZeros(r, r);
  for (const t of st.terms) {
    for (let i = 0; i < r * r; i++) {
      const xr = t.X.re[i], xi = t.X.im[i];
      if (xr === 0 && xi === 0) continue;
      const ph = (t.phi + (st.omega ? st.omega[i] : 0)) / v;
      const c = Math.cos(ph), s = -Math.sin(ph);
      acc.re[i] += xr * c - xi * s;
      acc.im[i] += xr * s + xi * c;
    }
  }
  return cmatMul(cmatMul(st.W, acc), cmatDagger(st.W));
}
