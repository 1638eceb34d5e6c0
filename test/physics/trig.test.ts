import { describe, it, expect } from 'vitest';
import { reduceAngle } from '../../src/physics/trig.ts';

describe('reduceAngle', () => {
  it('keeps cos and sin of phases up to 1e14 rad to within one ulp of the phase', () => {
    for (let i = 0; i < 20000; i++) {
      const x = (i % 2 ? -1 : 1) * 10 ** (Math.random() * 14);
      const e = Math.abs(Math.cos(reduceAngle(x)) - Math.cos(x));
      expect(e).toBeLessThanOrEqual(Math.max(2e-16, Math.abs(x) * 2.3e-16));
    }
  });
});

