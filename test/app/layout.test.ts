import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import {
  axisDial, beamTrace, centreLineAt, labelTiers, leafRoute, packSlots, placeElements, placeInOrder, scaleBar, schematicRows,
  transverseExaggeration, maxTransverse, lengthLabel,
} from '../../src/app/layout.ts';
import { parseBeamlineText, validateBeamline } from '../../src/beamline/index.ts';
import { runLine } from '../../src/engine/run.ts';
import { convergedGeometry, type FinePath } from '../../src/engine/subbeam.ts';
import { leafCentreAt } from '../../src/engine/centre-line.ts';
import { buildSheet } from '../../src/sheet/index.ts';
import { branchLayout } from '../../src/sheet/layout-rule.ts';
import type { Beamline } from '../../src/beamline/types.ts';

// A normalized line written by hand (SI): oven → S1 (30 cm) → M1 (5 cm gap, 10 cm long) → ports → D1 (40 cm) / stop.
const axis = { x: 0, y: 0, z: 1, text: 'roll 0°' };
const line = {
  title: 'layout check', species: { kind: 'bare', j2: 1, g: 2, massKg: 1.8e-25 }, ambient: { x: 0, y: 0, z: 0 },
  oven: { state: { kind: 'unpolarized' }, flux: { kind: 'given', value: 1e9 }, velocity: { kind: 'fixed', speed: 600 }, to: 'S1', path: 'oven' },
  elements: [
    { id: 'S1', kind: 'slit', gap: 0.3, path: 'elements[0]', width: 1e-4, height: 3e-3, x: 0, z: 0, to: 'M1' },
    { id: 'M1', kind: 'magnet', gap: 0.05, path: 'elements[1]', axis, length: 0.1, gradient: 1000, aperture: { width: 2e-3, height: 1e-3, x: 0, z: 0 },
      ports: { '+1/2': 'M2', '-1/2': 'stop' } },
    { id: 'M2', kind: 'magnet', gap: 0.02, path: 'elements[2]', axis, length: 0.1, ports: { '+1/2': 'D1', '-1/2': 'D1' } },
    { id: 'D1', kind: 'detector', gap: 0.4, path: 'elements[3]', efficiency: 1, background: 0, dwell: 1,
      window: { width: 3e-4, height: 4e-3, x: 1.1e-3, z: 0 } },
  ],
} as unknown as Beamline;

describe('placeElements', () => {
  it('adds gaps and lengths from the oven aperture', () => {
    const { placed, end } = placeElements(line);
    expect(placed.get('S1')).toMatchObject({ y0: 0.3, y1: 0.3 });
    expect(placed.get('M1')!.y0).toBeCloseTo(0.35, 12);
    expect(placed.get('M1')!.y1).toBeCloseTo(0.45, 12);
    expect(placed.get('M2')!.y0).toBeCloseTo(0.47, 12);
    expect(placed.get('D1')!.y0).toBeCloseTo(0.97, 12);
    expect(end).toBeCloseTo(0.97, 12);
  });
});

describe('leafRoute and beamTrace', () => {
  it('follows the ports named in a leaf path', () => {
    expect(leafRoute(line, ['M1:+1/2', 'M2:-1/2'])).toEqual(['S1', 'M1', 'M2', 'D1']);
    expect(leafRoute(line, ['M1:-1/2'])).toEqual(['S1', 'M1']);
  });

  it('draws a sub-beam along the engine\'s centre line, with a vertex at every element of its route', () => {
    const { placed } = placeElements(line);
    // a centre line as the engine gives it: the orifice, the slit, the magnet's entrance, inside, exit, the plane
    const centreLine = [
      { y: 0, x: 0, z: 0 }, { y: 0.3, x: 0, z: 0 }, { y: 0.35, x: 0, z: 0 }, { y: 0.4, x: 0, z: 1e-5 },
      { y: 0.45, x: 0, z: 4e-5 }, { y: 0.97, x: 0, z: 2.5e-4 },
    ];
    const t = beamTrace(line, placed, { path: ['M1:+1/2', 'M2:+1/2'], target: 'D1', plane: 0.97, centreLine });
    expect(t.fromEngine).toBe(true);
    expect(t.route).toEqual(['S1', 'M1', 'M2', 'D1']);
    // every entrance and exit is a vertex, with the centre line's value there (straight between its points)
    for (const id of t.route) {
      const p = placed.get(id)!;
      for (const y of [p.y0, p.y1]) {
        const i = t.points.findIndex((q) => Math.abs(q.y - y) < 1e-12);
        expect(i).toBeGreaterThanOrEqual(0);
        expect(t.points[i].z).toBeCloseTo(centreLineAt(centreLine, y).z, 15);
      }
    }
    // M2 (0.47–0.57 m): on the straight part after M1's exit
    const m2 = t.points.find((q) => Math.abs(q.y - 0.47) < 1e-12)!;
    expect(m2.z).toBeCloseTo(4e-5 + ((0.47 - 0.45) / (0.97 - 0.45)) * (2.5e-4 - 4e-5), 15);
    expect(t.points[t.points.length - 1]).toEqual({ y: 0.97, x: 0, z: 2.5e-4 });
    // at each change of element the boundary appears once with each, and y never decreases
    expect(t.at.length).toBe(t.points.length);
    for (let i = 1; i < t.points.length; i++) expect(t.points[i].y).toBeGreaterThanOrEqual(t.points[i - 1].y);
    const s = beamTrace(line, placed, { path: ['M1:-1/2'], target: 'stop' });
    expect(s.endsInStop).toBe(true);
    expect(s.fromEngine).toBe(false);
    expect(s.points.every((q) => q.x === 0 && q.z === 0)).toBe(true);
    expect(s.points[s.points.length - 1].y).toBeCloseTo(0.45, 12);
  });
});

describe('the drawn centre lines against the engine, at every element of every sample', () => {
  const dir = resolve(import.meta.dirname, '..', '..', 'samples');
  const names = readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort();
  it.each(names)('%s', (name) => {
    const parsed = parseBeamlineText(readFileSync(join(dir, name), 'utf8'));
    if (!parsed.ok) throw new Error(parsed.problems.map((p) => p.message).join('\n'));
    let paths: readonly FinePath[] = [];
    const r = runLine(parsed.line, { onPaths: (p) => { paths = p; } });
    const { placed, end } = placeElements(parsed.line);
    let compared = 0;
    for (const leaf of r.leaves) {
      const t = beamTrace(parsed.line, placed, leaf, end > 0);
      if (!leaf.centreLine) {
        expect(t.fromEngine).toBe(false);
        continue;
      }
      // the engine's own model of this leaf, evaluated directly at each element (not through its sampled points)
      const mine = paths.filter((f) => f.path.join('|') === leaf.path.join('|') && f.target === leaf.target);
      const geos = mine.map((f) => convergedGeometry(f).geo);
      const y = geos.reduce((s, g) => s + g.yieldGeo, 0);
      const w = y > 0 ? y : 1;
      const scale = Math.max(...leaf.centreLine.map((p) => Math.hypot(p.x, p.z)), leaf.spread!.x, leaf.spread!.z);
      for (const id of t.route) {
        const p = placed.get(id)!;
        for (const yy of [p.y0, p.y1]) {
          if (yy > leaf.plane! + 1e-12) continue;
          const i = t.points.findIndex((q) => Math.abs(q.y - yy) < 1e-12);
          expect(i, `${name}: ${leaf.path.join(' ')} → ${leaf.target} has a vertex at ${id}`).toBeGreaterThanOrEqual(0);
          const want = leafCentreAt(geos, w, yy);
          expect(Math.abs(t.points[i].x - want.x)).toBeLessThanOrEqual(1e-9 * scale);
          expect(Math.abs(t.points[i].z - want.z)).toBeLessThanOrEqual(1e-9 * scale);
          compared++;
        }
      }
      const last = t.points[t.points.length - 1];
      expect(Math.abs(last.x - leaf.displacement!.x)).toBeLessThanOrEqual(1e-12 * scale);
      expect(Math.abs(last.z - leaf.displacement!.z)).toBeLessThanOrEqual(1e-12 * scale);
    }
    if (r.leaves.some((l) => l.centreLine)) expect(compared).toBeGreaterThan(0);
  });
});

describe('a line whose M1 rolls 0° and M2 rolls 90°', () => {
  it('splits in z from M1 on and in x only from M2 on', () => {
    const r = validateBeamline({
      format: 'spinyard.beamline', version: 1, title: 'roll check',
      species: { spin: '1/2', g: 2.0023, mass: '106.905 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, aperture: { width: '0.1 mm', height: '0.1 mm' }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', gap: '20 cm', axis: { roll: '0 deg' }, gradient: '200 T/m', length: '5 cm', ports: { '+1/2': 'M2', '-1/2': 'M2' } },
        { id: 'M2', kind: 'magnet', gap: '20 cm', axis: { roll: '90 deg' }, gradient: '200 T/m', length: '5 cm', ports: { '+1/2': 'D1', '-1/2': 'D2' } },
        { id: 'D1', kind: 'detector', gap: '30 cm' }, { id: 'D2', kind: 'detector', gap: '30 cm' },
      ],
    });
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    const res = runLine(r.line);
    const { placed } = placeElements(r.line);
    const m1 = placed.get('M1')!, m2 = placed.get('M2')!;
    expect(res.leaves).toHaveLength(4);
    for (const leaf of res.leaves) {
      const t = beamTrace(r.line, placed, leaf);
      expect(t.fromEngine).toBe(true);
      for (const p of t.points) {
        if (p.y <= m2.y0 + 1e-12) expect(Math.abs(p.x)).toBeLessThan(1e-15);
        if (p.y <= m1.y0 + 1e-12) expect(Math.abs(p.z)).toBeLessThan(1e-15);
      }
      const last = t.points[t.points.length - 1];
      expect(Math.abs(last.x)).toBeGreaterThan(1e-5);
      expect(Math.abs(last.z)).toBeGreaterThan(1e-5);
    }
  });
});

describe('branch rows of the schematic: the setup sheet\'s rule', () => {
  const sample = (name: string) => {
    const p = parseBeamlineText(readFileSync(resolve(import.meta.dirname, '..', '..', 'samples', name), 'utf8'));
    if (!p.ok) throw new Error(name);
    return p.line;
  };
  it('bench K: T1 and T2 on rows of their own, MS and its detectors on T2\'s row', () => {
    const l = sample('bench-k-field-twist-passage.spinyard');
    const { rowOf, marks } = schematicRows(l, placeElements(l).placed);
    expect(rowOf.get('T1')).toBe(rowOf.get('MA'));
    expect(rowOf.get('T2')).not.toBe(rowOf.get('T1'));
    for (const id of ['MS', 'DS0', 'DS1', 'DS2']) expect(rowOf.get(id)).toBe(rowOf.get('T2'));
    expect(marks.find((m) => m.ids.includes('DA0'))!.ids.sort()).toEqual(['DA0', 'DA1', 'DA2']);
  });
  it('every sample with distances: the same rows as its setup sheet\'s side view', () => {
    const dir = resolve(import.meta.dirname, '..', '..', 'samples');
    let lines = 0;
    for (const name of readdirSync(dir).filter((n) => n.endsWith('.spinyard'))) {
      const p = parseBeamlineText(readFileSync(join(dir, name), 'utf8'));
      if (!p.ok) throw new Error(name);
      const { placed, end } = placeElements(p.line);
      if (!(end > 0)) continue;
      const m = buildSheet(p.doc, p.line, runLine(p.line));
      const sheet = branchLayout(m.elements.map((el) => ({ id: el.id, kind: el.kind, entrance: el.entranceCm ?? 0, length: el.lengthCm ?? 0, routes: el.routes })), m.oven.to, 1e-6);
      const app = schematicRows(p.line, placed);
      expect(Object.fromEntries(app.rowOf), name).toEqual(Object.fromEntries(sheet.rowOf));
      expect(app.marks.map((mk) => mk.ids), name).toEqual(sheet.marks.map((mk) => mk.ids));
      lines++;
    }
    expect(lines).toBeGreaterThanOrEqual(4);
  });
  it('bench C (no distances, drawn in routing order): D1 and M3 on different rows', () => {
    const l = sample('bench-c-roll-calibration.spinyard');
    const { rowOf } = schematicRows(l, placeInOrder(l).placed);
    expect(rowOf.get('D1')).not.toBe(rowOf.get('M3'));
    expect(rowOf.get('D2')).toBe(rowOf.get('M3'));
  });
});

describe('packSlots, labelTiers and the axis dial', () => {
  it('moves overlapping intervals apart about their mean and leaves separate ones alone', () => {
    expect(packSlots([{ centre: 0, half: 5 }, { centre: 40, half: 5 }], 2)).toEqual([0, 0]);
    const off = packSlots([{ centre: 0, half: 5 }, { centre: 0, half: 5 }, { centre: 0, half: 5 }], 2);
    const placedAt = off.map((o) => o);
    expect(placedAt[1] - placedAt[0]).toBeCloseTo(12, 12);
    expect(placedAt[2] - placedAt[1]).toBeCloseTo(12, 12);
    expect(placedAt.reduce((s, v) => s + v, 0)).toBeCloseTo(0, 12);
    // a chain that grows into its neighbour merges with it
    const c = [{ centre: 0, half: 5 }, { centre: 3, half: 5 }, { centre: 14, half: 5 }];
    const o = packSlots(c, 2);
    const at = c.map((x, i) => x.centre + o[i]);
    expect(at[1] - at[0]).toBeGreaterThanOrEqual(12 - 1e-9);
    expect(at[2] - at[1]).toBeGreaterThanOrEqual(12 - 1e-9);
  });
  it('puts a label that would touch the one before it into the next tier', () => {
    expect(labelTiers([{ left: 0, width: 30 }, { left: 20, width: 30 }, { left: 60, width: 10 }, { left: 25, width: 10 }], 4)).toEqual([0, 1, 0, 2]);
  });
  it('shows the roll of a transverse axis and the tilt of an oblique one (bench B\'s M2: θ 60°, φ 90°)', () => {
    expect(axisDial({ x: Math.sin(Math.PI / 6), y: 0, z: Math.cos(Math.PI / 6) })).toMatchObject({ tilt: 0 });
    expect(axisDial({ x: Math.sin(Math.PI / 6), y: 0, z: Math.cos(Math.PI / 6) }).roll).toBeCloseTo(30, 12);
    const th = Math.PI / 3, ph = Math.PI / 2;
    const d = axisDial({ x: Math.sin(th) * Math.cos(ph), y: Math.sin(th) * Math.sin(ph), z: Math.cos(th) });
    expect(d.roll).toBeCloseTo(0, 9);
    expect(d.across).toBeCloseTo(0.5, 12);
    expect(d.tilt).toBeCloseTo(60, 9);
  });
});

describe('scale bar and transverse scale', () => {
  it('picks a 1-2-5 length not above a fifth of the span', () => {
    expect(scaleBar(1)).toEqual({ length: 0.2, label: '20 cm' });
    expect(scaleBar(0.97).label).toBe('10 cm');
    expect(scaleBar(3).label).toBe('50 cm');
    expect(lengthLabel(0.005)).toBe('5 mm');
    expect(lengthLabel(2)).toBe('2 m');
  });

  it('magnifies the transverse scale by a round factor so the largest extent fits', () => {
    expect(maxTransverse(line, [{ x: 0, z: -3e-3 }])).toBeCloseTo(3e-3, 12);
    // 3 mm at 900 px/m is 2.7 px; 60 px half height needs ×22.2 → ×20
    expect(transverseExaggeration(3e-3, 60, 900)).toBe(20);
    expect(transverseExaggeration(1, 60, 900)).toBe(1);
  });
});

describe('placeInOrder', () => {
  it('spaces an idealised line (no distances) in routing order', () => {
    const ideal = { ...line, elements: line.elements.map((e) => ({ ...e, gap: 0, length: 0 })) } as unknown as Beamline;
    expect(placeElements(ideal).end).toBe(0);
    const { placed } = placeInOrder(ideal);
    const ys = ['S1', 'M1', 'M2', 'D1'].map((id) => placed.get(id)!.y0);
    expect([...ys].sort((a, b) => a - b)).toEqual(ys);
    expect(new Set(ys).size).toBe(4);
    expect(placed.get('M1')!.y1 - placed.get('M1')!.y0).toBeCloseTo(0.4, 12);
  });
});
