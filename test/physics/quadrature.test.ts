import { describe, it, expect } from 'vitest';
import { gaussLegendre, compositeRule, integrateAdaptive } from '../../src/physics/quadrature.ts';

describe('gaussLegendre', () => {
  it('integrates x^k exactly for k ≤ 2n − 1 (the defining property of Gauss quadrature; Abramowitz & Stegun 25.4.29)', () => {
    for (const n of [1, 2, 5, 8, 16, 33]) {
      const g = gaussLegendre(n);
      for (let k = 0; k <= 2 * n - 1; k++) {
        let s = 0;
        for (let i = 0; i < n; i++) s += g.weights[i] * g.nodes[i] ** k;
        const want = k % 2 === 1 ? 0 : 2 / (k + 1);
        expect(Math.abs(s - want)).toBeLessThan(1e-14);
      }
    }
  });
  it('has the tabulated 2-point nodes ±1/√3 with weights 1 (A&S table 25.4)', () => {
    const g = gaussLegendre(2);
    expect(g.nodes[1]).toBeCloseTo(1 / Math.sqrt(3), 15);
    expect(g.weights[0]).toBeCloseTo(1, 15);
  });
});

describe('compositeRule and integrateAdaptive', () => {
  it('integrate e^x on [0, 2] to 1e-14 (e² − 1)', () => {
    const r = compositeRule(0, 2, 8, 4);
    let s = 0;
    for (let i = 0; i < r.nodes.length; i++) s += r.weights[i] * Math.exp(r.nodes[i]);
    expect(Math.abs(s - (Math.E ** 2 - 1))).toBeLessThan(1e-13);
    const a = integrateAdaptive((x) => [Math.exp(x), Math.sin(x)], 0, 2, 1e-15);
    expect(Math.abs(a.re - (Math.E ** 2 - 1))).toBeLessThan(1e-13);
    expect(Math.abs(a.im - (1 - Math.cos(2)))).toBeLessThan(1e-14);
    expect(a.error).toBeLessThan(1e-12);
  });
});
