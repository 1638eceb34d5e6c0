/**
 * A basis from a field's m_F blocks kept as factors, W = left · blocks (spectral.ts BasisFactors), and the
 * products with it over the blocks' sparse columns and rows (physics/hyperfine.ts zeemanEigen gives the
 * rows each column can be non-zero in): left·B, B†M, B†QB and B H B†, and the products of long-lived
 * matrices kept per pair of objects (a scan's unchanged basis, a port's projector, a field's axis rotation).
 */
import { type CMat, cmatMul, cmatDagger, cmatZeros, cmatOwn } from '../physics/cmat.ts';
import { denseKernels } from '../physics/kernels.ts';
import type { ColumnSupport } from '../physics/hyperfine.ts';
import { workArray } from './work.ts';

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

/** V = rot · blocks, the factors of an eigenbasis from the m_F blocks (physics/hyperfine.ts zeemanEigen). */
export interface PropagatorFactors {
  readonly rot: CMat | undefined;
  readonly blocks: CMat;
  readonly support: ColumnSupport;
}

/** left · blocks over the non-zero rows of each column. */
export function leftTimesBlocks(fac: BasisFactors): CMat {
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
export function kTimesLeft(k: CMat, left: CMat | undefined): CMat {
  return left ? kLeft(k, left) : k;
}

const grams = new WeakMap<CMat, CMat>();
/** left† · left, kept with left. */
export function gramOf(left: CMat): CMat {
  let g = grams.get(left);
  if (!g) {
    g = cmatOwn(cmatMul(cmatDagger(left), left));
    grams.set(left, g);
  }
  return g;
}

const productScratch = workArray((n) => new Float64Array(n));

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
export function blocksDaggerTimes(f: PropagatorFactors, m: CMat): CMat {
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

/**
 * B† Q B for Q Hermitian, over the non-zero rows of each column of B: the sandwich of blocksSandwich
 * with B† (sparse by rows where B is sparse by columns) in a work array.
 */
export function blocksDaggerSandwich(f: PropagatorFactors, q: CMat): CMat {
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
export const rotatedBasisOf = pairCache((w: CMat, rot: CMat) => cmatMul(cmatDagger(rot), w));
export function rotatedBasis(rot: CMat, w: CMat): CMat {
  return rotatedBasisOf(w, rot);
}

/** N = B H B†, H = (A + A†)/2, over the non-zero columns of each row of B; N is Hermitian. */
export function blocksSandwich(f: BasisFactors, A: CMat): CMat {
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

/**
 * The entries (b, a) of the Gram matrix W†W = B†(L†L)B of a factored basis at the pairs i = a·r + b listed in
 * `pairs`, over the few non-zero rows of columns a and b of B, without forming W (re into gre, im into gim).
 */
export function blocksGramEntries(f: BasisFactors, r: number, pairs: Int32Array, gre: Float64Array, gim: Float64Array): void {
  const np = pairs.length;
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
}
