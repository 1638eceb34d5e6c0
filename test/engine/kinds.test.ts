/**
 * Element kinds as modules: every kind has a reader module (src/beamline/elements) and an engine step
 * (src/engine/steps), the routing rule and the length are each kind module's own, and a kind defined here in
 * the test (a drift pipe, defined by its key table and registered in both registries for this file only) flows
 * through reading, running, writing, the inspector's fields and the setup sheet's rows like the kinds of the format.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { KINDS, KIND_NAMES, lengthOf, outputsOf, type KindModule } from '../../src/beamline/elements/registry.ts';
import { addElementOnPort, parseBeamlineText, serializeDoc, validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline, Element, ElementKind } from '../../src/beamline/types.ts';
import { defineKind } from '../../src/beamline/elements/keys.ts';
import { runLine } from '../../src/engine/run.ts';
import { drift } from '../../src/engine/propagate.ts';
import { STEPS } from '../../src/engine/steps/index.ts';
import type { Step } from '../../src/engine/steps/step.ts';
import { completedBeamKeys, DESIGN_V1 } from '../beamline/examples.ts';
import { elementFields } from '../../src/app/fields.ts';
import { buildSheet } from '../../src/sheet/model.ts';

function line(doc: Record<string, unknown>): Beamline {
  const r = validateBeamline(doc);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}

/** One element of every kind, each with a length where its kind has one. */
const EVERY_KIND = {
  format: 'spinyard.beamline', version: 1, title: 'every kind',
  species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
  oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'S1' },
  elements: [
    { id: 'S1', kind: 'slit', gap: '10 cm', width: '1 mm', height: '3 mm', to: 'R1' },
    { id: 'R1', kind: 'rotator', gap: '1 cm', axis: { roll: '90 deg' }, angle: '30 deg', to: 'F1' },
    { id: 'F1', kind: 'field', gap: '1 cm', field: { x: '0 T', y: '0 T', z: '1 uT' }, length: '3 cm', to: 'T1' },
    { id: 'T1', kind: 'twist', gap: '1 cm', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm', to: 'RF1' },
    { id: 'RF1', kind: 'rf', gap: '1 cm', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz',
      axis: { roll: '90 deg' }, length: '2 cm', phase: '0 rad', to: 'C1' },
    { id: 'C1', kind: 'recombiner', gap: '1 cm', axis: { roll: '0 deg' }, open: ['+1/2'], to: 'M1' },
    { id: 'M1', kind: 'magnet', gap: '1 cm', axis: { roll: '0 deg' }, length: '5 cm', ports: { '+1/2': 'D1', '-1/2': 'stop' } },
    { id: 'D1', kind: 'detector', gap: '20 cm', efficiency: 1, background: '0 /s', dwell: '1 s' },
  ],
};

describe('element kind registries', () => {
  it('every ElementKind has a reader module and an engine step, and nothing else is registered', () => {
    const kinds = [...KIND_NAMES].sort();
    expect(Object.keys(STEPS).sort()).toEqual(kinds);
    const used = new Set(EVERY_KIND.elements.map((e) => e.kind));
    expect([...used].sort()).toEqual(kinds);
    for (const k of KIND_NAMES) {
      const mod = KINDS[k];
      expect(mod.kind, k).toBe(k);
      expect(['ports', 'to', 'none'], k).toContain(mod.output);
      expect(typeof mod.read, k).toBe('function');
      expect(typeof mod.length, k).toBe('function');
      expect(typeof STEPS[k].run, k).toBe('function');
    }
  });

  it('the routing rule follows each kind module\'s output, for a normalized element and its document alike', () => {
    const l = line(EVERY_KIND);
    for (const [i, e] of l.elements.entries()) {
      const doc = EVERY_KIND.elements[i] as { kind: ElementKind; to?: string; ports?: Record<string, string> };
      const outs = outputsOf(e);
      expect(outputsOf(doc)).toEqual(outs);
      const mode = KINDS[e.kind].output;
      if (mode === 'none') expect(outs).toEqual([]);
      else if (mode === 'to') expect(outs).toEqual([{ port: null, target: doc.to }]);
      else expect(outs).toEqual(Object.entries(doc.ports!).map(([port, t]) => ({ port, target: t })));
    }
  });

  it('an element\'s length is where the run places its exit, for every kind', () => {
    for (const doc of [EVERY_KIND, completedBeamKeys(), JSON.parse(DESIGN_V1) as Record<string, unknown>]) {
      const l = line(doc);
      const r = runLine(l);
      for (const e of l.elements) {
        const p = r.positions![e.id];
        expect(p, e.id).toBeDefined();
        expect(p.exit - p.entrance, e.id).toBeCloseTo(lengthOf(e), 15);
      }
    }
    const l = line(EVERY_KIND);
    const want: Record<string, number> = { S1: 0, R1: 0, F1: 0.03, T1: 0.04, RF1: 0.02, C1: 0, M1: 0.05, D1: 0 };
    for (const e of l.elements) expect(lengthOf(e), e.id).toBe(want[e.id]);
  });
});

/** A kind this file defines: a pipe of a given length, a drift in the line's ambient field and nothing else. */
interface Pipe { id: string; kind: 'pipe'; gap: number; path: string; length: number; to: string }

/** The pipe's key table: its length (a quantity ≥ 0) and its one output; the reader, the writer's order, the inspector's fields and the sheet's rows come from it. */
const pipe: KindModule<Element> = defineKind<Element>({
  kind: 'pipe' as ElementKind,
  idPrefix: 'P',
  table: [
    { key: 'length', shape: { type: 'quantity', dim: 'length', nonNegative: true, fallback: 0.1, what: 'the length' }, label: 'pipe length',
      defaultText: '10 cm', sheetDefault: true },
    { key: 'to', shape: { type: 'target', what: 'a pipe' }, label: 'output' },
  ],
  length: (e) => (e as unknown as Pipe).length,
  defaults: () => ({ length: '10 cm' }),
});
const pipeStep: Step = { run: (ctx, e, s) => drift(ctx, s, (e as unknown as Pipe).length) };

describe('a kind defined by a key table in a test fixture flows through reading, running, writing, the inspector and the sheet', () => {
  const kinds = KINDS as Record<string, KindModule<Element>>;
  const steps = STEPS as unknown as Record<string, Step>;
  beforeAll(() => {
    kinds.pipe = pipe;
    steps.pipe = pipeStep;
  });
  afterAll(() => {
    delete kinds.pipe;
    delete steps.pipe;
  });

  const withPipe = (ambient: string) => `{
  "format": "spinyard.beamline", "version": 1, "title": "a pipe",
  "species": { "spin": "1/2", "g": 2.00231930436, "mass": "106.905 u" },
  "ambient": { "x": "${ambient}", "y": "0 T", "z": "0 T" },
  "oven": { "state": { "kind": "pure", "axis": { "roll": "0 deg" }, "m": "+1/2" }, "flux": "1e9 /s",
            "velocity": { "kind": "fixed", "speed": "600 m/s" }, "to": "P1" },
  "elements": [
    { "to": "M1", "length": "25 cm", "kind": "pipe", "id": "P1", "gap": "5 cm" },
    { "id": "M1", "kind": "magnet", "gap": "0 m", "axis": { "roll": "0 deg" }, "ports": { "+1/2": "D1", "-1/2": "D2" } },
    { "id": "D1", "kind": "detector", "efficiency": 1, "background": "0 /s", "dwell": "1 s" },
    { "id": "D2", "kind": "detector", "efficiency": 1, "background": "0 /s", "dwell": "1 s" }
  ] }`;

  it('reads it with its keys, refuses a bad value naming the key, and writes its keys in the module\'s order', () => {
    const r = parseBeamlineText(withPipe('0 T'));
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const p = r.line.elements[0] as unknown as Pipe;
    expect(p).toMatchObject({ kind: 'pipe', length: 0.25, gap: 0.05, to: 'M1' });
    const bad = parseBeamlineText(withPipe('0 T').replace('"25 cm"', '"-1 cm"'));
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.problems.map((x) => x.path)).toContain('elements[0].length');
    const written = serializeDoc(JSON.parse(withPipe('0 T')) as Record<string, unknown>);
    const at = written.indexOf('"id": "P1"');
    const el = written.slice(written.lastIndexOf('{', at), written.indexOf('}', at) + 1);
    expect(el).toContain('"pipe"');
    expect(el.indexOf('"id"')).toBeLessThan(el.indexOf('"kind"'));
    expect(el.indexOf('"kind"')).toBeLessThan(el.indexOf('"gap"'));
    expect(el.indexOf('"gap"')).toBeLessThan(el.indexOf('"length"'));
    expect(el.indexOf('"length"')).toBeLessThan(el.indexOf('"to"'));
    const again = parseBeamlineText(written);
    expect(again.ok && again.line.elements[0]).toEqual(r.line.elements[0]);
  });

  it('runs it: placed by its length, and the drift over it in the ambient field precesses the spin (cos² of the Larmor angle)', () => {
    const still = parseBeamlineText(withPipe('0 T'));
    if (!still.ok) throw new Error('not read');
    const r0 = runLine(still.line);
    expect(r0.positions!.P1.entrance).toBe(0.05);
    expect(r0.positions!.P1.exit).toBeCloseTo(0.3, 15);
    expect(r0.positions!.M1.entrance).toBeCloseTo(0.3, 15);
    expect(r0.detectors.find((d) => d.id === 'D1')!.yield).toBeCloseTo(1, 14);
    // a field along x turns the spin about x by ω t, ω = g μB B/ħ, t = (gap + length)/v: P(+z) = cos²(ω t / 2)
    // (Larmor precession, a standard result: Sakurai, Modern Quantum Mechanics, §2.1)
    const b = 1e-7;
    const moved = parseBeamlineText(withPipe(`${b} T`));
    if (!moved.ok) throw new Error('not read');
    const r1 = runLine(moved.line);
    const MU_B = 9.2740100783e-24, HBAR = 6.62607015e-34 / (2 * Math.PI); // CODATA 2018 μB; h exact in the SI
    const omega = (2.00231930436 * MU_B * b) / HBAR;
    const t = 0.3 / 600;
    expect(r1.detectors.find((d) => d.id === 'D1')!.yield).toBeCloseTo(Math.cos((omega * t) / 2) ** 2, 9);
  });
  it('leaves its length out: the table\'s default is read, placed and printed on the sheet as the value the run used', () => {
    const text = withPipe('0 T').replace('"length": "25 cm", ', '');
    const r = parseBeamlineText(text);
    if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
    expect((r.line.elements[0] as unknown as Pipe).length).toBe(0.1);
    const run = runLine(r.line);
    expect(run.positions!.P1.exit).toBeCloseTo(0.15, 15);
    const sheet = buildSheet(r.doc, r.line, run);
    const p1 = sheet.elements.find((e) => e.id === 'P1')!;
    expect(p1.setPoints).toEqual([{ name: 'gap', value: '5 cm' }, { name: 'length', value: '100 mm', default: true }]);
  });

  it('gives the inspector its fields from its table (the gap, then the length with its default shown) and the sheet its rows as written', () => {
    const el = { to: 'M1', length: '25 cm', kind: 'pipe', id: 'P1', gap: '5 cm' };
    expect(elementFields(el, false)).toEqual([
      { type: 'quantity', key: 'gap', label: 'gap before', dim: 'length', optional: true, placeholder: '0 m' },
      { type: 'quantity', key: 'length', label: 'pipe length', dim: 'length', optional: true, placeholder: '10 cm' },
    ]);
    const r = parseBeamlineText(withPipe('0 T'));
    if (!r.ok) throw new Error('not read');
    const sheet = buildSheet(r.doc, r.line, runLine(r.line));
    const p1 = sheet.elements.find((e) => e.id === 'P1')!;
    expect(p1.kind).toBe('pipe');
    expect(p1.setPoints).toEqual([{ name: 'gap', value: '5 cm' }, { name: 'length', value: '25 cm' }]);
    expect(p1.routes).toEqual([{ port: '', target: 'M1' }]);
    expect(p1.entranceCm).toBeCloseTo(5, 12);
    expect(p1.exitCm).toBeCloseTo(30, 12);
  });

  it('is inserted by the editor with its module\'s id prefix and defaults, and the result reads', () => {
    const r = parseBeamlineText(withPipe('0 T'));
    if (!r.ok) throw new Error('not read');
    const added = addElementOnPort(r.doc, 'P1', null, 'pipe' as ElementKind);
    expect(added.ok).toBe(true);
    if (!added.ok) return;
    const el = added.doc.elements.find((e) => e.id === 'P2') as Record<string, unknown> | undefined;
    expect(el).toMatchObject({ kind: 'pipe', to: 'M1' });
    expect(validateBeamline(added.doc).ok).toBe(true);
  });
});
