/**
 * Seeded random numbers for the engine's Monte Carlo (tolerance budgets, simulated runs): the same seed gives the
 * same numbers on every machine and in every host. xoshiro128** (D. Blackman and S. Vigna, "Scrambled linear
 * pseudorandom number generators", ACM TOMS 47 (2021) 36; the authors' public-domain reference code), its state
 * filled from the seed by SplitMix32 steps (as the authors advise, a seed is never used as a state directly).
 */
import { lnGamma } from '../physics/special.ts';

export class Random {
  /** The state, four 32-bit words (as signed integers: a field holding words above 2³¹ changes its representation in V8). */
  private readonly s = new Int32Array(4);
  private spare: number | null = null;
  /** Scratch words of fillUniform32. */
  private words = new Int32Array(0);

  constructor(seed: number) {
    let s = seed >>> 0;
    const next = () => {
      s = (s + 0x9e3779b9) >>> 0;
      let z = s;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    const st = this.s;
    for (let i = 0; i < 4; i++) st[i] = next();
    if ((st[0] | st[1] | st[2] | st[3]) === 0) st[3] = 1;
  }

  /** A generator in the given state (four 32-bit words, not all 0): for checks against the reference code. */
  static fromState(a: number, b: number, c: number, d: number): Random {
    const r = new Random(0);
    r.s[0] = a;
    r.s[1] = b;
    r.s[2] = c;
    r.s[3] = d;
    return r;
  }

  /**
   * Moves the generator 2⁶⁴ steps on (the authors' jump function, their polynomial JUMP): the streams of successive
   * jumps never overlap within 2⁶⁴ draws, so each may be drawn independently of the others (a simulated run's blocks).
   */
  jump(): void {
    const st = this.s;
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    for (let i = 0; i < 4; i++) {
      const m = JUMP[i];
      for (let b = 0; b < 32; b++) {
        if ((m >>> b) & 1) {
          s0 ^= st[0];
          s1 ^= st[1];
          s2 ^= st[2];
          s3 ^= st[3];
        }
        this.nextUint32();
      }
    }
    st[0] = s0;
    st[1] = s1;
    st[2] = s2;
    st[3] = s3;
  }

  /** The state, four unsigned 32-bit words (as fromState takes them). */
  state(): [number, number, number, number] {
    const st = this.s;
    return [st[0] >>> 0, st[1] >>> 0, st[2] >>> 0, st[3] >>> 0];
  }

  /**
   * The state itself, four 32-bit words as signed integers, for a loop that steps the generator inline as fillWords
   * does (the same words in the same order): it reads the words first and writes them back before anything else
   * draws from this generator.
   */
  stateWords(): Int32Array {
    return this.s;
  }

  /** A copy in the same state (its spare normal not kept). */
  clone(): Random {
    const st = this.s;
    return Random.fromState(st[0], st[1], st[2], st[3]);
  }

  /** The next 32 random bits. */
  nextUint32(): number {
    const st = this.s;
    const x = Math.imul(st[1], 5);
    const r = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
    const t = st[1] << 9;
    st[2] ^= st[0];
    st[3] ^= st[1];
    st[1] ^= st[2];
    st[0] ^= st[3];
    st[2] ^= t;
    st[3] = (st[3] << 11) | (st[3] >>> 21);
    return r;
  }

  /**
   * Fills `out[0 … n)` with uniforms of 32 random bits each, the next n outputs x of the generator as x·2⁻³², in
   * [0, 1) — or (x + 1)·2⁻³², in (0, 1], where `open0` asks for no 0 (a logarithm's argument): the words of
   * fillWords, scaled.
   */
  fillUniform32(out: Float64Array, n: number, open0 = false): void {
    if (this.words.length < n) this.words = new Int32Array(Math.max(n, 2 * this.words.length));
    const w = this.words;
    this.fillWords(w, n);
    const shift = open0 ? 1 : 0;
    for (let i = 0; i < n; i++) out[i] = ((w[i] >>> 0) + shift) * 2.3283064365386963e-10;
  }

  /**
   * Fills `out[0 … n)` with the generator's next n outputs, the 32-bit words of nextUint32 as signed integers (x | 0:
   * small integers to the JavaScript engine, where words above 2³¹ read from a Uint32Array would be boxed doubles).
   */
  fillWords(out: Int32Array, n: number): void {
    // the state is written back every 256 words: the stores then run (and the compiler learns them) long before a
    // long first fill has the loop compiled on its own, which would otherwise give up at its end at every later call
    const st = this.s;
    let a = st[0], b = st[1], c = st[2], d = st[3];
    for (let i0 = 0; i0 < n; i0 += 256) {
      const i1 = Math.min(n, i0 + 256);
      for (let i = i0; i < i1; i++) {
        const x = Math.imul(b, 5);
        out[i] = Math.imul((x << 7) | (x >>> 25), 9);
        const t = b << 9;
        c ^= a;
        d ^= b;
        b ^= c;
        a ^= d;
        c ^= t;
        d = (d << 11) | (d >>> 21);
      }
      st[0] = a;
      st[1] = b;
      st[2] = c;
      st[3] = d;
    }
  }

  /**
   * A unit exponential from the 32-bit word `r` (further words from this generator where the first is rejected): the
   * ziggurat method of G. Marsaglia and W. W. Tsang ("The ziggurat method for generating random variables", J. Stat.
   * Softw. 5(8), 2000), 256 layers; the low 8 bits of a word choose the layer and its high 24 bits the point in it
   * (separate bits, as J. A. Doornik, "An improved ziggurat method", 2005, advises). Exact but for that 24-bit grid.
   */
  exponentialFrom(r: number): number {
    // r may be a signed word (fillWords) or an unsigned one (nextUint32): only its bits are read
    for (;;) {
      const iz = r & 255, j = r >>> 8;
      if (j < ZIG.k[iz]) return j * ZIG.w[iz];
      if (iz === 0) return ZIG_R - Math.log(1 - this.uniform());
      const x = j * ZIG.w[iz];
      if (ZIG.f[iz] + this.uniform() * (ZIG.f[iz - 1] - ZIG.f[iz]) < Math.exp(-x)) return x;
      r = this.nextUint32() | 0;
    }
  }

  /** Uniform in [0, 1), 53 random bits. */
  uniform(): number {
    const hi = this.nextUint32() >>> 5, lo = this.nextUint32() >>> 6;
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Standard normal (Box–Muller, both values used). */
  normal(): number {
    if (this.spare !== null) {
      const s = this.spare;
      this.spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = this.uniform();
    const v = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    this.spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  }

  /**
   * A Poisson count of mean `mu` (≥ 0): by inversion of products of uniforms (D. E. Knuth, TAOCP vol. 2,
   * §3.4.1) below a mean of 10, else by transformed rejection with squeeze, PTRS (W. Hörmann, "The transformed
   * rejection method for generating Poisson random variables", Insurance: Mathematics and Economics 12 (1993) 39).
   */
  poisson(mu: number): number {
    if (!(mu > 0)) return 0;
    if (mu < 10) {
      const limit = Math.exp(-mu);
      let k = 0, p = this.uniform();
      while (p > limit) {
        k++;
        p *= this.uniform();
      }
      return k;
    }
    const smu = Math.sqrt(mu), lmu = Math.log(mu);
    const b = 0.931 + 2.53 * smu, a = -0.059 + 0.02483 * b;
    const invAlpha = 1.1239 + 1.1328 / (b - 3.4), vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
      const u = this.uniform() - 0.5, v = this.uniform();
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mu + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      if (Math.log(v) + Math.log(invAlpha) - Math.log(a / (us * us) + b) <= -mu + k * lmu - lnGamma(k + 1)) return k;
    }
  }
}

/**
 * A unit exponential from the 32-bit word `r`, as `rng.exponentialFrom(r)` gives it (the same number, the same
 * further words where the word is rejected): the ziggurat's common case, a word inside its layer's rectangle, is
 * answered here without a call, for loops that draw many.
 */
export function exponentialOf(rng: Random, r: number): number {
  const iz = r & 255, j = r >>> 8;
  return j < ZIG_K[iz] ? j * ZIG_W[iz] : rng.exponentialFrom(r);
}

/** xoshiro128**'s jump polynomial for 2⁶⁴ steps (Blackman and Vigna, the reference code's JUMP). */
const JUMP = [0x8764000b, 0xf542d2d3, 0x6fa035c3, 0x77f2db5b];

/** The ziggurat's right edge r and the area v of each of its 256 layers (Marsaglia and Tsang 2000, the exponential). */
const ZIG_R = 7.697117470131487;
const ZIG_V = 3.949659822581572e-3;

/** The ziggurat's tables on a 24-bit grid: k the acceptance bounds, w the layer widths per grid step, f = e^{−x_i}. */
const ZIG = (() => {
  const m = 2 ** 24;
  const k = new Uint32Array(256), w = new Float64Array(256), f = new Float64Array(256);
  let de = ZIG_R, te = ZIG_R;
  const q = ZIG_V / Math.exp(-de);
  k[0] = Math.floor((de / q) * m);
  k[1] = 0;
  w[0] = q / m;
  w[255] = de / m;
  f[0] = 1;
  f[255] = Math.exp(-de);
  for (let i = 254; i >= 1; i--) {
    de = -Math.log(ZIG_V / de + Math.exp(-de));
    k[i + 1] = Math.floor((de / te) * m);
    te = de;
    f[i] = Math.exp(-de);
    w[i] = de / m;
  }
  return { k, w, f };
})();
/** The ziggurat's acceptance bounds and widths, for loops that test a word's common case themselves (as exponentialOf). */
export const ZIG_K = ZIG.k, ZIG_W = ZIG.w;
