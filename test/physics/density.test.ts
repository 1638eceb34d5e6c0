import { describe, it, expect } from 'vitest';
import { densityUnpolarized, densityPure, densityPopulations, selectLuders, dephaseInto, propagateUnitary, checkDensity, traceReal } from '../../src/physics/density.ts';
import { spinOperators, spinAlong } from '../../src/physics/spin.ts';
import { eigenprojectors, expmiHermitian } from '../../src/physics/eigh.ts';
import { axisFromAngles } from '../../src/physics/rotation.ts';
import { cmatMaxAbsDiff, cmatMul } from '../../src/physics/cmat.ts';

describe('density matrices', () => {
  it('unpolarised ρ = 1/d has trace 1 and no preferred axis: P(m) = 1/d along any n̂', () => {
    const o = spinOperators(3);
    const rho = densityUnpolarized(4);
    for (const p of eigenprojectors(spinAlong(o, axisFromAngles(1.1, 0.4)))) expect(traceReal(selectLuders(rho, p.projector))).toBeCloseTo(0.25, 14);
  });
  it('a pure |j m⟩ along n̂ is an eigenstate of n̂·J with eigenvalue m (docs/design.md, Spin operators, states and rotations)', () => {
    const o = spinOperators(2);
    const n = axisFromAngles(0.7, -1.2);
    const rho = densityPure(o, n, 0); // m = +1
    expect(cmatMaxAbsDiff(cmatMul(spinAlong(o, n), rho), rho)).toBeLessThan(1e-14);
    const c = checkDensity(rho);
    expect(c.trace).toBeCloseTo(1, 14);
    expect(c.minEigenvalue).toBeGreaterThan(-1e-14);
  });
  it('populations along n̂ come back as the Lüders probabilities along n̂', () => {
    const o = spinOperators(1);
    const n = axisFromAngles(2.0, 0.3);
    const rho = densityPopulations(o, n, [0.7, 0.3]);
    const ps = eigenprojectors(spinAlong(o, n));
    expect(traceReal(selectLuders(rho, ps[0].projector))).toBeCloseTo(0.7, 14);
    expect(traceReal(selectLuders(rho, ps[1].projector))).toBeCloseTo(0.3, 14);
  });
  it('dephasing keeps the trace and the populations, unitary propagation keeps the spectrum', () => {
    const o = spinOperators(3);
    const rho = densityPure(o, axisFromAngles(1.0, 0.5), 1);
    const ps = eigenprojectors(o.jz).map((p) => p.projector);
    const d = dephaseInto(rho, ps);
    expect(traceReal(d)).toBeCloseTo(1, 14);
    for (const p of ps) expect(traceReal(selectLuders(d, p))).toBeCloseTo(traceReal(selectLuders(rho, p)), 14);
    const u = expmiHermitian(o.jx, 0.9);
    const r2 = propagateUnitary(rho, u);
    expect(checkDensity(r2).hermiticity).toBeLessThan(1e-14);
    expect(traceReal(cmatMul(r2, r2))).toBeCloseTo(1, 13); // still pure
  });
});
