import { describe, expect, it } from 'vitest';
import { newDocument } from '../../src/app/default-doc.ts';
import { apply } from './inspector-helpers.ts';
import { editLabel } from '../../src/app/inspector-edit.ts';
import type { QuantityField } from '../../src/app/fields.ts';

const angle: QuantityField = { type: 'quantity', key: 'axis.roll', label: 'axis roll', dim: 'angle' };

describe('applyInspectorEdit', () => {
  it('takes a quantity, labels it for undo and clears the field\'s message', () => {
    const d = newDocument();
    const r = apply(d, { kind: 'quantity', path: 'elements[1].axis.roll', text: ' 35 deg ', spec: angle });
    expect(r).toMatchObject({ ok: true, label: 'M2 axis.roll = 35 deg', field: 'elements[1].axis.roll' });
    expect(r.ok && (r.doc.elements[1] as { axis: { roll: string } }).axis.roll).toBe('35 deg');
    expect((d.elements[1] as { axis: { roll: string } }).axis.roll).toBe('60 deg');
  });

  it('refuses a quantity of the wrong kind, or a missing required one, keeping the entry beside the field', () => {
    const d = newDocument();
    const r = apply(d, { kind: 'quantity', path: 'elements[1].axis.roll', text: '60', spec: angle });
    expect(r).toMatchObject({ ok: false, field: 'elements[1].axis.roll', text: '60' });
    expect(!r.ok && r.message).toMatch(/angle/);
    expect(apply(d, { kind: 'quantity', path: 'elements[1].axis.roll', text: '  ', spec: angle })).toEqual({
      ok: false, field: 'elements[1].axis.roll', text: '  ', message: 'a value is needed here',
    });
  });

  it('removes an optional key for an empty entry and writes a plain number for a dimensionless one', () => {
    const d = newDocument();
    const gone = apply(d, { kind: 'quantity', path: 'elements[2].dwell', text: '', spec: { type: 'quantity', key: 'dwell', label: 'dwell', dim: 'time', optional: true } });
    expect(gone.ok && 'dwell' in gone.doc.elements[2]).toBe(false);
    expect(gone.ok && gone.label).toBe('D1 dwell cleared');
    const eff = apply(d, { kind: 'quantity', path: 'elements[2].efficiency', text: '0.75', spec: { type: 'quantity', key: 'efficiency', label: 'efficiency', dim: 'dimensionless', optional: true } });
    expect(eff.ok && (eff.doc.elements[2] as { efficiency: unknown }).efficiency).toBe(0.75);
  });

  it('names the line\'s problem at the field when the document layer refuses the edit', () => {
    const r = apply(newDocument(), { kind: 'quantity', path: 'elements[2].efficiency', text: '1.5', spec: { type: 'quantity', key: 'efficiency', label: 'efficiency', dim: 'dimensionless', optional: true } });
    expect(r).toMatchObject({ ok: false, field: 'elements[2].efficiency', text: '1.5' });
    expect(!r.ok && r.message).toBe('the efficiency must lie in [0, 1], got 1.5');
  });

  it('changes the species through the document layer and announces the magnets given the demo field', () => {
    const r = apply(newDocument(), { kind: 'species', value: 'Rb-87' });
    if (!r.ok) throw new Error(r.message);
    expect(r.label).toBe('species Rb-87');
    expect(r.field).toBe('species');
    expect((r.doc.elements[0] as { ports: object }).ports).toEqual({ 'mJ=+1/2': 'M2', 'mJ=-1/2': 'stop' });
    expect(r.notice).toBe("M1, M2: field set to 0.5 T (a hyperfine species needs the field size at the beam); enter your magnets' set-point.");
    const back = apply(r.doc, { kind: 'species', value: 'bare spin' });
    if (!back.ok) throw new Error(back.message);
    expect(back.doc.species).toEqual(newDocument().species);
    expect((back.doc.elements[0] as { ports: object }).ports).toEqual({ '+1/2': 'M2', '-1/2': 'stop' });
    expect(back.notice).toBeUndefined();
  });

  it('refuses a species that does not fit, saying so beside the species', () => {
    const r = apply(newDocument(), { kind: 'species', value: 'Unobtainium-1' });
    expect(r).toMatchObject({ ok: false, field: 'species', text: 'Unobtainium-1' });
    expect(!r.ok && r.message).toMatch(/^Unobtainium-1 does not fit this line as it is: .*unknown species/);
  });

  it('renames and selects the new id; routes and adds on a port, refusing with a dialog title', () => {
    const d = newDocument();
    expect(apply(d, { kind: 'rename', from: 'M2', to: 'SG2' })).toMatchObject({ ok: true, select: 'SG2', field: 'elements[1].id', label: 'rename M2 → SG2' });
    expect(apply(d, { kind: 'rename', from: 'M2', to: 'M1' })).toMatchObject({ ok: false, field: 'elements[1].id', text: 'M1', message: 'the id "M1" is taken' });
    const add = apply(d, { kind: 'addOnPort', fromId: 'M1', port: '-1/2', elementKind: 'detector' });
    expect(add).toMatchObject({ ok: true, select: 'D3', label: 'add a detector on M1 -1/2' });
    expect(apply(d, { kind: 'reroute', fromId: 'M2', port: '-1/2', target: 'D1' })).toMatchObject({ ok: true, label: 'route M2 -1/2 → D1' });
    expect(apply(d, { kind: 'reroute', fromId: 'M2', port: '-1/2', target: 'M1' })).toMatchObject({
      ok: false, title: 'Cannot route M2 -1/2 to M1', message: expect.stringMatching(/cycle/),
    });
    expect(apply(d, { kind: 'addOnPort', fromId: 'D1', port: null, elementKind: 'slit' })).toMatchObject({ ok: false, title: 'Cannot add a slit' });
  });

  it('switches the velocity distribution to a starting one of the kind chosen', () => {
    const r = apply(newDocument(), { kind: 'value', path: 'oven.velocity', value: 'effusive' });
    expect(r.ok && r.doc.oven.velocity).toEqual({ kind: 'effusive', temperature: '1200 K' });
    expect(r.ok && r.label).toBe('oven.velocity = effusive');
  });
});

describe('editLabel', () => {
  it('says what an edit does in a few words', () => {
    const d = newDocument();
    expect(editLabel(d, { kind: 'value', path: 'elements[0].coherent', value: false })).toBe('M1 coherent = off');
    expect(editLabel(d, { kind: 'value', path: 'elements[0].group', value: undefined })).toBe('M1 group = default');
    expect(editLabel(d, { kind: 'quantity', path: 'oven.flux', text: '1e9 /s', spec: angle })).toBe('oven.flux = 1e9 /s');
    expect(editLabel(d, { kind: 'reroute', fromId: 'oven', port: null, target: 'M2' })).toBe('route oven → M2');
  });
});
