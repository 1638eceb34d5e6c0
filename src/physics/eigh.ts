/**
 * Hermitian eigensolver and the functions built on it (propagators, eigenprojectors).
 *
 * Method: cyclic complex Jacobi rotations (each annihilates one off-diagonal pair exactly), with a
 * threshold strategy, until every off-diagonal entry is below 1e-17·‖H‖. Jacobi is chosen over
 * tridiagonalisation because it is accurate to the last bits in the eigenvectors as well as the
 * eigenvalues (residual ‖HV − VΛ‖ ≈ 1e-15‖H‖ for d ≤ 64), which the labelling of nearly degenerate
 * hyperfine levels needs. Eigenvalues come out ascending; vectors are the columns of V.
 */
import { type CMat, cmatZeros, cmatClone, cmatMul, cmatDagger, zeroedF64 } from './cmat.ts';
import { reduceAngle } from './trig.ts';

export interface Eigen {
  /** Ascending eigenvalues. */
  readonly values: Float64Array;
  /** Unitary V with H = V diag(values) V†; column k is the eigenvector of values[k]. */
  readonly vectors: CMat;
}

export function eigh(h: CMat): Eigen {
  const n = h.rows;
  if (h.cols !== n) throw new Error('eigh: matrix is not square');
  const a = cmatClone(h);
  const ar = a.re, ai = a.im;
  // symmetrise (Hermitian part) to remove round-off asymmetry
  for (let i = 0; i < n; i++) {
    ai[i * n + i] = 0;
    for (let j = i + 1; j < n; j++) {
      const r = 0.5 * (ar[i * n + j] + ar[j * n + i]);
      const m = 0.5 * (ai[i * n + j] - ai[j * n + i]);
      ar[i * n + j] = r; ai[i * n + j] = m;
      ar[j * n + i] = r; ai[j * n + i] = -m;
    }
  }
  const v = cmatZeros(n, n);
  const vr = v.re, vi = v.im;
  for (let i = 0; i < n; i++) vr[i * n + i] = 1;

  let scale = 0;
  for (let i = 0; i < n * n; i++) scale = Math.max(scale, Math.abs(ar[i]), Math.abs(ai[i]));
  if (scale === 0 || n === 1) return finish(a, v);
  const tiny = 1e-17 * scale;

  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off = Math.max(off, Math.hypot(ar[p * n + q], ai[p * n + q]));
    if (off <= tiny) break;
    const thresh = sweep < 3 ? 0.2 * off : 0;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const hr = ar[p * n + q], hi = ai[p * n + q];
        const mag = Math.hypot(hr, hi);
        if (mag <= tiny || mag < thresh) {
          if (mag <= tiny) { ar[p * n + q] = 0; ai[p * n + q] = 0; ar[q * n + p] = 0; ai[q * n + p] = 0; }
          continue;
        }
        // phase e^{iφ} = h_pq/|h_pq|; reduce to a real symmetric 2x2 problem
        const er = hr / mag, ei = hi / mag;
        const app = ar[p * n + p], aqq = ar[q * n + q];
        const theta = (aqq - app) / (2 * mag);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        // Rotation G acting on columns p,q:  col_p' = c·col_p − s·e^{-iφ}·col_q ; col_q' = s·e^{iφ}·col_p + c·col_q
        // (G = [[c, s e^{iφ}], [−s e^{−iφ}, c]] in the (p,q) block), A' = G† A G.
        // Apply A ← A G (columns)
        for (let k = 0; k < n; k++) {
          const kp = k * n + p, kq = k * n + q;
          const xpr = ar[kp], xpi = ai[kp], xqr = ar[kq], xqi = ai[kq];
          // −s e^{-iφ} x_q
          const mr = er * xqr + ei * xqi, mi = er * xqi - ei * xqr; // e^{-iφ} x_q
          const nr = er * xpr - ei * xpi, ni = er * xpi + ei * xpr; // e^{iφ} x_p
          ar[kp] = c * xpr - s * mr; ai[kp] = c * xpi - s * mi;
          ar[kq] = s * nr + c * xqr; ai[kq] = s * ni + c * xqi;
        }
        // A ← G† A (rows): row_p' = c·row_p − s·e^{iφ}·row_q ; row_q' = s·e^{-iφ}·row_p + c·row_q
        for (let k = 0; k < n; k++) {
          const pk = p * n + k, qk = q * n + k;
          const xpr = ar[pk], xpi = ai[pk], xqr = ar[qk], xqi = ai[qk];
          const mr = er * xqr - ei * xqi, mi = er * xqi + ei * xqr; // e^{iφ} x_q
          const nr = er * xpr + ei * xpi, ni = er * xpi - ei * xpr; // e^{-iφ} x_p
          ar[pk] = c * xpr - s * mr; ai[pk] = c * xpi - s * mi;
          ar[qk] = s * nr + c * xqr; ai[qk] = s * ni + c * xqi;
        }
        ar[p * n + q] = 0; ai[p * n + q] = 0; ar[q * n + p] = 0; ai[q * n + p] = 0;
        ai[p * n + p] = 0; ai[q * n + q] = 0;
        // V ← V G
        for (let k = 0; k < n; k++) {
          const kp = k * n + p, kq = k * n + q;
          const xpr = vr[kp], xpi = vi[kp], xqr = vr[kq], xqi = vi[kq];
          const mr = er * xqr + ei * xqi, mi = er * xqi - ei * xqr;
          const nr = er * xpr - ei * xpi, ni = er * xpi + ei * xpr;
          vr[kp] = c * xpr - s * mr; vi[kp] = c * xpi - s * mi;
          vr[kq] = s * nr + c * xqr; vi[kq] = s * ni + c * xqi;
        }
      }
    }
  }
  return finish(a, v);
}

function finish(a: CMat, v: CMat): Eigen {
  const n = a.rows;
  const order = Array.from({ length: n }, (_, i) => i).sort((x, y) => a.re[x * n + x] - a.re[y * n + y]);
  const values = zeroedF64(n);
  const vectors = cmatZeros(n, n);
  order.forEach((src, dst) => {
    values[dst] = a.re[src * n + src];
    for (let k = 0; k < n; k++) {
      vectors.re[k * n + dst] = v.re[k * n + src];
      vectors.im[k * n + dst] = v.im[k * n + src];
    }
  });
  return { values, vectors };
}

/** V·diag(f(λ))·V† for a complex function f given as [re, im] of each eigenvalue. */
export function spectralFunction(e: Eigen, f: (lambda: number) => readonly [number, number]): CMat {
  const n = e.values.length;
  const vr = e.vectors.re, vi = e.vectors.im;
  const out = cmatZeros(n, n);
  const fr = zeroedF64(n), fi = zeroedF64(n);
  for (let k = 0; k < n; k++) [fr[k], fi[k]] = f(e.values[k]);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let sr = 0, si = 0;
      for (let k = 0; k < n; k++) {
        // V_ik f_k conj(V_jk)
        const ar = vr[i * n + k], ai = vi[i * n + k];
        const br = vr[j * n + k], bi = -vi[j * n + k];
        const pr = ar * br - ai * bi, pi = ar * bi + ai * br;
        sr += pr * fr[k] - pi * fi[k];
        si += pr * fi[k] + pi * fr[k];
      }
      out.re[i * n + j] = sr;
      out.im[i * n + j] = si;
    }
  }
  return out;
}

/** Propagator exp(−i H t) of a Hermitian H (ħ = 1), through the eigendecomposition. */
export function expmiHermitian(h: CMat, t: number): CMat {
  return spectralFunction(eigh(h), (l) => {
    const ph = reduceAngle(l * t);
    return [Math.cos(ph), -Math.sin(ph)];
  });
}

/** Residual ‖HV − VΛ‖_F of an eigendecomposition. */
export function eigResidual(h: CMat, e: Eigen): number {
  const hv = cmatMul(h, e.vectors);
  const n = h.rows;
  let s = 0;
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < n; k++) {
      const dr = hv.re[i * n + k] - e.vectors.re[i * n + k] * e.values[k];
      const di = hv.im[i * n + k] - e.vectors.im[i * n + k] * e.values[k];
      s += dr * dr + di * di;
    }
  }
  return Math.sqrt(s);
}

/** ‖V†V − 1‖_F. */
export function unitarityError(u: CMat): number {
  const p = cmatMul(cmatDagger(u), u);
  const n = u.cols;
  let s = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const dr = p.re[i * n + j] - (i === j ? 1 : 0);
      s += dr * dr + p.im[i * n + j] ** 2;
    }
  }
  return Math.sqrt(s);
}

export interface Eigenspace {
  /** Eigenvalue (mean over the cluster). */
  readonly value: number;
  /** Orthogonal projector onto the eigenspace. */
  readonly projector: CMat;
  /** Indices of the columns of the eigendecomposition that span it. */
  readonly columns: readonly number[];
}

/**
 * Eigenprojectors of a Hermitian matrix: eigenvalues closer than `tol` (absolute) are one eigenspace.
 * Returned in descending eigenvalue order (so n̂·J gives m = +j first).
 */
export function eigenprojectors(h: CMat, tol: number = 1e-9): Eigenspace[] {
  const e = eigh(h);
  const n = e.values.length;
  const groups: number[][] = [];
  for (let k = n - 1; k >= 0; k--) {
    const g = groups[groups.length - 1];
    if (g && Math.abs(e.values[g[g.length - 1]] - e.values[k]) <= tol) g.push(k);
    else groups.push([k]);
  }
  return groups.map((cols) => ({
    value: cols.reduce((s, k) => s + e.values[k], 0) / cols.length,
    projector: projectorOnColumns(e.vectors, cols),
    columns: cols,
  }));
}

/** Σ_k |v_k⟩⟨v_k| over the given columns of V. */
export function projectorOnColumns(v: CMat, cols: readonly number[]): CMat {
  const n = v.rows;
  const out = cmatZeros(n, n);
  for (const k of cols) {
    for (let i = 0; i < n; i++) {
      const ar = v.re[i * v.cols + k], ai = v.im[i * v.cols + k];
      if (ar === 0 && ai === 0) continue;
      for (let j = 0; j < n; j++) {
        const br = v.re[j * v.cols + k], bi = -v.im[j * v.cols + k];
        out.re[i * n + j] += ar * br - ai * bi;
        out.im[i * n + j] += ar * bi + ai * br;
      }
    }
  }
  return out;
}
