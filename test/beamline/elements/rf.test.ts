import { describe, expect, it } from 'vitest';
import { serializeDoc } from '../../../src/beamline/serialize.ts';
import type { RfFlipper } from '../../../src/beamline/types.ts';
import { bareLine } from '../examples.ts';
import { check, lines, ok } from '../helpers.ts';

describe('rf', () => {
  const withRf = (r: Record<string, unknown>) => {
    const d = bareLine();
    d.oven.to = 'RF1';
    d.elements.unshift({
      id: 'RF1', kind: 'rf', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz',
      axis: { roll: '90 deg' }, length: '2 cm', to: d.elements[0].id, ...r,
    });
    return d;
  };
  it('reads an entry phase for a beam locked to the RF, and leaves it out for a continuous beam', () => {
    const locked = ok(check(withRf({ phase: '45 deg' }))).line.elements.find((e) => e.id === 'RF1') as RfFlipper;
    expect(locked.phase).toBeCloseTo(Math.PI / 4, 15);
    const continuous = ok(check(withRf({}))).line.elements.find((e) => e.id === 'RF1') as RfFlipper;
    expect('phase' in continuous).toBe(false);
  });
  it('refuses a phase that is not an angle, naming the key', () => {
    expect(lines(withRf({ phase: '3 cm' }))).toEqual(['elements[0].phase: expected an angle, got 3 cm']);
  });
  it('writes the phase after the other keys of the flipper', () => {
    const text = serializeDoc(withRf({ phase: '1 rad' }));
    expect(text).toMatch(/"length": "2 cm",\s+"phase": "1 rad",\s+"to": /);
  });
});
