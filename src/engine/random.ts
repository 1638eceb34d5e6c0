/**
 * Seeded random numbers for the engine's Monte Carlo (tolerance budgets, simulated runs): the same seed gives the
 * same numbers on every machine and in every host. xoshiro128** (D. Blackman and S. Vigna, "Scrambled linear
 * pseudorandom number generators", ACM TOMS 47 (2021) 36; the authors' public-domain reference code), its state
 * filled from the seed by SplitMix32 steps (as the authors advise, a seed is never used as a state directly).
 */
import { lnGamma } from '../physics/special.ts';

export class Random {
  private a: number;
  private b: number;
  private c: number;
  private d: number;
  private spare: number | null = null;

  constructor(seed: number) {
    let s = seed >>> 0;
    const next = () => {
      s = (s + 0x9e3779b9) >>> 0;
      let z = s;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.a = next();
    this.b = next();
    this.c = next();
    this.d = next();
    if ((this.a | this.b | this.c | this.d) === 0) this.d = 1;
  }

  /** A generator in the given state (four 32-bit words, not all 0): for checks against the reference code. */
  static fromState(a: number, b: number, c: number, d: number): Random {
    const r = new Random(0);
    r.a = a >>> 0;
    r.b = b >>> 0;
    r.c = c >>> 0;
    r.d = d >>> 0;
    return r;
  }

  /** The next 32 random bits. */
  nextUint32(): number {
    const r = Math.imul(rotl(Math.imul(this.b, 5) >>> 0, 7), 9) >>> 0;
    const t = (this.b << 9) >>> 0;
    this.c = (this.c ^ this.a) >>> 0;
    this.d = (this.d ^ this.b) >>> 0;
    this.b = (this.b ^ this.c) >>> 0;
    this.a = (this.a ^ this.d) >>> 0;
    this.c = (this.c ^ t) >>> 0;
    this.d = rotl(this.d, 11);
    return r;
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

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
