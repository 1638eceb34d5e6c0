/**
 * Dense complex matrices on Float64Array.
 *
 * Storage order: row-major, real and imaginary parts in two separate arrays of length rows·cols.
 * Element (r, c) is `re[r * cols + c] + i · im[r * cols + c]`. A column vector is a matrix with cols = 1.
 * Functions return new matrices and never mutate their arguments, except those named `...Into` or `...InPlace`.
 */
export interface CMat {
  readonly rows: number;
  readonly cols: number;
  readonly re: Float64Array;
  readonly im: Float64Array;
}

export interface Complex {
  re: number;
  im: number;
}

// Small typed arrays are carved out of shared 64 KiB blocks: a Float64Array of more than 8 elements
// gets its own off-heap buffer, which costs over a microsecond to allocate and to collect, while a
// view on an existing buffer costs about 60 ns (measured here; docs/bench.md). Larger blocks are cheaper
// per byte in Node (an ArrayBuffer costs about 16 µs at 64 KiB and 25 µs at 256 KiB here), but 256 KiB
// blocks made every edit in the app 30–40 ms slower in Chromium (`npm run bench -- ui`), so the block
// stays at 64 KiB. A block is only ever bumped forward, never reused, so every view starts zeroed; a
// block is freed with its last view.
const BLOCK = 8192;
let block = new ArrayBuffer(8 * BLOCK);
let blockUsed = 0;

/** A zeroed Float64Array of length n (a view on a shared block when n is small). */
export function zeroedF64(n: number): Float64Array {
  if (n > BLOCK / 16) return new Float64Array(n);
  if (blockUsed + n > BLOCK) {
    block = new ArrayBuffer(8 * BLOCK);
    blockUsed = 0;
  }
  const out = new Float64Array(block, 8 * blockUsed, n);
  blockUsed += n;
  return out;
}

/**
 * A copy of m in arrays of its own. Matrices kept in long-lived caches are stored this way, so that
 * they do not hold on to the shared block they were carved from (and the garbage beside them).
 */
export function cmatOwn(m: CMat): CMat {
  // slice() copies into a new buffer of exactly this length (Float64Array.from would iterate)
  return { rows: m.rows, cols: m.cols, re: m.re.slice(), im: m.im.slice() };
}

/** A copy of `a` as a Float64Array (a view on a shared block when small). */
export function copyF64(a: ArrayLike<number>): Float64Array {
  const out = zeroedF64(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i];
  return out;
}

export function cmatZeros(rows: number, cols: number = rows): CMat {
  return { rows, cols, re: zeroedF64(rows * cols), im: zeroedF64(rows * cols) };
}

export function cmatIdentity(n: number): CMat {
  const m = cmatZeros(n, n);
  for (let i = 0; i < n; i++) m.re[i * n + i] = 1;
  return m;
}

export function cmatClone(a: CMat): CMat {
  const out = cmatZeros(a.rows, a.cols);
  out.re.set(a.re);
  out.im.set(a.im);
  return out;
}

/** Builds a matrix from nested rows of numbers or [re, im] pairs. */
export function cmatFrom(rows: readonly (readonly (number | readonly [number, number])[])[]): CMat {
  const r = rows.length;
  const c = r === 0 ? 0 : rows[0].length;
  const m = cmatZeros(r, c);
  for (let i = 0; i < r; i++) {
    if (rows[i].length !== c) throw new Error('cmatFrom: ragged rows');
    for (let j = 0; j < c; j++) {
      const v = rows[i][j];
      if (typeof v === 'number') m.re[i * c + j] = v;
      else {
        m.re[i * c + j] = v[0];
        m.im[i * c + j] = v[1];
      }
    }
  }
  return m;
}

export function cmatGet(a: CMat, r: number, c: number): Complex {
  const k = r * a.cols + c;
  return { re: a.re[k], im: a.im[k] };
}

/** Diagonal matrix from real entries. */
export function cmatDiag(d: ArrayLike<number>): CMat {
  const n = d.length;
  const m = cmatZeros(n, n);
  for (let i = 0; i < n; i++) m.re[i * n + i] = d[i];
  return m;
}

/**
 * W P W† for W (d×r, given by its parts wr, wi, row-major) and P (r×r): W P in a scratch array, so the
 * result is the only allocation (per-speed and per-point code: a propagation U ρ U†, a state at one speed).
 */
export function cmatSandwichParts(wr: ArrayLike<number>, wi: ArrayLike<number>, d: number, r: number, p: CMat): CMat {
  if (sandwichScratch.length < 2 * d * r) sandwichScratch = new Float64Array(4 * d * r);
  const t = sandwichScratch, o = d * r;
  const pr = p.re, pi = p.im;
  // T = W P: t[0, o) real parts, t[o, 2o) imaginary parts
  for (let i = 0; i < d; i++) for (let b = 0; b < r; b++) {
    let sr = 0, si = 0;
    for (let a = 0; a < r; a++) {
      const xr = wr[i * r + a], xi = wi[i * r + a], yr = pr[a * r + b], yi = pi[a * r + b];
      sr += xr * yr - xi * yi;
      si += xr * yi + xi * yr;
    }
    t[i * r + b] = sr;
    t[o + i * r + b] = si;
  }
  // out = T W†: out_ij = Σ_b T_ib conj(W_jb)
  const out = cmatZeros(d, d);
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
    let sr = 0, si = 0;
    for (let b = 0; b < r; b++) {
      const xr = t[i * r + b], xi = t[o + i * r + b], yr = wr[j * r + b], yi = -wi[j * r + b];
      sr += xr * yr - xi * yi;
      si += xr * yi + xi * yr;
    }
    out.re[i * d + j] = sr;
    out.im[i * d + j] = si;
  }
  return out;
}
let sandwichScratch = new Float64Array(256);

/** Matrix product A·B. */
export function cmatMul(a: CMat, b: CMat): CMat {
  if (a.cols !== b.rows) throw new Error(`cmatMul: ${a.rows}x${a.cols} times ${b.rows}x${b.cols}`);
  const out = cmatZeros(a.rows, b.cols);
  mulAdd(a.re, a.im, b.re, b.im, a.rows, a.cols, b.cols, out.re, out.im);
  return out;
}

/**
 * C = A·B for matrices given by their parts (A n×k, B k×m, row-major) into (cr, ci), which must not
 * alias A or B: per-speed code keeps its products in arrays of its own.
 */
export function cmatMulInto(ar: ArrayLike<number>, ai: ArrayLike<number>, br: ArrayLike<number>, bi: ArrayLike<number>, n: number, k: number, m: number, cr: Float64Array, ci: Float64Array): void {
  cr.fill(0, 0, n * m);
  ci.fill(0, 0, n * m);
  mulAdd(ar, ai, br, bi, n, k, m, cr, ci);
}

/** (or, oi) += A·B, skipping the zero entries of A. */
function mulAdd(ar: ArrayLike<number>, ai: ArrayLike<number>, br: ArrayLike<number>, bi: ArrayLike<number>, n: number, k: number, m: number, or: Float64Array, oi: Float64Array): void {
  for (let i = 0; i < n; i++) {
    const io = i * m;
    for (let p = 0; p < k; p++) {
      const xr = ar[i * k + p];
      const xi = ai[i * k + p];
      if (xr === 0 && xi === 0) continue;
      const po = p * m;
      for (let j = 0; j < m; j++) {
        const yr = br[po + j];
        const yi = bi[po + j];
        or[io + j] += xr * yr - xi * yi;
        oi[io + j] += xr * yi + xi * yr;
      }
    }
  }
}

/** Conjugate transpose A†. */
export function cmatDagger(a: CMat): CMat {
  const out = cmatZeros(a.cols, a.rows);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.cols; j++) {
      out.re[j * a.rows + i] = a.re[i * a.cols + j];
      out.im[j * a.rows + i] = -a.im[i * a.cols + j];
    }
  }
  return out;
}

export function cmatAdd(a: CMat, b: CMat): CMat {
  const out = cmatClone(a);
  for (let i = 0; i < out.re.length; i++) {
    out.re[i] += b.re[i];
    out.im[i] += b.im[i];
  }
  return out;
}

export function cmatSub(a: CMat, b: CMat): CMat {
  const out = cmatClone(a);
  for (let i = 0; i < out.re.length; i++) {
    out.re[i] -= b.re[i];
    out.im[i] -= b.im[i];
  }
  return out;
}

/** Adds s·B to A in place (s complex). */
export function cmatAddScaledInPlace(a: CMat, b: CMat, sr: number, si: number = 0): void {
  for (let i = 0; i < a.re.length; i++) {
    const br = b.re[i], bi = b.im[i];
    a.re[i] += sr * br - si * bi;
    a.im[i] += sr * bi + si * br;
  }
}

/** s·A for complex s = sr + i·si. */
export function cmatScale(a: CMat, sr: number, si: number = 0): CMat {
  const out = cmatZeros(a.rows, a.cols);
  for (let i = 0; i < a.re.length; i++) {
    out.re[i] = sr * a.re[i] - si * a.im[i];
    out.im[i] = sr * a.im[i] + si * a.re[i];
  }
  return out;
}

/** Linear combination Σ c_k A_k with real coefficients. */
export function cmatCombine(terms: readonly (readonly [number, CMat])[]): CMat {
  const out = cmatZeros(terms[0][1].rows, terms[0][1].cols);
  for (const [c, m] of terms) cmatAddScaledInPlace(out, m, c, 0);
  return out;
}

export function cmatTrace(a: CMat): Complex {
  let re = 0, im = 0;
  for (let i = 0; i < a.rows; i++) {
    re += a.re[i * a.cols + i];
    im += a.im[i * a.cols + i];
  }
  return { re, im };
}

/** Tr(A·B) without forming the product. */
export function cmatTraceProduct(a: CMat, b: CMat): Complex {
  const n = a.rows, k = a.cols;
  let re = 0, im = 0;
  for (let i = 0; i < n; i++) {
    for (let p = 0; p < k; p++) {
      const xr = a.re[i * k + p], xi = a.im[i * k + p];
      const yr = b.re[p * n + i], yi = b.im[p * n + i];
      re += xr * yr - xi * yi;
      im += xr * yi + xi * yr;
    }
  }
  return { re, im };
}

/** Kronecker product A ⊗ B: (A⊗B)[(i·p + k), (j·q + l)] = A[i,j]·B[k,l]. */
export function cmatKron(a: CMat, b: CMat): CMat {
  const rows = a.rows * b.rows;
  const cols = a.cols * b.cols;
  const out = cmatZeros(rows, cols);
  for (let i = 0; i < a.rows; i++) {
    for (let j = 0; j < a.cols; j++) {
      const xr = a.re[i * a.cols + j], xi = a.im[i * a.cols + j];
      if (xr === 0 && xi === 0) continue;
      for (let k = 0; k < b.rows; k++) {
        for (let l = 0; l < b.cols; l++) {
          const yr = b.re[k * b.cols + l], yi = b.im[k * b.cols + l];
          const o = (i * b.rows + k) * cols + (j * b.cols + l);
          out.re[o] = xr * yr - xi * yi;
          out.im[o] = xr * yi + xi * yr;
        }
      }
    }
  }
  return out;
}

/** Frobenius norm ‖A‖_F. */
export function cmatNorm(a: CMat): number {
  let s = 0;
  for (let i = 0; i < a.re.length; i++) s += a.re[i] * a.re[i] + a.im[i] * a.im[i];
  return Math.sqrt(s);
}

/** Largest absolute entry of A − B. */
export function cmatMaxAbsDiff(a: CMat, b: CMat): number {
  let m = 0;
  for (let i = 0; i < a.re.length; i++) {
    const d = Math.hypot(a.re[i] - b.re[i], a.im[i] - b.im[i]);
    if (d > m) m = d;
  }
  return m;
}

/** Commutator [A, B] = AB − BA. */
export function cmatCommutator(a: CMat, b: CMat): CMat {
  return cmatSub(cmatMul(a, b), cmatMul(b, a));
}

/** Anticommutator {A, B} = AB + BA. */
export function cmatAnticommutator(a: CMat, b: CMat): CMat {
  return cmatAdd(cmatMul(a, b), cmatMul(b, a));
}

/** ‖A − A†‖_F: zero for a Hermitian matrix. */
export function cmatHermiticityError(a: CMat): number {
  let s = 0;
  const n = a.rows;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const dr = a.re[i * n + j] - a.re[j * n + i];
      const di = a.im[i * n + j] + a.im[j * n + i];
      s += dr * dr + di * di;
    }
  }
  return Math.sqrt(s);
}

/** (A + A†)/2: removes round-off anti-Hermitian parts. */
export function cmatHermitianPart(a: CMat): CMat {
  const n = a.rows;
  const out = cmatZeros(n, n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      out.re[i * n + j] = 0.5 * (a.re[i * n + j] + a.re[j * n + i]);
      out.im[i * n + j] = 0.5 * (a.im[i * n + j] - a.im[j * n + i]);
    }
  }
  return out;
}

/** A·B·A† (the conjugation of B by A). */
export function cmatConjugate(a: CMat, b: CMat): CMat {
  return cmatMul(cmatMul(a, b), cmatDagger(a));
}

/** A†·B·A. */
export function cmatConjugateDagger(a: CMat, b: CMat): CMat {
  return cmatMul(cmatMul(cmatDagger(a), b), a);
}

/** Column j of A as an n×1 matrix. */
export function cmatColumn(a: CMat, j: number): CMat {
  const out = cmatZeros(a.rows, 1);
  for (let i = 0; i < a.rows; i++) {
    out.re[i] = a.re[i * a.cols + j];
    out.im[i] = a.im[i * a.cols + j];
  }
  return out;
}
