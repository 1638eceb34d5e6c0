// The set-point edits of the inspector that are more than a value at a path: the oven's state by kind, the
// velocity table's rows, an element placed at a distance from the oven aperture (the document keeps gaps).
import { describe, expect, it } from 'vitest';
import { editVelocityRows, ovenStateOfKind, setOvenState, setPositionFromOven, setVelocityTable } from '../../src/beamline/edits.ts';
import { portLabels } from '../../src/beamline/labels.ts';
import type { BeamlineDoc, OvenStateDoc } from '../../src/beamline/types.ts';
import { bareLine, completedBeamKeys } from './examples.ts';
import { deepFreeze, done, valid } from './edit-helpers.ts';
import { rb87 } from './fakeSpecies.ts';

const rbDoc = () => deepFreeze(completedBeamKeys() as unknown as BeamlineDoc);
const bare = () => deepFreeze(bareLine() as unknown as BeamlineDoc);

describe('the oven state by kind', () => {
  const labels = portLabels(rb87, 'each');
  it('gives Rb-87 the 8 zero-field states of F=1 and F=2 (the labels the state names)', () => {
    expect(labels).toHaveLength(8);
    expect(labels).toContain('F=2,mF=-2');
  });
  it('unpolarised → populations: every state an equal share, summing to 1 within the reader\'s 1e-9 (no warning)', () => {
    const s = ovenStateOfKind({ kind: 'unpolarized' }, 'populations', labels) as Extract<OvenStateDoc, { kind: 'populations' }>;
    expect(Object.keys(s.p)).toEqual(labels);
    expect(Object.values(s.p)).toEqual(labels.map(() => 0.125));
    const doc = done(setOvenState(rbDoc(), s));
    const r = valid(doc);
    expect(r.warnings.filter((w) => w.path.startsWith('oven.state'))).toEqual([]);
  });
  it('a share of 1/3 is written to 12 figures, which the reader takes without a normalisation warning', () => {
    const s = ovenStateOfKind({ kind: 'unpolarized' }, 'populations', ['+1', '0', '-1']) as Extract<OvenStateDoc, { kind: 'populations' }>;
    expect(s.p['0']).toBe(0.333333333333);
    expect(Math.abs(Object.values(s.p).reduce<number>((a, b) => a + Number(b), 0) - 1)).toBeLessThan(1e-9);
  });
  it('pure → populations keeps the axis and puts everything in the pure state; back to pure takes the largest population', () => {
    const pure: OvenStateDoc = { kind: 'pure', axis: { theta: '30 deg', phi: '10 deg' }, m: 'F=2,mF=+1' };
    const pops = ovenStateOfKind(pure, 'populations', labels);
    expect(pops).toEqual({ kind: 'populations', axis: { theta: '30 deg', phi: '10 deg' }, p: { 'F=2,mF=+1': 1 } });
    const back = ovenStateOfKind({ kind: 'populations', axis: { roll: '5 deg' }, p: { 'F=1,mF=0': 0.2, 'F=2,mF=-2': 0.7, 'F=2,mF=+2': 0.1 } }, 'pure', labels);
    expect(back).toEqual({ kind: 'pure', axis: { roll: '5 deg' }, m: 'F=2,mF=-2' });
  });
  it('unpolarised → pure: the first state along z; → unpolarised drops the axis; the same kind is unchanged', () => {
    expect(ovenStateOfKind({ kind: 'unpolarized' }, 'pure', labels)).toEqual({ kind: 'pure', axis: { theta: '0 deg', phi: '0 deg' }, m: labels[0] });
    expect(ovenStateOfKind({ kind: 'pure', axis: { roll: '0 deg' }, m: 'x' }, 'unpolarized', labels)).toEqual({ kind: 'unpolarized' });
    const same: OvenStateDoc = { kind: 'pure', axis: { roll: '0 deg' }, m: 'F=1,mF=0' };
    expect(ovenStateOfKind(same, 'pure', labels)).toBe(same);
  });
  it('a pure state the reader takes, set without touching the input', () => {
    const d0 = rbDoc();
    const doc = done(setOvenState(d0, { kind: 'pure', axis: { roll: '90 deg' }, m: 'F=2,mF=-2' }));
    valid(doc);
    expect(d0.oven.state).toEqual({ kind: 'unpolarized' });
  });
});

describe('the velocity table', () => {
  const table = (doc: BeamlineDoc) => (doc.oven.velocity as { points: [string, number][] }).points;
  it('set from points and read back by the reader, speeds in SI', () => {
    const doc = done(setVelocityTable(bare(), [['300 m/s', 1], ['0.45 km/s', 3], ['600 m/s', 0]]));
    const r = valid(doc);
    const v = r.line.oven.velocity as { kind: string; points: [number, number][] };
    expect(v.kind).toBe('table');
    expect(v.points.map((p) => p[0])).toEqual([300, 450, 600]);
    expect(v.points.map((p) => p[1])).toEqual([0.25, 0.75, 0]);
  });
  it('refuses an empty table', () => {
    const r = setVelocityTable(bare(), []);
    expect(r.ok).toBe(false);
  });
  it('inserts a row at the mean speed of its neighbours, in the unit of the row, weight 0; past the last one step further', () => {
    const doc = done(setVelocityTable(bare(), [['300 m/s', 1], ['0.5 km/s', 3]]));
    expect(table(done(editVelocityRows(doc, { insert: 0 })))).toEqual([['300 m/s', 1], ['400 m/s', 0], ['0.5 km/s', 3]]);
    expect(table(done(editVelocityRows(doc, { insert: 1 })))).toEqual([['300 m/s', 1], ['0.5 km/s', 3], ['0.7 km/s', 0]]);
    valid(done(editVelocityRows(doc, { insert: 1 })));
  });
  it('removes a row, but not the last one', () => {
    const doc = done(setVelocityTable(bare(), [['300 m/s', 1], ['500 m/s', 3]]));
    expect(table(done(editVelocityRows(doc, { remove: 0 })))).toEqual([['500 m/s', 3]]);
    const one = done(editVelocityRows(doc, { remove: 0 }));
    const r = editVelocityRows(one, { remove: 0 });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(/at least one speed/);
  });
  it('says so when the distribution is not a table', () => {
    const r = editVelocityRows(bare(), { insert: 0 });
    expect(r.ok).toBe(false);
  });
});

describe('a position from the oven aperture', () => {
  // Rb line: S1 gap 30 cm (thin), M1 gap 5 cm, length 10 cm → M1 ends at 45 cm; F1 gap 2 cm → F1 starts at 47 cm
  it('writes the gap that puts the element there, in the unit typed', () => {
    const doc = done(setPositionFromOven(rbDoc(), 'F1', '50 cm', 0.45, 'M1'));
    expect(doc.elements.find((e) => e.id === 'F1')!.gap).toBe('5 cm');
    valid(doc);
    const mm = done(setPositionFromOven(rbDoc(), 'F1', '451.5 mm', 0.45, 'M1'));
    expect(mm.elements.find((e) => e.id === 'F1')!.gap).toBe('1.5 mm');
  });
  it('keeps no float noise: 0.3 m − 0.1 m is 0.2 m, not 0.19999999999999998', () => {
    const doc = done(setPositionFromOven(rbDoc(), 'S1', '0.3 m', 0.1, 'the oven'));
    expect(doc.elements[0].gap).toBe('0.2 m');
  });
  it('an expression is written in mm', () => {
    const doc = done(setPositionFromOven(rbDoc(), 'F1', '(45 + 3) cm', 0.45, 'M1'));
    expect(doc.elements.find((e) => e.id === 'F1')!.gap).toBe('30 mm');
  });
  it('refuses a place upstream of the element before, naming both distances', () => {
    const r = setPositionFromOven(rbDoc(), 'F1', '40 cm', 0.45, 'M1');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toBe('F1 cannot start at 40 cm from the oven aperture: M1 ends at 45 cm, so its gap would be negative (move M1 first)');
  });
  it('refuses a place upstream of the oven aperture for the first element', () => {
    const r = setPositionFromOven(rbDoc(), 'S1', '-2 cm', 0, 'the oven aperture');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toBe('S1 cannot start at -2 cm: positions are measured downstream from the oven aperture, from 0 on');
  });
  it('refuses what is not a length, and an unknown element', () => {
    const r = setPositionFromOven(rbDoc(), 'F1', '40 T', 0.45, 'M1');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(/length/);
    expect(setPositionFromOven(rbDoc(), 'X9', '40 cm', 0, 'the oven').ok).toBe(false);
  });
});
