/** The inspector's axis forms: an axis rewritten as a roll or as θ and φ keeps its direction, as the document's reader reads it. */
import { describe, expect, it } from 'vitest';
import { axisAs, axisForm, negated } from '../../src/app/fields.ts';
import { axis, type ReadCtx } from '../../src/beamline/read.ts';

/** The unit vector the document's reader makes of an axis as written. */
function direction(a: unknown) {
  const ctx: ReadCtx = { problems: [], warnings: [], species: undefined };
  const v = axis(ctx, { axis: a }, 'axis', 'el');
  if (!v) throw new Error(ctx.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return v;
}

describe('axis forms', () => {
  it('a roll written as θ and φ is the same axis, and back', () => {
    for (const roll of ['0 deg', '35 deg', '90 deg', '-120 deg', '180 deg', '1.2 rad', '(pi/3) rad', '-0.5 rad']) {
      const a = { roll };
      const angles = axisAs(a, 'angles');
      expect(axisForm(angles)).toBe('angles');
      const back = axisAs(angles, 'roll');
      for (const b of [angles, back]) {
        const u = direction(a), v = direction(b);
        expect(Math.hypot(u.x - v.x, u.y - v.y, u.z - v.z), `${roll} → ${JSON.stringify(b)}`).toBeLessThan(1e-15);
      }
      expect(back).toEqual(a);
    }
  });

  it('θ and φ become a roll where φ is 0 or 180° (−θ), the same axis; elsewhere they have no roll', () => {
    for (const [theta, phi] of [['30 deg', '180 deg'], ['75 deg', '0 rad'], ['-40 deg', '-180 deg'], ['2 rad', 'pi rad'], ['(pi/5) rad', '540 deg'], ['(pi/7) rad', '-180 deg']]) {
      const a = { theta, phi };
      const r = axisAs(a, 'roll');
      expect(axisForm(r), `${theta}, ${phi}`).toBe('roll');
      const u = direction(a), v = direction(r);
      expect(Math.hypot(u.x - v.x, u.y - v.y, u.z - v.z), `${theta}, ${phi} → ${JSON.stringify(r)}`).toBeLessThan(1e-12);
    }
    for (const phi of ['30 deg', '90 deg', '1 rad', 'not an angle']) expect(axisAs({ theta: '30 deg', phi }, 'roll'), phi).toBeUndefined();
    const same = { roll: '10 deg' };
    expect(axisAs(same, 'roll')).toBe(same);
  });

  it('negates an angle as people write it', () => {
    expect(['90 deg', '-90 deg', '+1.5 rad', '0 deg', '(pi/2) rad'].map(negated)).toEqual(['-90 deg', '90 deg', '-1.5 rad', '0 deg', '-((pi/2) rad)']);
  });
});
