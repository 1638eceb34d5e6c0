import { describe, expect, it } from 'vitest';
import { checkBeamline, formatProblem } from '../../src/beamline/check.ts';
import { addElementOnPort, deleteElement, duplicateElement, freshId, parsePath, renameElement, reroute, setAt, type EditResult } from '../../src/beamline/edits.ts';
import { KIND_NAMES } from '../../src/beamline/elements/registry.ts';
import { portLabels } from '../../src/beamline/labels.ts';
import type { BeamlineDoc } from '../../src/beamline/types.ts';
import { bareLine, completedBeamKeys } from './examples.ts';
import { fakeSpecies, rb87 } from './fakeSpecies.ts';

function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object') {
    Object.values(o).forEach(deepFreeze);
    Object.freeze(o);
  }
  return o;
}
const v1 = () => deepFreeze(bareLine() as unknown as BeamlineDoc);
const rbDoc = () => deepFreeze(completedBeamKeys() as unknown as BeamlineDoc);
function done(r: EditResult): BeamlineDoc {
  if (!r.ok) throw new Error(r.message);
  return r.doc;
}
function valid(doc: BeamlineDoc) {
  const r = checkBeamline(doc, fakeSpecies);
  if (!r.ok) throw new Error(r.problems.map(formatProblem).join('\n'));
  return r;
}

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
