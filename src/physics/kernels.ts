/**
 * The exact table sums of the velocity average in WebAssembly SIMD (src/physics/kernels.wat): for a
 * table of n speeds and r levels, z_a(k) = e^{−iμ_a/v_k} and S_ab = Σ_k e_k z_a(k) conj z_b(k).
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
  phases(mu: number, r: number, sp: number, n: number, zr: number, zi: number): void;
  scale(er: number, ei: number, zr: number, zi: number, yr: number, yi: number, n: number, r: number): void;
  pairs(yr: number, yi: number, zr: number, zi: number, n: number, r: number, todo: number, s: number): void;
}

/** Beyond this |phase| the kernel's quadrant index would saturate (physics/trig.ts FAST_LIMIT). */
const FAST_LIMIT = 3e9;

export interface TableKernel {
  /**
   * Computes z_a(k) for the table; false (nothing computed) when a phase reaches 3e9 rad or is not
   * finite, where the caller takes the JavaScript path.
   */
  phases(mu: ArrayLike<number>, speeds: ArrayLike<number>): boolean;
  /**
   * S_ab = Σ_k e_k z_a(k) conj z_b(k) (e_k = er + i·ei, length n) for every (a, b) with todo[a·r + b]
   * set, written to S[2(a·r + b)] (re) and S[2(a·r + b) + 1] (im); other entries of S may be written too.
   */
  pairs(er: ArrayLike<number>, ei: ArrayLike<number>, todo: Uint8Array, S: Float64Array): void;
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

let cached: { ex: Exports; k: TableKernel } | null = null;

function kernelOn(ex: Exports): TableKernel {
  if (cached?.ex === ex) return cached.k;
  // layout (bytes), set by phases(): mu | speeds | zr | zi | er | ei | yr | yi | todo | S
  let r = 0, n = 0, rp = 0, np = 0;
  let oMu = 0, oSp = 0, oZr = 0, oZi = 0, oEr = 0, oEi = 0, oYr = 0, oYi = 0, oTodo = 0, oS = 0;
  const k: TableKernel = {
    phases(mu, speeds) {
      r = mu.length;
      n = speeds.length;
      let muMax = 0, vMin = Infinity;
      for (let a = 0; a < r; a++) muMax = Math.max(muMax, Math.abs(mu[a]));
      for (let j = 0; j < n; j++) vMin = Math.min(vMin, speeds[j]);
      if (!(muMax / vMin < FAST_LIMIT) || n === 0) return false;
      rp = r + (r & 1);
      np = n + (n & 1);
      oMu = 0;
      oSp = oMu + 8 * rp;
      oZr = oSp + 8 * np;
      oZi = oZr + 8 * rp * np;
      oEr = oZi + 8 * rp * np;
      oEi = oEr + 8 * np;
      oYr = oEi + 8 * np;
      oYi = oYr + 8 * rp * np;
      oTodo = oYi + 8 * rp * np;
      oS = oTodo + 8 * Math.ceil((rp * rp) / 8);
      const end = oS + 16 * rp * rp;
      const mem = ex.memory;
      if (mem.buffer.byteLength < end) mem.grow(Math.ceil((end - mem.buffer.byteLength) / 65536));
      const f = new Float64Array(mem.buffer);
      for (let a = 0; a < rp; a++) f[oMu / 8 + a] = a < r ? mu[a] : 0;
      // a padding speed repeats the last one; its weight e is 0, so it adds nothing
      for (let j = 0; j < np; j++) f[oSp / 8 + j] = speeds[j < n ? j : n - 1];
      ex.phases(oMu, rp, oSp, np, oZr, oZi);
      return true;
    },
    pairs(er, ei, todo, S) {
      const mem = ex.memory;
      const f = new Float64Array(mem.buffer);
      for (let j = 0; j < np; j++) {
        f[oEr / 8 + j] = j < n ? er[j] : 0;
        f[oEi / 8 + j] = j < n ? ei[j] : 0;
      }
      const t = new Uint8Array(mem.buffer, oTodo, rp * rp);
      t.fill(0);
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) t[a * rp + b] = todo[a * r + b];
      ex.scale(oEr, oEi, oZr, oZi, oYr, oYi, np, rp);
      ex.pairs(oYr, oYi, oZr, oZi, np, rp, oTodo, oS);
      const s = oS / 8;
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        if (!todo[a * r + b]) continue;
        S[2 * (a * r + b)] = f[s + 2 * (a * rp + b)];
        S[2 * (a * r + b) + 1] = f[s + 2 * (a * rp + b) + 1];
      }
    },
  };
  cached = { ex, k };
  return k;
}
