import { describe, it, expect } from 'vitest';
import { specInitial, specKraus, specPropagate, specAt, specIsStatic, specExpand, type SpecState } from '../../src/engine/spectral.ts';
import { specAverageTrace, specAverageBasis, CharCache } from '../../src/engine/average.ts';
import { zeemanEigen, hyperfineHamiltonianHz, type HyperfineParams } from '../../src/physics/hyperfine.ts';
import { tableDistribution } from '../../src/physics/velocity.ts';
import { cmatMul, cmatDagger, cmatZeros, type CMat } from '../../src/physics/cmat.ts';

// Cs-133 ground state (the species library's constants; SI second for A(I+1/2))
const cs: HyperfineParams = { i2: 7, j2: 1, gJ: 2.00254032, gI: -0.00039885395, aHz: 9192631770 / 4 };

function maxDiff(a: CMat, b: CMat): number {
  let d = 0;
  for (let i = 0; i < a.re.length; i++) d = Math.max(d, Math.abs(a.re[i] - b.re[i]), Math.abs(a.im[i] - b.im[i]));
  return d;
}

/** A diagonal density matrix with the given populations, and a projector onto some basis states. */
function diag(d: number, f: (i: number) => number): CMat {
  const m = cmatZeros(d, d);
  for (let i = 0; i < d; i++) m.re[i * d + i] = f(i);
  return m;
}

describe('a state propagated through a field keeps its basis as factors (rotation · m_F blocks)', () => {
  const field = { x: 0.6, y: -0.3, z: 0.74 };
  const b = 1.7e-5;
  const n = Math.hypot(field.x, field.y, field.z);
  const z = zeemanEigen(cs, b, { x: field.x / n, y: field.y / n, z: field.z / n });
  const d = 16, length = 0.05;
  const lambda = Float64Array.from(z.values, (x) => 2 * Math.PI * x);
  const rho = diag(d, (i) => (i % 3 === 0 ? 0 : 1 / 10));
  const k = diag(d, (i) => (i < 9 ? 1 : 0));
  const dist = tableDistribution(Array.from({ length: 40 }, (_, j) => [50 + 17 * j, 1 + Math.sin(j)] as [number, number]));

  it('its eigenvectors are rot · blocks and diagonalise H(B n̂)', () => {
    const v = z.vectors;
    expect(maxDiff(v, cmatMul(z.factors.rot!, z.factors.blocks))).toBeLessThan(1e-15);
    const h = hyperfineHamiltonianHz(cs, { x: (b * field.x) / n, y: (b * field.y) / n, z: (b * field.z) / n });
    const hv = cmatMul(cmatMul(cmatDagger(v), h), v);
    let off = 0;
    for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) if (i !== j) off = Math.max(off, Math.hypot(hv.re[i * d + j], hv.im[i * d + j]));
    expect(off).toBeLessThan(1e-6 * cs.aHz);
    // each column of the blocks is non-zero only on its support
    const { start, rows } = z.factors.support;
    for (let c = 0; c < d; c++) {
      const on = new Set(Array.from(rows.subarray(start[c], start[c + 1])));
      for (let i = 0; i < d; i++) if (!on.has(i)) expect(z.factors.blocks.re[i * d + c] === 0 && z.factors.blocks.im[i * d + c] === 0).toBe(true);
    }
  });

  it('gives the basis, the beam average and the traces of the dense path (before and after a Kraus operator)', () => {
    const dense = (): SpecState => specPropagate(specInitial(rho), () => z.vectors, lambda, length);
    const fact = (): SpecState => specPropagate(specInitial(rho), () => z.vectors, lambda, length, z.factors);
    const f = fact(), g = dense();
    expect(f.fac).toBeDefined();
    expect(g.fac).toBeUndefined();
    expect(maxDiff(f.W, g.W)).toBeLessThan(1e-15);
    expect(maxDiff(specAverageBasis(f, new CharCache(dist)).A, specAverageBasis(g, new CharCache(dist)).A)).toBeLessThan(1e-15);
    for (const [sf, sg] of [[f, g], [specKraus(fact(), k), specKraus(dense(), k)]] as const) {
      const tf = specAverageTrace(sf, new CharCache(dist)).value, tg = specAverageTrace(sg, new CharCache(dist)).value;
      expect(Math.abs(tf - tg)).toBeLessThan(1e-15);
      expect(maxDiff(sf.W, sg.W)).toBeLessThan(1e-15);
    }
    // the trace is preserved by the propagation (Tr ρ = 10 × 1/10), and the Kraus operator keeps a fraction of it
    expect(specAverageTrace(fact(), new CharCache(dist)).value).toBeCloseTo(1, 13);
    const kept = specAverageTrace(specKraus(fact(), k), new CharCache(dist)).value;
    expect(kept).toBeGreaterThan(0);
    expect(kept).toBeLessThan(1);
  });
});

describe('specIsStatic: a state whose ρ(v) does not depend on the speed', () => {
  it('holds for a state without phases and fails once a field has put Bohr frequencies into it', () => {
    const rho = diag(16, (i) => (i < 8 ? 1 / 8 : 0));
    const st = specInitial(rho);
    expect(specIsStatic(st)).toBe(true);
    expect(maxDiff(specAt(st, 100), specAt(st, 900))).toBe(0);
    const z = zeemanEigen(cs, 1e-5, { x: 1, y: 0, z: 0 });
    const moved = specPropagate(st, () => z.vectors, Float64Array.from(z.values, (x) => 2 * Math.PI * x), 0.05, z.factors);
    expect(specIsStatic(moved)).toBe(false);
    // and ρ(v) does change with v there
    expect(maxDiff(specAt(moved, 100), specAt(moved, 900))).toBeGreaterThan(1e-6);
  });
});

describe('lab-frame expansion (specExpand)', () => {
  it('each Bohr frequency term is W x W† with x the entries of that frequency, number for number as the dense product', () => {
    // Cs-133 unpolarised, sorted to F = 4, m_F ≥ −3 along z, then a transverse field: 16 μ's, up to 241 differences
    const z = zeemanEigen(cs, 5e-7, { x: 1, y: 0, z: 0 });
    const d = 16;
    const lambda = Float64Array.from(z.values, (x) => 2 * Math.PI * x);
    const rho = diag(d, (i) => (i >= 9 ? 1 / 16 : 0));
    const st = specPropagate(specInitial(rho), () => z.vectors, lambda, 0.1);
    expect(st.mu).not.toBeNull();
    const terms = specExpand(st);
    expect(terms.length).toBeGreaterThan(100);
    // the reference: group X's entries by μ_a − μ_b, and form W x W† with two dense products
    const W = st.W, Wd = cmatDagger(W), X = st.terms[0].X, mu = st.mu!;
    const byPhi = new Map<number, CMat>();
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      const i = a * d + b;
      if (X.re[i] === 0 && X.im[i] === 0) continue;
      const f = st.terms[0].phi + mu[a] - mu[b];
      const x = byPhi.get(f) ?? cmatZeros(d, d);
      x.re[i] = X.re[i];
      x.im[i] = X.im[i];
      byPhi.set(f, x);
    }
    let checked = 0;
    for (const t of terms) {
      const x = byPhi.get(t.phi);
      if (!x) continue; // a group merged with a neighbour within 1e-13 of the largest phase-length
      const ref = cmatMul(cmatMul(W, x), Wd);
      for (let i = 0; i < d * d; i++) {
        expect(t.X.re[i] + 0).toBe(ref.re[i] + 0);
        expect(t.X.im[i] + 0).toBe(ref.im[i] + 0);
      }
      checked++;
    }
    expect(checked).toBeGreaterThan(100);
  });
});
