import { describe, expect, it } from 'vitest';
import { detectorValues, refusedPoints, scanCurves, scanMaps } from '../../src/app/plan-view.ts';
import type { ScanResult } from '../../src/app/core-adapter.ts';

const deg = Math.PI / 180;
const det = (y: number) => [{ id: 'D1', yield: y, rate: y * 10, signal: y * 9, counts: y * 90, sigma: Math.sqrt(y * 90) }];
const theme = { font: { color: '#000' }, xaxis: {}, yaxis: {}, margin: { l: 1, r: 1, t: 1, b: 1 } };

function oneD(): ScanResult {
  return {
    format: 'spinyard.scan', version: 1, title: 't', detectors: ['D1'], warnings: [],
    parameters: [{ name: 'M2.axis.roll', path: 'elements[1].axis.roll', dimension: 'angle', unit: 'deg', factor: deg, spacing: 'linear', present: 30 * deg, values: [0, 45 * deg, 90 * deg] }],
    points: [
      { index: [0], values: [0], detectors: det(0.5) },
      { index: [1], values: [45 * deg], error: 'M2.axis.roll (refused here)' },
      { index: [2], values: [90 * deg], detectors: det(0.25) },
    ],
  };
}

describe('the scan panel figures', () => {
  it('draws a refused point as a gap (null, never NaN or 0) with its reason on hover, in the shown unit', () => {
    const r = oneD();
    expect(detectorValues(r, 'D1', 'yield').y).toEqual([0.5, null, 0.25]);
    expect(detectorValues(r, 'D1', 'counts').sigma).toEqual([Math.sqrt(45), null, Math.sqrt(22.5)]);
    expect(refusedPoints(r)).toEqual([{ index: [1], values: [45 * deg], reason: 'M2.axis.roll (refused here)' }]);
    const f = scanCurves(r, 'yield', theme);
    const [curve, refused] = f.data as { x: number[]; y: unknown[]; text?: string[]; connectgaps?: boolean }[];
    expect(curve.x).toEqual([0, 45, 90]);
    expect(curve.y).toEqual([0.5, null, 0.25]);
    expect(curve.connectgaps).toBe(false);
    expect(refused.x).toEqual([45]);
    expect(refused.text).toEqual(['M2.axis.roll (refused here)']);
    expect(JSON.stringify(f)).not.toMatch(/NaN/);
    const shapes = f.layout.shapes as { x0: number }[];
    expect(shapes[0].x0).toBe(30);
  });

  it('maps a grid of two, the first parameter up, with gaps and the set-point marked', () => {
    const r: ScanResult = {
      ...oneD(),
      parameters: [
        { name: 'oven.flux', path: 'oven.flux', dimension: 'rate', unit: '/s', factor: 1, spacing: 'log', present: 2e9, values: [1e9, 4e9] },
        { name: 'D1.efficiency', path: 'elements[3].efficiency', dimension: 'dimensionless', unit: '', factor: 1, spacing: 'linear', present: 0.9, values: [0.5, 1.5] },
      ],
      points: [
        { index: [0, 0], values: [1e9, 0.5], detectors: det(0.1) },
        { index: [0, 1], values: [1e9, 1.5], error: 'efficiency above 1' },
        { index: [1, 0], values: [4e9, 0.5], detectors: det(0.4) },
        { index: [1, 1], values: [4e9, 1.5], error: 'efficiency above 1' },
      ],
    };
    const [m] = scanMaps(r, 'yield', theme, false);
    const [heat, mark] = m.figure.data as { z?: unknown[][]; text?: string[][]; x: number[]; y: number[] }[];
    expect(heat.z).toEqual([[0.1, null], [0.4, null]]);
    expect(heat.text![0][1]).toBe('not evaluated: efficiency above 1');
    expect(heat.y).toEqual([1e9, 4e9]);
    expect(mark.x).toEqual([0.9]);
    expect(mark.y).toEqual([2e9]);
    expect((m.figure.layout.yaxis as { type: string }).type).toBe('log');
  });
});

describe('the scan panel axes', () => {
  it('write numbers with SI prefixes ("6G", never plotly\'s "6B"), as every chart of the app', () => {
    for (const q of ['yield', 'counts'] as const) {
      const f = scanCurves(oneD(), q, theme);
      const x = f.layout.xaxis as Record<string, unknown>;
      const y = f.layout.yaxis as Record<string, unknown>;
      expect(x.exponentformat).toBe('SI');
      expect(y.exponentformat).toBe('SI');
      expect(String((y.title as { text: string }).text)).toMatch(/\(.+\)/);
    }
  });
});
