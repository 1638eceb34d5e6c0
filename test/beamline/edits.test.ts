import { describe, expect, it } from 'vitest';
import { checkBeamline } from '../../src/beamline/check.ts';
import {
  addElementOnPort, changeSpecies, DEFAULT_HYPERFINE_FIELD, deleteElement, documentOutputs, duplicateElement, elementOutputs, freshId, parsePath, renameElement, reroute, setAt,
  speciesIsHyperfine, speciesPortLabels, type EditResult,
} from '../../src/beamline/edits.ts';
import { KIND_NAMES } from '../../src/beamline/elements/registry.ts';
import { portLabels } from '../../src/beamline/labels.ts';
import type { BeamlineDoc } from '../../src/beamline/types.ts';
import { bareLine, completedBeamKeys } from './examples.ts';
import { deepFreeze, done, valid } from './edit-helpers.ts';
import { fakeSpecies, rb87 } from './fakeSpecies.ts';

const v1 = () => deepFreeze(bareLine() as unknown as BeamlineDoc);
const rbDoc = () => deepFreeze(completedBeamKeys() as unknown as BeamlineDoc);

describe('parsePath', () => {
  it('splits the paths Problems write', () => {
    expect(parsePath('elements[2].axis.roll')).toEqual(['elements', 2, 'axis', 'roll']);
    expect(parsePath('elements[4].ports["F=2,mF=+1"]')).toEqual(['elements', 4, 'ports', 'F=2,mF=+1']);
    expect(parsePath('elements[')).toBeUndefined();
  });
});

describe('setAt', () => {
  it('sets a value by path without mutating the document', () => {
    const d = v1();
    const n = done(setAt(d, 'elements[1].axis.roll', '45 deg'));
    expect((n.elements[1] as { axis: { roll: string } }).axis.roll).toBe('45 deg');
    expect((d.elements[1] as { axis: { roll: string } }).axis.roll).toBe('60 deg');
    expect(n.elements[0]).toBe(d.elements[0]); // untouched parts are shared
    valid(n);
  });
  it('removes a key when the value is undefined', () => {
    const n = done(setAt(v1(), ['elements', 2, 'background'], undefined));
    expect('background' in n.elements[2]).toBe(false);
  });
  it('refuses a path it cannot read', () => {
    expect(setAt(v1(), 'elements[', 1).ok).toBe(false);
  });
});

describe('freshId', () => {
  it('takes the first free number of the prefix', () => {
    expect(freshId(v1(), 'M')).toBe('M3');
    expect(freshId(v1(), 'R')).toBe('R1');
  });
});

describe('addElementOnPort', () => {
  it('inserts a one-output element and routes the old target onwards', () => {
    const d = v1();
    const r = addElementOnPort(d, 'M1', '+1/2', 'rotator');
    const n = done(r);
    expect(r.ok && r.id).toBe('R1');
    expect((n.elements[0] as { ports: Record<string, string> }).ports['+1/2']).toBe('R1');
    expect(n.elements[1]).toMatchObject({ id: 'R1', kind: 'rotator', to: 'M2' });
    valid(n);
  });
  it('inserts after the oven', () => {
    const n = done(addElementOnPort(v1(), 'oven', null, 'slit', 'S9'));
    expect(n.oven.to).toBe('S9');
    expect(n.elements[0]).toMatchObject({ id: 'S9', to: 'M1' });
    valid(n);
  });
  it('inserts a magnet with all ports to stop, and a detector as a leaf', () => {
    const a = done(addElementOnPort(v1(), 'M1', '-1/2', 'magnet'));
    expect(a.elements[1]).toMatchObject({ id: 'M3', ports: { '*': 'stop' } });
    valid(a);
    const b = done(addElementOnPort(v1(), 'M1', '-1/2', 'detector'));
    expect((b.elements[0] as { ports: Record<string, string> }).ports['-1/2']).toBe('D3');
    valid(b);
  });
  it('gives every kind defaults that validate (Rb-87 line)', () => {
    for (const kind of KIND_NAMES) {
      const n = done(addElementOnPort(rbDoc(), 'F1', null, kind, undefined, portLabels(rb87)));
      valid(n);
    }
  });
  it('names a port covered by "*" explicitly', () => {
    const n = done(addElementOnPort(rbDoc(), 'M2', 'F=1,mF=0', 'detector', 'D9'));
    expect((n.elements.find((e) => e.id === 'M2') as { ports: Record<string, string> }).ports).toEqual({
      'F=2,mF=+2': 'D1', 'F=2,mF=+1': 'D2', '*': 'stop', 'F=1,mF=0': 'D9',
    });
    valid(n);
  });
  it('refuses a taken or reserved id, a detector upstream and a missing port', () => {
    expect(addElementOnPort(v1(), 'M1', '+1/2', 'rotator', 'M2')).toEqual({ ok: false, message: 'the id "M2" is taken' });
    expect(addElementOnPort(v1(), 'M1', '+1/2', 'rotator', 'stop').ok).toBe(false);
    expect(addElementOnPort(v1(), 'D1', null, 'rotator').ok).toBe(false);
    expect(addElementOnPort(v1(), 'M1', null, 'rotator').ok).toBe(false);
    expect(addElementOnPort(v1(), 'X', null, 'rotator').ok).toBe(false);
  });
});

describe('deleteElement', () => {
  it('reconnects upstream to downstream for a one-output element', () => {
    const d = rbDoc();
    const n = done(deleteElement(d, 'F1'));
    expect(n.elements.map((e) => e.id)).toEqual(['S1', 'M1', 'T1', 'M2', 'D1', 'D2']);
    expect((n.elements[1] as { ports: Record<string, string> }).ports['mJ=+1/2']).toBe('T1');
    expect(d.elements).toHaveLength(7);
    valid(n);
  });
  it('routes upstream to stop for a magnet or a detector', () => {
    const a = done(deleteElement(v1(), 'M2'));
    expect((a.elements[0] as { ports: Record<string, string> }).ports['+1/2']).toBe('stop');
    const b = done(deleteElement(v1(), 'D2'));
    expect((b.elements[1] as { ports: Record<string, string> }).ports['-1/2']).toBe('stop');
    valid(b);
  });
  it('reconnects the oven', () => {
    const n = done(deleteElement(rbDoc(), 'S1'));
    expect(n.oven.to).toBe('M1');
    valid(n);
  });
});

describe('duplicateElement', () => {
  it('copies an element under a fresh id after it, not routed to', () => {
    const d = v1();
    const r = duplicateElement(d, 'D1');
    const n = done(r);
    expect(r.ok && r.id).toBe('D3');
    expect(n.elements[3]).toEqual({ ...d.elements[2], id: 'D3' });
    expect(n.elements[3]).not.toBe(d.elements[2]);
    expect(valid(n).warnings).toEqual([{ path: 'elements[3]', message: 'D3 is not reached from the oven' }]);
  });
});

describe('reroute', () => {
  it('routes a port, a single output or the oven to a target', () => {
    const a = done(reroute(v1(), 'M2', '-1/2', 'D1'));
    expect((a.elements[1] as { ports: Record<string, string> }).ports['-1/2']).toBe('D1');
    const b = done(reroute(rbDoc(), 'oven', null, 'M1'));
    expect(b.oven.to).toBe('M1');
    const c = done(reroute(rbDoc(), 'F1', null, 'stop'));
    expect((c.elements[2] as { to: string }).to).toBe('stop');
    expect(reroute(v1(), 'M2', '-1/2', 'nowhere')).toEqual({ ok: false, message: 'no element "nowhere" to route to' });
  });
});

describe('renameElement', () => {
  it('renames an element and every reference to it', () => {
    const n = done(renameElement(rbDoc(), 'M1', 'SG1'));
    expect(n.elements[1].id).toBe('SG1');
    expect((n.elements[0] as { to: string }).to).toBe('SG1');
    valid(n);
    const o = done(renameElement(rbDoc(), 'S1', 'Slit'));
    expect(o.oven.to).toBe('Slit');
  });
  it('refuses a taken, reserved or malformed id', () => {
    expect(renameElement(v1(), 'M1', 'M2').ok).toBe(false);
    expect(renameElement(v1(), 'M1', 'oven').ok).toBe(false);
    expect(renameElement(v1(), 'M1', 'a:b').ok).toBe(false);
    expect(renameElement(v1(), 'M1', ' M').ok).toBe(false);
  });
});

describe('edit sequences', () => {
  it('keep a valid line valid, never mutate, and round-trip through serializeDoc', async () => {
    const fc = await import('fast-check');
    const { serializeDoc } = await import('../../src/beamline/serialize.ts');
    const { readBeamlineText } = await import('../../src/beamline/text.ts');
    const step = fc.tuple(fc.constantFrom('add', 'delete', 'rename', 'duplicate'), fc.nat(), fc.constantFrom(...KIND_NAMES));
    fc.assert(fc.property(fc.array(step, { maxLength: 12 }), (steps) => {
      let doc = rbDoc();
      for (const [op, n, kind] of steps) {
        const ids = doc.elements.map((e) => e.id);
        const before = JSON.stringify(doc);
        let r: EditResult | undefined;
        if (op === 'add') {
          const from = ['oven', ...ids.filter((id) => doc.elements.find((e) => e.id === id)!.kind !== 'detector')];
          const f = from[n % from.length];
          const el = doc.elements.find((e) => e.id === f);
          const port = el?.kind === 'magnet' ? Object.keys(el.ports)[n % Object.keys(el.ports).length] : null;
          r = addElementOnPort(doc, f, port, kind, undefined, portLabels(rb87));
        } else if (ids.length && op === 'delete') r = deleteElement(doc, ids[n % ids.length]);
        else if (ids.length && op === 'rename') r = renameElement(doc, ids[n % ids.length], `X${n}`);
        else if (ids.length && op === 'duplicate') r = duplicateElement(doc, ids[n % ids.length]);
        if (!r) continue;
        expect(JSON.stringify(doc)).toBe(before);
        if (!r.ok) continue; // e.g. a taken id: refused, doc unchanged
        doc = deepFreeze(r.doc);
        const a = valid(doc);
        const b = readBeamlineText(serializeDoc(doc), fakeSpecies);
        expect(b.ok && b.line).toEqual(a.line);
      }
    }), { numRuns: 200 });
  });
});

describe('speciesPortLabels', () => {
  it('gives the port labels of a species as a document writes it (docs/design.md, "Port labels")', () => {
    expect(speciesPortLabels('Rb-87', undefined, fakeSpecies)).toEqual(['mJ=+1/2', 'mJ=-1/2']);
    expect(speciesPortLabels('Rb-87', 'each', fakeSpecies)).toEqual([
      'F=2,mF=+2', 'F=2,mF=+1', 'F=2,mF=0', 'F=2,mF=-1', 'F=2,mF=-2', 'F=1,mF=+1', 'F=1,mF=0', 'F=1,mF=-1',
    ]);
    expect(speciesPortLabels('He-4*', undefined, fakeSpecies)).toEqual(['+1', '0', '-1']);
    expect(speciesPortLabels({ spin: '3/2', g: 2, mass: '7 u' }, undefined, fakeSpecies)).toEqual(['+3/2', '+1/2', '-1/2', '-3/2']);
    expect(speciesPortLabels({ spin: 1, g: 2, mass: '7 u' }, 'each', fakeSpecies)).toEqual(['+1', '0', '-1']); // no group without a nuclear spin
  });
  it('is undefined for a species it cannot read', () => {
    expect(speciesPortLabels('Unobtainium-1', undefined, fakeSpecies)).toBeUndefined();
    expect(speciesPortLabels({ spin: '1/3', g: 2, mass: '7 u' }, undefined, fakeSpecies)).toBeUndefined();
    expect(speciesPortLabels(42, undefined, fakeSpecies)).toBeUndefined();
  });
});

describe('speciesIsHyperfine', () => {
  it('is true where an isotope has a nuclear spin (I > 0), and only there', () => {
    expect(speciesIsHyperfine('Rb-87', fakeSpecies)).toBe(true); // I = 3/2
    expect(speciesIsHyperfine('Ag', fakeSpecies)).toBe(true); // natural silver: both isotopes I = 1/2
    expect(speciesIsHyperfine('He-3*', fakeSpecies)).toBe(true); // I = 1/2
    expect(speciesIsHyperfine('He-4*', fakeSpecies)).toBe(false); // I = 0
    expect(speciesIsHyperfine({ spin: '1/2', g: 2.00231930436, mass: '106.905 u' }, fakeSpecies)).toBe(false);
    expect(speciesIsHyperfine('Unobtainium-1', fakeSpecies)).toBe(false);
  });
});

describe('documentOutputs and elementOutputs', () => {
  it('list every output of the line in document order: the oven, each magnet port, each single output', () => {
    expect(documentOutputs(v1())).toEqual([
      { fromId: 'oven', port: null, target: 'M1' },
      { fromId: 'M1', port: '+1/2', target: 'M2' },
      { fromId: 'M1', port: '-1/2', target: 'stop' },
      { fromId: 'M2', port: '+1/2', target: 'D1' },
      { fromId: 'M2', port: '-1/2', target: 'D2' },
    ]);
    const rb = documentOutputs(rbDoc());
    expect(rb.map((o) => `${o.fromId}${o.port === null ? '' : ` ${o.port}`} → ${o.target}`)).toEqual([
      'oven → S1', 'S1 → M1', 'M1 mJ=+1/2 → F1', 'M1 mJ=-1/2 → stop', 'F1 → T1', 'T1 → M2',
      'M2 F=2,mF=+2 → D1', 'M2 F=2,mF=+1 → D2', 'M2 * → stop',
    ]);
  });
  it('give one element\'s outputs: none for a detector, undefined for an id not in the line', () => {
    expect(elementOutputs(v1(), 'M2')).toEqual([{ fromId: 'M2', port: '+1/2', target: 'D1' }, { fromId: 'M2', port: '-1/2', target: 'D2' }]);
    expect(elementOutputs(rbDoc(), 'F1')).toEqual([{ fromId: 'F1', port: null, target: 'T1' }]);
    expect(elementOutputs(v1(), 'oven')).toEqual([{ fromId: 'oven', port: null, target: 'M1' }]);
    expect(elementOutputs(v1(), 'D1')).toEqual([]);
    expect(elementOutputs(v1(), 'X9')).toBeUndefined();
  });
  it('agree with the routing the reader finds (outputsOf of the normalized line)', async () => {
    const { outputsOf } = await import('../../src/beamline/elements/registry.ts');
    for (const d of [v1(), rbDoc()]) {
      const line = valid(d).line;
      const want = [{ fromId: 'oven', port: null, target: line.oven.to }, ...line.elements.flatMap((e) => outputsOf(e).map((o) => ({ fromId: e.id, ...o })))];
      expect(documentOutputs(d)).toEqual(want);
    }
  });
});

describe('changeSpecies', () => {
  it('carries the port names of a bare spin 1/2 over to Rb-87 (mJ=±1/2) and gives field-less magnets the demo field', () => {
    const d = v1();
    const r = changeSpecies(d, 'Rb-87', fakeSpecies);
    if (!r.ok) throw new Error(r.message);
    expect(r.doc.species).toBe('Rb-87');
    expect((r.doc.elements[0] as { ports: Record<string, string> }).ports).toEqual({ 'mJ=+1/2': 'M2', 'mJ=-1/2': 'stop' });
    expect((r.doc.elements[1] as { ports: Record<string, string> }).ports).toEqual({ 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' });
    expect(r.fieldSet).toEqual(['M1', 'M2']);
    expect(r.doc.elements.slice(0, 2).map((e) => (e as { field?: string }).field)).toEqual([DEFAULT_HYPERFINE_FIELD, DEFAULT_HYPERFINE_FIELD]);
    expect(r.doc.elements[2]).toBe(d.elements[2]); // detectors untouched, shared
    valid(r.doc);
    expect((d.elements[0] as { ports: Record<string, string> }).ports).toEqual({ '+1/2': 'M2', '-1/2': 'stop' }); // input unchanged
  });
  it('goes back to a bare spin: labels by position, group and entry dropped (they apply to hyperfine species only)', () => {
    const rb = done(setAt(rbDoc(), 'elements[4].group', 'mJ'));
    const m2 = done(setAt(rb, 'elements[4].ports', { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' }));
    const withEntry = done(setAt(m2, 'elements[1].entry', 'sudden'));
    valid(withEntry);
    const r = changeSpecies(withEntry, { spin: '1/2', g: 2.00231930436, mass: '106.905 u' }, fakeSpecies);
    if (!r.ok) throw new Error(r.message);
    const [m1n, m2n] = [r.doc.elements[1], r.doc.elements[4]] as { ports: Record<string, string>; group?: string; entry?: string; field?: string }[];
    expect(m1n.ports).toEqual({ '+1/2': 'F1', '-1/2': 'stop' });
    expect(m2n.ports).toEqual({ '+1/2': 'D1', '-1/2': 'D2' });
    expect('group' in m1n || 'entry' in m1n || 'group' in m2n).toBe(false);
    expect(m1n.field).toBe('0.8 T'); // a magnet's field is read for every species
    expect(r.fieldSet).toEqual([]);
    valid(r.doc);
  });
  it('keeps the labels the new species shares (Rb-87 → Rb-85: mJ and F=2 states exist in both)', () => {
    const r = changeSpecies(rbDoc(), 'Rb-85', fakeSpecies);
    if (!r.ok) throw new Error(r.message);
    expect(r.doc.elements.map((e) => (e as { ports?: object }).ports)).toEqual(rbDoc().elements.map((e) => (e as { ports?: object }).ports));
    expect(r.fieldSet).toEqual([]);
    valid(r.doc);
  });
  it('leaves ports it cannot map for the reader to name (F states onto a bare spin 1/2)', () => {
    const r = changeSpecies(rbDoc(), { spin: '1/2', g: 2, mass: '87 u' }, fakeSpecies);
    if (!r.ok) throw new Error(r.message);
    expect((r.doc.elements[4] as { ports: Record<string, string> }).ports).toEqual({ 'F=2,mF=+2': 'D1', 'F=2,mF=+1': 'D2', '*': 'stop' });
    const c = checkBeamline(r.doc, fakeSpecies);
    expect(c.ok).toBe(false);
    if (!c.ok) expect(c.problems.map((p) => p.path)).toContain('elements[4].ports["F=2,mF=+2"]');
  });
  it('renames a recombiner\'s open labels and phases with the magnets\' ports', () => {
    const d = done(addElementOnPort(v1(), 'M2', '-1/2', 'recombiner', 'C1', ['+1/2', '-1/2']));
    const withPhase = done(setAt(d, 'elements[2].phases', { '-1/2': '90 deg' }));
    valid(withPhase);
    const r = changeSpecies(withPhase, 'Ag', fakeSpecies);
    if (!r.ok) throw new Error(r.message);
    expect(r.doc.elements[2]).toMatchObject({ id: 'C1', open: ['mJ=+1/2', 'mJ=-1/2'], phases: { 'mJ=-1/2': '90 deg' } });
    expect(r.fieldSet).toEqual(['M1', 'M2']); // a recombiner's field is optional
    valid(r.doc);
  });
  it('sets an unknown species as written (the reader names it) and refuses a value that is no species at all', () => {
    const r = changeSpecies(v1(), 'Unobtainium-1', fakeSpecies);
    expect(r.ok && r.doc.species).toBe('Unobtainium-1');
    expect(r.ok && r.doc.elements).toEqual(v1().elements);
    expect(changeSpecies(v1(), 42 as never, fakeSpecies)).toEqual({ ok: false, message: 'a species is a library name such as "Rb-87" or a bare spin {"spin", "g", "mass"}, got 42' });
  });
});
