import { describe, it, expect, afterEach } from 'vitest';
import { tableKernel, denseKernels, setKernelsEnabled } from '../../src/physics/kernels.ts';
import type { SpecState } from '../../src/engine/spectral.ts';
import { specAverageBasis, CharCache, isPositive } from '../../src/engine/average.ts';
import { tableDistribution } from '../../src/physics/velocity.ts';
import { cmatZeros, cmatIdentity, cmatMul, cmatDagger, type CMat } from '../../src/physics/cmat.ts';
import { eigh } from '../../src/physics/eigh.ts';

afterEach(() => setKernelsEnabled(true));

/** A deterministic pseudo-random sequence (so a failure reproduces). */
function lcg(seed: number): () => number {
  let x = seed >>> 0;
  return () => ((x = (Math.imul(x, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

describe('the WebAssembly table kernel', () => {
  it('compiles here (Node): the comparisons below exercise it', () => {
    expect(tableKernel()).not.toBeNull();
  });

  it('computes the direct sums S_ab = Σ_k w_k e^{−iφ/v_k} z_a(k) conj z_b(k), odd sizes padded', () => {
    const rnd = lcg(7);
    // 'upper': the pairs b > a of a Hermitian S, where a diagonal 2×2 block has only (a, a + 1) to sum
    const cases = [[1, 1, 0, 'some'], [3, 7, 0, 'some'], [5, 2, 3.3e4, 'some'], [16, 256, 0, 'some'], [16, 256, -2.5e6, 'some'], [9, 33, 1e3, 'some'],
      [16, 256, 0, 'upper'], [7, 9, 0, 'upper'], [6, 5, 2e4, 'upper']] as const;
    for (const [r, n, phi, pattern] of cases) {
      const mu = Float64Array.from({ length: r }, () => (rnd() - 0.5) * 2e8);
      const speeds = Float64Array.from({ length: n }, () => 5 + 1000 * rnd());
      const w = Float64Array.from({ length: n }, () => rnd());
      const todo = new Uint8Array(r * r).map((_, i) => (pattern === 'upper' ? (i % r > Math.floor(i / r) ? 1 : 0) : rnd() < 0.7 ? 1 : 0));
      const S = new Float64Array(2 * r * r);
      const k = tableKernel()!;
      k.table(speeds, w);
      expect(k.phases(mu)).toBe(true);
      expect(k.pairs(phi, todo, S)).toBe(true);
      for (let a = 0; a < r; a++) for (let b = 0; b < r; b++) {
        if (!todo[a * r + b]) continue;
        let sr = 0, si = 0, scale = 0;
        for (let j = 0; j < n; j++) {
          // w_j e^{−iφ/v} z_a conj(z_b), with e^{−ix} from Math.cos / Math.sin (an independent evaluation)
          const pe = phi / speeds[j], pa = mu[a] / speeds[j], pb = mu[b] / speeds[j];
          const er = w[j] * Math.cos(pe), ei = -w[j] * Math.sin(pe);
          const ar = er * Math.cos(pa) + ei * Math.sin(pa), ai = ei * Math.cos(pa) - er * Math.sin(pa);
          const br = Math.cos(pb), bi = -Math.sin(pb);
          sr += ar * br + ai * bi;
          si += ai * br - ar * bi;
          scale += w[j];
        }
        // phases of up to 2e8/5 rad carry ~1e-8 of their own rounding: compare to that
        const tol = 1e-15 * scale * (1 + (Math.abs(phi) + Math.max(Math.abs(mu[a]), Math.abs(mu[b]))) / 5);
        expect(Math.abs(S[2 * (a * r + b)] - sr)).toBeLessThanOrEqual(tol);
        expect(Math.abs(S[2 * (a * r + b) + 1] - si)).toBeLessThanOrEqual(tol);
      }
    }
  });

  it('declines phases of 3e9 rad and more (the JavaScript path takes them)', () => {
    const k = tableKernel()!;
    k.table(Float64Array.of(1, 2), Float64Array.of(0.5, 0.5));
    expect(k.phases(Float64Array.of(3e9, 1))).toBe(false);
    expect(k.phases(Float64Array.of(NaN))).toBe(false);
    expect(k.phases(Float64Array.of(1e3, 1))).toBe(true);
    expect(k.pairs(4e9, new Uint8Array(4).fill(1), new Float64Array(8))).toBe(false);
    // the kernel carries √w in its phase factors: a table with a negative weight is left to JavaScript
    k.table(Float64Array.of(1, 2), Float64Array.of(1.5, -0.5));
    expect(k.phases(Float64Array.of(1e3, 1))).toBe(false);
  });

  // the kernel keeps A in the module from the pairs to the sum; an odd size pads its rows, and a term
  // whose phase reaches 3e9 rad is left to the JavaScript path and added to the kernel's sum
  for (const [r, n, phis] of [[16, 255, [0, 2.5e5]], [7, 31, [0, 2.5e5, 8e9]]] as const) {
    it(`gives the same beam average as the JavaScript path to 1e-15 (${r} levels on ${n} speeds, φ = ${phis.join(', ')})`, () => {
      const rnd = lcg(11);
      const dist = tableDistribution(Array.from({ length: n }, (_, j) => [2 + 4.4 * j, rnd()] as [number, number]));
      const X = cmatZeros(r, r);
      for (let a = 0; a < r; a++) for (let b = a; b < r; b++) {
        const re = rnd() - 0.5, im = a === b ? 0 : rnd() - 0.5;
        X.re[a * r + b] = re; X.im[a * r + b] = im;
        X.re[b * r + a] = re; X.im[b * r + a] = -im;
      }
      // one pair far below the rest, which both paths leave out (1e-18 of the largest entry)
      X.re[1] = X.re[r] = 1e-20; X.im[1] = 1e-20; X.im[r] = -1e-20;
      const mu = Float64Array.from({ length: r }, (_, a) => (a < 9 ? 1 : -1) * 1.4e8 + 3e3 * a * rnd());
      const mk = (): SpecState => ({ W: cmatIdentity(r), mu, terms: phis.map((phi) => ({ phi, X })), shared: {} });
      const fast = specAverageBasis(mk(), new CharCache(dist)).A;
      setKernelsEnabled(false);
      expect(tableKernel()).toBeNull();
      const js = specAverageBasis(mk(), new CharCache(dist)).A;
      let d = 0, m = 0;
      for (let i = 0; i < r * r; i++) {
        d = Math.max(d, Math.abs(fast.re[i] - js.re[i]), Math.abs(fast.im[i] - js.im[i]));
        m = Math.max(m, Math.abs(js.re[i]), Math.abs(js.im[i]));
      }
      expect(m).toBeGreaterThan(0.01);
      expect(d).toBeLessThanOrEqual(1e-15);
    });
  }
});

describe('the WebAssembly dense kernels', () => {
  it('forms Σ_k sg_k z_k z_k† (Hermitian), for even and odd sizes', () => {
    const rnd = lcg(5);
    for (const [m, d] of [[1, 1], [3, 4], [8, 16], [5, 7]] as const) {
      const zr = Float64Array.from({ length: m * d }, () => rnd() - 0.5), zi = Float64Array.from({ length: m * d }, () => rnd() - 0.5);
      const sg = Float64Array.from({ length: m }, () => (rnd() < 0.3 ? -1 : 1));
      const out = cmatZeros(d, d);
      denseKernels()!.gram(zr, zi, sg, m, d, out);
      for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
        let re = 0, im = 0;
        for (let k = 0; k < m; k++) {
          re += sg[k] * (zr[k * d + i] * zr[k * d + j] + zi[k * d + i] * zi[k * d + j]);
          im += sg[k] * (zi[k * d + i] * zr[k * d + j] - zr[k * d + i] * zi[k * d + j]);
        }
        expect(Math.abs(out.re[i * d + j] - re)).toBeLessThan(1e-15);
        expect(Math.abs(out.im[i * d + j] - (i === j ? 0 : im))).toBeLessThan(1e-15);
      }
    }
  });

  it('forms B H B† with H = (A + A†)/2 for a B sparse by rows, for even and odd sizes', () => {
    const rnd = lcg(11);
    for (const [d, r] of [[16, 16], [3, 3], [6, 5], [4, 7]] as const) {
      // each row of B has one to three non-zero columns
      const b = cmatZeros(d, r);
      const rowStart = new Int32Array(d + 1), cols: number[] = [];
      for (let i = 0; i < d; i++) {
        rowStart[i] = cols.length;
        for (let c = 0; c < r; c++) {
          if (c === i % r || rnd() < 0.25) {
            cols.push(c);
            b.re[i * r + c] = rnd() - 0.5;
            b.im[i * r + c] = rnd() - 0.5;
          }
        }
      }
      rowStart[d] = cols.length;
      const a = cmatZeros(r, r);
      for (let i = 0; i < r * r; i++) {
        a.re[i] = rnd() - 0.5;
        a.im[i] = rnd() - 0.5;
      }
      const out = cmatZeros(d, d);
      denseKernels()!.bhb(b, rowStart, Int32Array.from(cols), d, r, a, out);
      // the direct product B H B† of dense matrices
      const h = cmatZeros(r, r);
      for (let i = 0; i < r; i++) for (let j = 0; j < r; j++) {
        h.re[i * r + j] = 0.5 * (a.re[i * r + j] + a.re[j * r + i]);
        h.im[i * r + j] = 0.5 * (a.im[i * r + j] - a.im[j * r + i]);
      }
      const n = cmatMul(cmatMul(b, h), cmatDagger(b));
      for (let i = 0; i < d * d; i++) {
        expect(Math.abs(out.re[i] - n.re[i])).toBeLessThan(1e-14);
        expect(Math.abs(out.im[i] - n.im[i])).toBeLessThan(1e-14);
      }
    }
  });

  it('tells positive from indefinite Hermitian matrices (Cholesky of A + δ·1)', () => {
    const rnd = lcg(9);
    const n = 12;
    // a random unitary from the eigenvectors of a random Hermitian matrix
    const h = cmatZeros(n, n);
    for (let a = 0; a < n; a++) for (let b = a; b < n; b++) {
      const re = rnd() - 0.5, im = a === b ? 0 : rnd() - 0.5;
      h.re[a * n + b] = re; h.im[a * n + b] = im; h.re[b * n + a] = re; h.im[b * n + a] = -im;
    }
    const q = eigh(h).vectors;
    const withSpectrum = (lambda: number[]): CMat => {
      const l = cmatZeros(n, n);
      lambda.forEach((x, i) => { l.re[i * n + i] = x; });
      return cmatMul(cmatMul(q, l), cmatDagger(q));
    };
    const k = denseKernels()!;
    const pos = withSpectrum(Array.from({ length: n }, (_, i) => 0.01 + i / n));
    expect(k.positive(pos.re, pos.im, n, 1e-15)).toBe(true);
    const neg = withSpectrum(Array.from({ length: n }, (_, i) => (i === 4 ? -1e-3 : 0.01 + i / n)));
    expect(k.positive(neg.re, neg.im, n, 1e-15)).toBe(false);
    // within the tolerance δ a small negative eigenvalue passes
    expect(k.positive(neg.re, neg.im, n, 2e-3)).toBe(true);
    // the engine's JavaScript path gives the same answers
    setKernelsEnabled(false);
    expect([isPositive(pos, 1e-15), isPositive(neg, 1e-15), isPositive(neg, 2e-3)]).toEqual([true, false, true]);
  });

  it('sums the rows Σ_p Re(M_kp G_p), keeping rows across calls only while they are valid', () => {
    const rnd = lcg(21);
    const k = denseKernels()!;
    const check = (mr: Float64Array, mi: Float64Array, ns: number, np: number) => {
      const gr = Float64Array.from({ length: np }, () => rnd() - 0.5), gi = Float64Array.from({ length: np }, () => rnd() - 0.5);
      const out = new Float64Array(ns);
      k.rowDots(mr, mi, gr, gi, ns, np, out);
      for (let q = 0; q < ns; q++) {
        let s = 0;
        for (let p = 0; p < np; p++) s += mr[q * np + p] * gr[p] - mi[q * np + p] * gi[p];
        expect(Math.abs(out[q] - s)).toBeLessThan(1e-14);
      }
    };
    for (const [ns, np] of [[1, 1], [7, 16], [192, 15], [33, 2]] as const) {
      const mr = Float64Array.from({ length: ns * np }, () => rnd() - 0.5), mi = Float64Array.from({ length: ns * np }, () => rnd() - 0.5);
      check(mr, mi, ns, np);
      check(mr, mi, ns, np); // the kept rows
      // another kernel writes where the rows were kept: they are copied again
      k.gram(Float64Array.of(1, 2, 3, 4), Float64Array.of(0, 0, 0, 0), Float64Array.of(1, 1), 2, 2, cmatZeros(2, 2));
      check(mr, mi, ns, np);
    }
  });
});
