/**
 * The exact table sums of the velocity average in WebAssembly SIMD (src/physics/kernels.wat): for a
 * table of n speeds v_k with weights w_k and r levels, z_a(k) = e^{−iμ_a s_k} with s_k = 1/v_k, and
 * S_ab = Σ_k e_k z_a(k) conj z_b(k) with e_k = w_k e^{−iφ s_k}.
 * The arithmetic is that of the JavaScript path (physics/trig.ts expNegI, engine/spectral.ts), two
 * speeds at a time; test/physics/kernels.test.ts checks the two against each other. Where WebAssembly
 * cannot be compiled (a policy without 'wasm-unsafe-eval', an old host) `tableKernel()` is null and the
 * engine uses the JavaScript path.
 */
import { KERNELS_WASM_BASE64 } from './kernels-wasm.ts';

// The host's WebAssembly and atob, typed here so that the core compiles without the DOM library.
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmHost {
  readonly WebAssembly?: {
    Module: new (bytes: Uint8Array<ArrayBuffer>) => object;
    Instance: new (module: object, imports: object) => { readonly exports: unknown };
  };
  readonly atob?: (s: string) => string;
}
const host = globalThis as unknown as WasmHost;

interface Exports {
  readonly memory: WasmMemory;
  phases(mu: number, r: number, s: number, q: number, n: number, z: number): void;
  weights(phi: number, s: number, n: number, e: number): void;
  scale(e: number, z: number, y: number, n: number, r: number): void;
  pairs(y: number, z: number, n: number, r: number, todo: number, S: number): void;
  need(xr: number, xi: number, r: number, rp: number, herm: number, todo: number): number;
  contract(xr: number, xi: number, s: number, todo: number, r: number, rp: number, herm: number, wsum: number, ar: number, ai: number): void;
  gram(zr: number, zi: number, sg: number, m: number, d: number, dp: number, or: number, oi: number): void;
  chol(ar: number, ai: number, n: number, delta: number, lr: number, li: number): number;
  bhb(br: number, bi: number, rs: number, cols: number, d: number, r: number, ar: number, ai: number, hr: number, hi: number, tr: number, ti: number, nr: number, ni: number): void;
  rowdots(mr: number, mi: number, gr: number, gi: number, ns: number, np: number, out: number): void;
}

/** Beyond this |phase| the kernel's quadrant index would saturate (physics/trig.ts FAST_LIMIT). */
const FAST_LIMIT = 3e9;

export interface TableKernel {
  /**
   * Keeps the table's inverse speeds s_k = 1/v_k (computed as in the JavaScript path) and weights w_k;
   * a later call with the same two arrays reuses them.
   */
  table(speeds: Float64Array, weights: Float64Array): void;
  /**
   * Computes z_a(k) = e^{−iμ_a s_k} for the table; false (nothing computed) when a phase reaches
   * 3e9 rad or is not finite, where the caller takes the JavaScript path.
   */
  phases(mu: ArrayLike<number>): boolean;
  /**
   * S_ab = Σ_k e_k z_a(k) conj z_b(k), e_k = w_k e^{−iφ s_k}, for every (a, b) with todo[a·r + b]
   * set, written to S[2(a·r + b)] (re) and S[2(a·r + b) + 1] (im); other entries of S may be written
   * too. False (nothing computed) when |φ|·s_k reaches 3e9 rad.
   */
  pairs(phi: number, todo: Uint8Array, S: Float64Array): boolean;
  /**
   * The beam average A = Σ_t X_t ∘ S(φ_t) of a state's terms, kept in the module: `beginAverage` sets
   * A = 0 (r×r, r the levels of the last `phases`); `accumulate` adds one term (X r×r; with φ = 0 the
   * term is Hermitian: S_ba = conj S_ab and S_aa = wsum, the weights' sum), finding its pairs as the
   * JavaScript path does (1e-18 of its largest entry), and is false (nothing added) when |φ|·s_k reaches
   * 3e9 rad; `endAverage` adds A into out.
   */
  beginAverage(): void;
  accumulate(phi: number, x: { re: Float64Array; im: Float64Array }, wsum: number): boolean;
  endAverage(out: { re: Float64Array; im: Float64Array }): void;
}

/** Small dense Hermitian products and tests in WebAssembly (the per-point matrix work of a scan). */
export interface DenseKernels {
  /**
   * out = Σ_k sg_k z_k z_k† for the m rows z_k of (zr, zi) (row k at k·d, length d); out is d×d,
   * Hermitian, its lower half the mirror of the upper.
   */
  gram(zr: Float64Array, zi: Float64Array, sg: Float64Array, m: number, d: number, out: { re: Float64Array; im: Float64Array }): void;
  /** True when the Hermitian part of a (n×n) plus δ·1 has a Cholesky factor (every eigenvalue > −δ). */
  positive(ar: Float64Array, ai: Float64Array, n: number, delta: number): boolean;
  /**
   * out = B H B† with H = (A + A†)/2 (r×r) and B (d×r) non-zero only in the columns cols[rowStart[i]] …
   * cols[rowStart[i + 1] − 1] of each row i; out (d×d) Hermitian.
   */
  bhb(b: { re: Float64Array; im: Float64Array }, rowStart: Int32Array, cols: Int32Array, d: number, r: number, a: { re: Float64Array; im: Float64Array }, out: { re: Float64Array; im: Float64Array }): void;
  /**
   * out[k] = Σ_p (mr[k·np + p] gr[p] − mi[k·np + p] gi[p]), k < ns: the real part of Σ_p M_kp G_p for
   * the rows of (mr, mi); the rows are copied once per pair of arrays and kept while the same pair
   * comes back (the leaves of one state share their per-speed matrices).
   */
  rowDots(mr: Float64Array, mi: Float64Array, gr: Float64Array, gi: Float64Array, ns: number, np: number, out: Float64Array): void;
}

let instance: Exports | null | undefined;

function decode(b64: string, atob: (s: string) => string): Uint8Array<ArrayBuffer> {
  const bin = atob(b64);
  const out = new Uint8Array(new ArrayBuffer(bin.length));
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

function load(): Exports | null {
  if (instance !== undefined) return instance;
  const wasm = host.WebAssembly, atob = host.atob;
  if (!wasm || !atob) return (instance = null);
  try {
    const mod = new wasm.Module(decode(KERNELS_WASM_BASE64, atob));
    instance = new wasm.Instance(mod, {}).exports as Exports;
  } catch {
    instance = null;
  }
  return instance;
}

let disabled = false;
/** Turns the WebAssembly path off or on (tests compare the two paths; `npm run bench` reports both). */
export function setKernelsEnabled(on: boolean): void {
  disabled = !on;
}

/** The kernel, or null where WebAssembly is unavailable or turned off. */
export function tableKernel(): TableKernel | null {
  if (disabled) return null;
  const ex = load();
  return ex ? kernelOn(ex) : null;
}

/** The dense kernels, or null where WebAssembly is unavailable or turned off. */
export function denseKernels(): DenseKernels | null {
  if (disabled) return null;
  const ex = load();
  if (!ex) return null;
  kernelOn(ex);
  return cached!.dense;
}

let cached: { ex: Exports; k: TableKernel; dense: DenseKernels } | null = null;

function kernelOn(ex: Exports): TableKernel {
  if (cached?.ex === ex) return cached.k;
  // layout (bytes): s | √w | mu | z | e | y | todo | S, rows of complex numbers as in kernels.wat; z_a(k)
  // carries √w_k, so that Σ_k z_a conj z_b carries w_k and a term with φ = 0 needs no weighting pass
  let r = 0, n = 0, rp = 0, np = 0, sMax = 0;
  let speedsNow: Float64Array | null = null, weightsNow: Float64Array | null = null;
  let oS = 0, oW = 0, oMu = 0, oZ = 0, oE = 0, oY = 0, oTodo = 0, oOut = 0, oXr = 0, oXi = 0, oAr = 0, oAi = 0;
  let f = new Float64Array(ex.memory.buffer);
  let ints = new Int32Array(ex.memory.buffer);
  /** Copies the first n entries of src to byte offset o (src itself when it has exactly n). */
  const put = (src: Float64Array, n: number, o: number): void => {
    f.set(src.length === n ? src : src.subarray(0, n), o / 8);
  };
  const ensure = (bytes: number): void => {
    const mem = ex.memory;
    if (mem.buffer.byteLength < bytes) mem.grow(Math.ceil((bytes - mem.buffer.byteLength) / 65536));
    if (f.buffer !== mem.buffer) f = new Float64Array(mem.buffer);
  };
  const layout = (levels: number): void => {
    gen++;
    r = levels;
    rp = r + (r & 1);
    oMu = oW + 8 * np;
    oZ = oMu + 8 * rp;
    oE = oZ + 16 * rp * np;
    oY = oE + 16 * np;
    oTodo = oY + 16 * rp * np;
    oOut = oTodo + 8 * Math.ceil((rp * rp) / 8);
    // a term's X and the average A (rp×rp each, real and imaginary parts apart)
    oXr = oOut + 16 * rp * rp;
    oXi = oXr + 8 * rp * rp;
    oAr = oXi + 8 * rp * rp;
    oAi = oAr + 8 * rp * rp;
    ensure(oAi + 8 * rp * rp);
  };
  // rowDots keeps its rows with the arrays they came from; any new table layout may overwrite them
  let rowsOf: Float64Array | null = null, rowsAt = -1, rowsGen = -1, gen = 0;
  const k: TableKernel = {
    table(speeds, weights) {
      // the weights of a table are fractions of the flux (≥ 0, physics/velocity.ts): √w is real
      if (speeds === speedsNow && weights === weightsNow && speeds.length === n) return;
      n = speeds.length;
      // the phases go four speeds at a time (kernels.wat), the rest two at a time
      np = (n + 3) & ~3;
      oS = 0;
      oW = oS + 8 * np;
      layout(0);
      sMax = 0;
      let negative = false;
      // a padding speed repeats the last one; its weight is 0, so it adds nothing
      for (let j = 0; j < np; j++) {
        const s = 1 / speeds[j < n ? j : n - 1];
        f[oS / 8 + j] = s;
        f[oW / 8 + j] = j < n ? Math.sqrt(weights[j]) : 0;
        sMax = Math.max(sMax, s);
        if (j < n && !(weights[j] >= 0)) negative = true;
      }
      // a negative (or NaN) weight has no real square root: the JavaScript path takes such a table
      if (negative) sMax = Infinity;
      speedsNow = speeds;
      weightsNow = weights;
    },
    phases(mu) {
      if (!speedsNow || n === 0) return false;
      let muMax = 0;
      for (let a = 0; a < mu.length; a++) muMax = Math.max(muMax, Math.abs(mu[a]));
      if (!(muMax * sMax < FAST_LIMIT)) return false;
      layout(mu.length);
      for (let a = 0; a < rp; a++) f[oMu / 8 + a] = a < r ? mu[a] : 0;
      ex.phases(oMu, rp, oS, oW, np, oZ);
      return true;
    },
    pairs(phi, todo, S) {
      if (!(Math.abs(phi) * sMax < FAST_LIMIT)) return false;
      const t = new Uint8Array(ex.memory.buffer, oTodo, rp * rp);
      if (rp === r) t.set(todo.subarray(0, r * r));
      else {
        t.fill(0);
        for (let a = 0; a < r; a++) t.set(todo.subarray(a * r, a * r + r), a * rp);
      }
      if (phi === 0) ex.pairs(oZ, oZ, np, rp, oTodo, oOut);
      else {
        ex.weights(phi, oS, np, oE);
        ex.scale(oE, oZ, oY, np, rp);
        ex.pairs(oY, oZ, np, rp, oTodo, oOut);
      }
      const o = oOut / 8;
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        if (!todo[a * r + b]) continue;
        S[2 * (a * r + b)] = f[o + 2 * (a * rp + b)];
        S[2 * (a * r + b) + 1] = f[o + 2 * (a * rp + b) + 1];
      }
      return true;
    },
    beginAverage() {
      f.fill(0, oAr / 8, oAi / 8 + rp * rp);
    },
    accumulate(phi, x, wsum) {
      if (!(Math.abs(phi) * sMax < FAST_LIMIT)) return false;
      const herm = phi === 0 ? 1 : 0;
      // X into the module with row stride rp (the padding row and column stay 0)
      if (rp === r) {
        f.set(x.re.length === r * r ? x.re : x.re.subarray(0, r * r), oXr / 8);
        f.set(x.im.length === r * r ? x.im : x.im.subarray(0, r * r), oXi / 8);
      } else {
        f.fill(0, oXr / 8, oXi / 8 + rp * rp);
        for (let a = 0; a < r; a++) {
          f.set(x.re.subarray(a * r, a * r + r), oXr / 8 + a * rp);
          f.set(x.im.subarray(a * r, a * r + r), oXi / 8 + a * rp);
        }
      }
      if (ex.need(oXr, oXi, r, rp, herm, oTodo)) {
        if (herm) ex.pairs(oZ, oZ, np, rp, oTodo, oOut);
        else {
          ex.weights(phi, oS, np, oE);
          ex.scale(oE, oZ, oY, np, rp);
          ex.pairs(oY, oZ, np, rp, oTodo, oOut);
        }
        ex.contract(oXr, oXi, oOut, oTodo, r, rp, herm, wsum, oAr, oAi);
      } else if (herm) ex.contract(oXr, oXi, oOut, oTodo, r, rp, herm, wsum, oAr, oAi);
      return true;
    },
    endAverage(out) {
      const br = oAr / 8, bi = oAi / 8;
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        out.re[a * r + b] += f[br + a * rp + b];
        out.im[a * r + b] += f[bi + a * rp + b];
      }
    },
  };
  // the dense kernels work beyond the table's area (its inverse speeds and weights stay in place)
  const helperBase = (): number => oAi + 8 * rp * rp;
  const dense: DenseKernels = {
    gram(zr, zi, sg, m, d, out) {
      rowsOf = null;
      const dp = d + (d & 1);
      const b = helperBase();
      const oZr = b, oZi = oZr + 8 * m * dp, oSg = oZi + 8 * m * dp, oOr = oSg + 8 * m, oOi = oOr + 8 * dp * dp;
      ensure(oOi + 8 * dp * dp);
      for (let k = 0; k < m; k++) {
        for (let i = 0; i < d; i++) {
          f[oZr / 8 + k * dp + i] = zr[k * d + i];
          f[oZi / 8 + k * dp + i] = zi[k * d + i];
        }
        if (dp !== d) {
          f[oZr / 8 + k * dp + d] = 0;
          f[oZi / 8 + k * dp + d] = 0;
        }
        f[oSg / 8 + k] = sg[k];
      }
      f.fill(0, oOr / 8, oOi / 8 + dp * dp);
      ex.gram(oZr, oZi, oSg, m, d, dp, oOr, oOi);
      // the kernel sums the upper half (j ≥ i); the lower half is its mirror, the diagonal real
      const br = oOr / 8, bi = oOi / 8;
      for (let i = 0; i < d; i++) {
        out.re[i * d + i] = f[br + i * dp + i];
        out.im[i * d + i] = 0;
        for (let j = i + 1; j < d; j++) {
          const re = f[br + i * dp + j], im = f[bi + i * dp + j];
          out.re[i * d + j] = re;
          out.im[i * d + j] = im;
          out.re[j * d + i] = re;
          out.im[j * d + i] = -im;
        }
      }
    },
    positive(ar, ai, n, delta) {
      rowsOf = null;
      const b = helperBase();
      const oAr = b, oAi = oAr + 8 * n * n, oLr = oAi + 8 * n * n, oLi = oLr + 8 * n * n;
      ensure(oLi + 8 * n * n);
      f.set(ar.subarray(0, n * n), oAr / 8);
      f.set(ai.subarray(0, n * n), oAi / 8);
      f.fill(0, oLr / 8, oLi / 8 + n * n);
      return ex.chol(oAr, oAi, n, delta, oLr, oLi) === 1;
    },
    bhb(b, rowStart, cols, d, r, a, out) {
      rowsOf = null;
      const rp = r + (r & 1);
      const base = helperBase();
      const oBr = base, oBi = oBr + 8 * d * r, oAr = oBi + 8 * d * r, oAi = oAr + 8 * r * r, oHr = oAi + 8 * r * r, oHi = oHr + 8 * r * rp;
      const oTr = oHi + 8 * r * rp, oTi = oTr + 8 * d * rp;
      const oNr = oTi + 8 * d * rp, oNi = oNr + 8 * d * d, oRs = oNi + 8 * d * d, oCols = oRs + 4 * (d + 1) + 4 * ((d + 1) & 1);
      ensure(oCols + 4 * cols.length + 8);
      put(b.re, d * r, oBr);
      put(b.im, d * r, oBi);
      put(a.re, r * r, oAr);
      put(a.im, r * r, oAi);
      if (ints.buffer !== ex.memory.buffer) ints = new Int32Array(ex.memory.buffer);
      ints.set(rowStart.length === d + 1 ? rowStart : rowStart.subarray(0, d + 1), oRs / 4);
      ints.set(cols, oCols / 4);
      ex.bhb(oBr, oBi, oRs, oCols, d, r, oAr, oAi, oHr, oHi, oTr, oTi, oNr, oNi);
      out.re.set(f.subarray(oNr / 8, oNr / 8 + d * d));
      out.im.set(f.subarray(oNi / 8, oNi / 8 + d * d));
    },
    rowDots(mr, mi, gr, gi, ns, np, out) {
      const pp = np + (np & 1);
      const oMr = helperBase(), oMi = oMr + 8 * ns * pp, oGr = oMi + 8 * ns * pp, oGi = oGr + 8 * pp, oOut = oGi + 8 * pp;
      if (rowsOf !== mr || rowsGen !== gen || rowsAt !== oMr) {
        ensure(oOut + 8 * ns);
        for (let q = 0; q < ns; q++) {
          f.set(mr.subarray(q * np, q * np + np), oMr / 8 + q * pp);
          f.set(mi.subarray(q * np, q * np + np), oMi / 8 + q * pp);
          if (pp !== np) {
            f[oMr / 8 + q * pp + np] = 0;
            f[oMi / 8 + q * pp + np] = 0;
          }
        }
        rowsOf = mr;
        rowsGen = gen;
        rowsAt = oMr;
      }
      f.set(gr.subarray(0, np), oGr / 8);
      f.set(gi.subarray(0, np), oGi / 8);
      if (pp !== np) {
        f[oGr / 8 + np] = 0;
        f[oGi / 8 + np] = 0;
      }
      ex.rowdots(oMr, oMi, oGr, oGi, ns, pp, oOut);
      out.set(f.subarray(oOut / 8, oOut / 8 + ns));
    },
  };
  cached = { ex, k, dense };
  return k;
}
