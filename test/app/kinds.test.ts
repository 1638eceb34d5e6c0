/** The app's registries by element kind: one drawing and one inspector field list per kind of the format. */
import { describe, expect, it } from 'vitest';
import { KIND_NAMES, KINDS } from '../../src/beamline/elements/registry.ts';
import { ELEMENT_FIELDS, elementFields } from '../../src/app/fields.ts';
import { DRAWINGS } from '../../src/app/ui/drawings.tsx';

describe('the app\'s kind registries', () => {
  it('hold exactly the kinds of the format', () => {
    expect(Object.keys(DRAWINGS).sort()).toEqual([...KIND_NAMES].sort());
    expect(Object.keys(ELEMENT_FIELDS).sort()).toEqual([...KIND_NAMES].sort());
  });

  it('give every kind the gap first and only keys its reader knows', () => {
    for (const kind of KIND_NAMES) {
      const el: Record<string, unknown> = { kind, id: 'X', axis: { roll: '0 deg' }, start: { roll: '0 deg' }, end: { roll: '0 deg' } };
      const fields = elementFields(el, true);
      expect(fields[0].key, kind).toBe('gap');
      const keys = new Set(['gap', ...KINDS[kind].keys]);
      for (const f of fields) expect(keys.has(f.key.split('.')[0]), `${kind}: ${f.key}`).toBe(true);
    }
  });

  it('list a field for every key of the kind\'s table but its output, the hyperfine-only keys for a hyperfine species only', () => {
    for (const kind of KIND_NAMES) {
      const el: Record<string, unknown> = { kind, id: 'X', axis: { roll: '0 deg' }, start: { theta: '90 deg', phi: '30 deg' }, end: { roll: '0 deg' } };
      const table = KINDS[kind].table.filter((s) => s.key !== 'to' && s.key !== 'ports');
      const shown = (hyperfine: boolean) => [...new Set(elementFields(el, hyperfine).map((f) => f.key.split(/[.[]/)[0]))];
      expect(shown(true), kind).toEqual(['gap', ...table.map((s) => s.key)]);
      expect(shown(false), kind).toEqual(['gap', ...table.filter((s) => !s.hyperfineOnly).map((s) => s.key)]);
    }
    // an axis as the document writes it, after the choice of its form: a twist's start in θ, φ, its end as a roll
    const twist = elementFields({ kind: 'twist', start: { theta: '90 deg', phi: '30 deg' }, end: { roll: '0 deg' } }, false);
    expect(twist.map((f) => `${f.type} ${f.key}`)).toEqual([
      'quantity gap', 'quantity field', 'axisForm start', 'quantity start.theta', 'quantity start.phi', 'axisForm end', 'quantity end.roll', 'quantity length',
    ]);
  });

  it('show a recombiner\'s open ports and their phases (bench D\'s 60° phase had no field)', () => {
    const fields = elementFields({ kind: 'recombiner', id: 'RC', axis: { roll: '90 deg' }, open: ['+1/2', '-1/2'], phases: { '-1/2': '60 deg' }, to: 'RI' }, false);
    expect(fields.find((f) => f.key === 'open')).toEqual({ type: 'labels', key: 'open', label: 'open ports', mappedBy: 'phases' });
    expect(fields.find((f) => f.key === 'phases')).toEqual({ type: 'angles', key: 'phases', label: 'phase', of: 'open', placeholder: '0 deg' });
    expect(fields.map((f) => f.key)).toEqual(['gap', 'axis', 'axis.roll', 'open', 'phases', 'coherent']);
    // left out, a recombiner is coherent (its reader's default): the switch shows it on
    expect(fields.find((f) => f.key === 'coherent')).toEqual({ type: 'bool', key: 'coherent', label: 'coherent', fallback: true });
  });

  it('show an unknown kind by its gap only', () => {
    expect(elementFields({ kind: 'deflector' }, false).map((f) => f.key)).toEqual(['gap']);
  });
});
