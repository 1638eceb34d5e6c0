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

  it('show an unknown kind by its gap only', () => {
    expect(elementFields({ kind: 'deflector' }, false).map((f) => f.key)).toEqual(['gap']);
  });
});
