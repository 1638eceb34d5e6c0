import { describe, it, expect } from 'vitest';
import { beamTrace, leafRoute, placeElements, placeInOrder, scaleBar, transverseExaggeration, maxTransverse, lengthLabel } from '../../src/app/layout.ts';
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

  it('draws a sub-beam on axis to its first magnet, then to the engine displacement at the detector plane', () => {
    const { placed } = placeElements(line);
    const t = beamTrace(line, placed, { path: ['M1:+1/2', 'M2:+1/2'], target: 'D1', displacement: { x: 0, z: 1.2e-3 } });
    expect(t.fromEngine).toBe(true);
    expect(t.points.map((p) => Number(p.y.toFixed(6)))).toEqual([0, 0.35, 0.97]);
    expect(t.points[2].z).toBe(1.2e-3);
    const s = beamTrace(line, placed, { path: ['M1:-1/2'], target: 'stop' });
    expect(s.endsInStop).toBe(true);
    expect(s.points[s.points.length - 1].y).toBeCloseTo(0.45, 12);
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
