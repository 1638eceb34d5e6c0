import { describe, expect, it } from 'vitest';
import type { Recombiner } from '../../../src/beamline/types.ts';
import { bareLine } from '../examples.ts';
import { check, lines, ok, rbLine } from '../helpers.ts';

describe('recombiner', () => {
  const withRecombiner = (r: Record<string, unknown>) => {
    const d = rbLine();
    d.elements[2].to = 'C1';
    d.elements.push({ id: 'C1', kind: 'recombiner', axis: { roll: '0 deg' }, to: 'T1', ...r });
    return d;
  };
  it('reads open labels and phases of the species group', () => {
    const r = ok(check(withRecombiner({ open: ['mJ=+1/2', 'mJ=-1/2'], phases: { 'mJ=-1/2': '180 deg' } })));
    const c = r.line.elements.find((e) => e.id === 'C1') as Recombiner;
    expect(c.open).toEqual(['mJ=+1/2', 'mJ=-1/2']);
    expect(c.phases['mJ=-1/2']).toBeCloseTo(Math.PI, 15);
    expect(c.coherent).toBe(true);
    expect(c.group).toBe('mJ');
  });
  it('rejects open labels not of the species and phases not in open', () => {
    const l = lines(withRecombiner({ group: 'each', open: ['F=2,mF=+2', 'mJ=+1/2'], phases: { 'F=1,mF=0': '1 rad' } }));
    expect(l).toEqual([
      'elements[7].open[1]: no port "mJ=+1/2" for this species and group; its ports are F=2,mF=+2, F=2,mF=+1, F=2,mF=0, F=2,mF=-1, F=2,mF=-2, F=1,mF=+1, F=1,mF=0, F=1,mF=-1',
      'elements[7].phases["F=1,mF=0"]: phase for "F=1,mF=0", which is not in "open"',
    ]);
  });
  it('rejects field, group and entry on a bare spin', () => {
    const d = bareLine();
    d.elements[0].ports['+1/2'] = 'C1';
    d.elements.push({ id: 'C1', kind: 'recombiner', axis: { roll: '0 deg' }, open: ['+1/2'], field: '1 T', to: 'M2' });
    expect(lines(d)).toEqual(['elements[4].field: "field" does not apply here: field applies to hyperfine species only (this line\'s species has no nuclear spin)']);
  });
});

