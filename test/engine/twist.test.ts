/**
 * The field twist's closed form for a state the same at every speed (src/engine/twist.ts applyTwistStatic): a basis
 * of one column (a port that keeps one state) takes a loop of its own, which must give the general form's numbers.
 */
import { describe, expect, it } from 'vitest';
import { applyTwistStatic, twistRotation } from '../../src/engine/twist.ts';
import { speciesSystems } from '../../src/engine/system.ts';
import { rotationOperator } from '../../src/physics/rotation.ts';
import { cmatCombine, cmatZeros } from '../../src/physics/cmat.ts';

describe('a twist of a state with one basis column', () => {
  it('equals the general form (two columns, the second empty) number for number, and keeps the trace', () => {
    // metastable He-4* (spin 1) entering a 1 mT twist from z to x over 5 cm: bench K's T1
    const sys = speciesSystems({ name: 'He-4*' } as never)[0].system;
    const n1 = { x: 0, y: 0, z: 1 }, k = { x: 0, y: 1, z: 0 }, angle = Math.PI / 2;
    const h1 = sys.hamiltonian({ x: 0, y: 0, z: 1e-3 });
    const kGen = cmatCombine([[k.x, sys.F.jx], [k.y, sys.F.jy], [k.z, sys.F.jz]]);
    const rot = rotationOperator(sys.F, k, angle);
    const tr = twistRotation(sys.F, h1, n1, k, rot);
    expect(tr).not.toBeNull();
    const op = { h1, kGen, angle, rot, length: 0.05, rotation: tr };
    const speeds = Float64Array.from({ length: 50 }, (_, i) => 900 + 13.7 * i);
    const weights = new Float64Array(50).fill(1 / 50);
    // |m = +1⟩ with a phase, population 0.4
    const w1 = cmatZeros(3, 1);
    w1.re[0] = 0.6; w1.im[0] = 0.8;
    const x1 = cmatZeros(1, 1);
    x1.re[0] = 0.4;
    const w2 = cmatZeros(3, 2);
    w2.re[0] = 0.6; w2.im[0] = 0.8;
    const x2 = cmatZeros(2, 2);
    x2.re[0] = 0.4;
    const one = applyTwistStatic(speeds, weights, w1, x1, op, tr!);
    const two = applyTwistStatic(speeds, weights, w2, x2, op, tr!);
    for (let s = 0; s < speeds.length; s++) {
      const a = one.rhos[s], b = two.rhos[s];
      let trace = 0;
      for (let i = 0; i < 9; i++) {
        expect(a.re[i] + 0).toBe(b.re[i] + 0);
        expect(a.im[i] + 0).toBe(b.im[i] + 0);
      }
      for (let i = 0; i < 3; i++) trace += a.re[4 * i];
      expect(trace).toBeCloseTo(0.4, 14);
    }
  });
});
