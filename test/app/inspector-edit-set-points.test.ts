// The inspector's edits of the oven's state, the velocity table and positions from the oven aperture: each an
// undoable edit with its label, checked by the reader, a refusal kept beside its field or in a dialog.
import { describe, expect, it } from 'vitest';
import { runEngine } from '../../src/app/core-adapter.ts';
import { newDocument } from '../../src/app/default-doc.ts';
import { apply, lineOf } from './inspector-helpers.ts';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { readDocument } from '../../src/app/core-adapter.ts';


describe('the oven state from the inspector', () => {
  it('a pure +1/2 state along z sends the whole flux to M1\'s +1/2 port (the filter passes it all)', () => {
    const d = newDocument();
    const r = apply(d, { kind: 'ovenState', state: { kind: 'pure', axis: { theta: '0 deg', phi: '0 deg' }, m: '+1/2' }, what: 'pure +1/2' });
    expect(r).toMatchObject({ ok: true, label: 'oven state: pure +1/2', field: 'oven.state' });
    if (!r.ok) return;
    const res = runEngine(lineOf(r.doc));
    const stopped = res.leaves.filter((l) => l.path[0] === 'M1:-1/2').reduce((a, l) => a + l.yield, 0);
    const passed = res.leaves.filter((l) => l.path[0] === 'M1:+1/2').reduce((a, l) => a + l.yield, 0);
    expect(stopped).toBeLessThan(1e-12);
    expect(passed).toBeGreaterThan(0);
  });
  it('refuses a pure state the species does not have, keeping the message at oven.state', () => {
    const r = apply(newDocument(), { kind: 'ovenState', state: { kind: 'pure', axis: { roll: '0 deg' }, m: 'F=2,mF=+2' }, what: 'pure F=2,mF=+2' });
    expect(r).toMatchObject({ ok: false, field: 'oven.state' });
    expect(!r.ok && r.message).toMatch(/F=2,mF=\+2/);
  });
});

describe('the velocity table from the inspector', () => {
  it('takes a table from a CSV file as one edit, with a notice', () => {
    const r = apply(newDocument(), { kind: 'velocityTable', points: [['300 m/s', 1], ['600 m/s', 2]], source: 'tof.csv' });
    expect(r).toMatchObject({ ok: true, label: 'velocity table from tof.csv (2 speeds)', notice: 'Velocity table: 2 speeds from tof.csv.' });
    expect(r.ok && r.doc.oven.velocity).toEqual({ kind: 'table', points: [['300 m/s', 1], ['600 m/s', 2]] });
  });
  it('refuses a table the reader does not take in a dialog naming the row', () => {
    const r = apply(newDocument(), { kind: 'velocityTable', points: [['600 m/s', 1], ['300 m/s', 2]], source: 'bad.csv' });
    expect(r).toMatchObject({ ok: false, title: 'Cannot take the velocity table of bad.csv' });
    expect(!r.ok && r.message).toMatch(/oven\.velocity\.points/);
  });
  it('adds and removes rows', () => {
    const t = apply(newDocument(), { kind: 'velocityTable', points: [['300 m/s', 1], ['600 m/s', 2]], source: 'x.csv' });
    if (!t.ok) throw new Error(t.message);
    const added = apply(t.doc, { kind: 'velocityRows', op: { insert: 0 } });
    expect(added).toMatchObject({ ok: true, label: 'velocity table: row added after row 1' });
    expect(added.ok && added.doc.oven.velocity).toEqual({ kind: 'table', points: [['300 m/s', 1], ['450 m/s', 0], ['600 m/s', 2]] });
    const removed = apply(t.doc, { kind: 'velocityRows', op: { remove: 1 } });
    expect(removed.ok && removed.doc.oven.velocity).toEqual({ kind: 'table', points: [['300 m/s', 1]] });
  });
});

describe('a position from the oven aperture', () => {
  it('sets the gap behind the element before (M1 at 30 cm, 5 cm long: M2 at 40 cm is a 5 cm gap)', () => {
    const r = apply(newDocument(), { kind: 'position', id: 'M2', text: '40 cm', upstreamExit: 0.35, upstreamName: 'M1' });
    expect(r).toMatchObject({ ok: true, label: 'M2 at 40 cm from the oven aperture', field: 'elements[1].position' });
    expect(r.ok && r.doc.elements[1].gap).toBe('5 cm');
  });
  it('keeps a refused position beside its field', () => {
    const r = apply(newDocument(), { kind: 'position', id: 'M2', text: '20 cm', upstreamExit: 0.35, upstreamName: 'M1' });
    expect(r).toMatchObject({ ok: false, field: 'elements[1].position', text: '20 cm' });
  });
});

describe('a magnet\'s sorting group changed from the inspector', () => {
  const benchH = () => {
    const r = readDocument(readFileSync(join(import.meta.dirname, '..', '..', 'samples', 'bench-h-rb87-mj-then-eigenstate.spinyard'), 'utf8'));
    if (!r.ok) throw new Error('bench H does not read');
    return r.doc;
  };
  it('carries the ports over: M1 by eigenstate sends the four m_J = +1/2 states on to M2, and the line runs as before', () => {
    const d = benchH();
    const r = apply(d, { kind: 'value', path: 'elements[1].group', value: 'each' });
    expect(r).toMatchObject({ ok: true, label: 'M1 group = each' });
    if (!r.ok) return;
    expect((r.doc.elements[1] as { ports: Record<string, string> }).ports).toEqual({ 'F=2,mF=+2': 'M2', 'F=2,mF=+1': 'M2', 'F=2,mF=0': 'M2', 'F=2,mF=-1': 'M2', '*': 'stop' });
    // the same atoms reach each detector: the detectors' yields are unchanged to round-off
    const before = runEngine(lineOf(d)).detectors.map((x) => x.yield);
    const after = runEngine(lineOf(r.doc)).detectors.map((x) => x.yield);
    after.forEach((y, i) => expect(y).toBeCloseTo(before[i], 9));
  });
  it('refuses M2 by m_J, which would merge its collectors, with the reason at the field', () => {
    const r = apply(benchH(), { kind: 'value', path: 'elements[2].group', value: 'mJ' });
    expect(r).toMatchObject({ ok: false, field: 'elements[2].group' });
    expect(!r.ok && r.message).toMatch(/would put F=2,mF=\+2 \(to D1\) and/);
  });
});
