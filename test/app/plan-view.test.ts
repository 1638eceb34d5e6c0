import { describe, expect, it } from 'vitest';
import { budgetCells, detectorValues, refusedLines, refusedPoints, scanCurves, scanMaps, setPointColumn } from '../../src/app/plan-view.ts';
import type { BudgetResult, ScanResult } from '../../src/app/core-adapter.ts';

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

describe('the planning tables by the one number rule per column', () => {
  function budgetOf(): BudgetResult {
    return {
      format: 'spinyard.budget', version: 1, title: 't', quantity: 'signal', method: 'm', warnings: [],
      monteCarlo: { draws: 400, seed: 1, refused: 0 },
      tolerances: [
        { name: 'M2.axis.roll', path: 'elements[1].axis.roll', dimension: 'angle', unit: 'deg', factor: deg, value: 30 * deg, halfWidth: 0.5 * deg, distribution: 'uniform', sigma: 0.2887 * deg,
          method: 'central', sensitivities: [{ detector: 'D1', derivative: 1234.5678 / deg, error: 12.3 / deg }, { detector: 'D2', derivative: -4.4e6 / deg, error: 2.2e3 / deg }] },
      ],
      detectors: [
        { id: 'D1', nominal: 275000, linearSigma: 356.4, monteCarlo: { mean: 275612.3, sigma: 3600, q05: 270420, q95: 281600, draws: 4 } },
        { id: 'D2', nominal: 4.3412e7, linearSigma: 1.27e6 },
      ],
      ranking: [
        { detector: 'D2', tolerance: 'M2.axis.roll', effect: 1.27e6, relative: 0.02925, share: 1 },
        { detector: 'D1', tolerance: 'M2.axis.roll', effect: 356.4, relative: 0.001296, share: 1 },
        { detector: 'D1', tolerance: 'M1.field', effect: 0, relative: 0, share: 0 },
      ],
    } as unknown as BudgetResult;
  }

  it('gives each budget column one notation (never 275000 beside 4.34e7) and a derivative no finer than its error', () => {
    const c = budgetCells(budgetOf());
    expect(c.detectors.map((d) => d.nominal)).toEqual(['2.75e5', '4.341e7']);
    expect(c.detectors.map((d) => d.linear)).toEqual(['3.56e2', '1.27e6']);
    expect(c.detectors.map((d) => d.linearPercent)).toEqual(['0.13', '2.9']);
    // the Monte Carlo mean to the place of its standard error 3600/√4 = 1800 (4 figures alone would give 275600)
    expect(c.detectors[0]).toMatchObject({ mean: '276000', sigma: '3600', q05: '270400', q95: '281600' });
    expect(c.detectors[1].mean).toBeUndefined();
    // the pair that does not move a signal is left out; the rest in the result's order
    expect(c.ranking.map((x) => [x.detector, x.tolerance])).toEqual([['D2', 'M2.axis.roll'], ['D1', 'M2.axis.roll']]);
    // −4.4e6 ± 2.2e3 and 1234.5678 ± 12.3 (to the tens): the derivatives one column with exponents, each error in its derivative's notation
    expect(c.ranking.map((x) => `${x.derivative} ± ${x.error} ${x.per}`)).toEqual(['-4.4e6 ± 2.2e3 /s per deg', '1.23e3 ± 1.2e1 /s per deg']);
    expect(c.ranking.map((x) => x.effect)).toEqual(['1.27e6', '3.56e2']);
    // rows of another unit are their own column; an error below the derivative's round-off (an exact derivative) is 0
    const b = budgetOf();
    b.tolerances.push({ name: 'oven.flux', path: 'oven.flux', dimension: 'rate', unit: '', factor: 1, value: 2e9, halfWidth: 1e8, distribution: 'normal', sigma: 1e8,
      method: 'central', sensitivities: [{ detector: 'D1', derivative: 0.02813, error: 2.5e-17 }] } as unknown as BudgetResult['tolerances'][number]);
    b.ranking.unshift({ detector: 'D1', tolerance: 'oven.flux', effect: 2.8e6, relative: 0.05, share: 0.8 });
    const withFlux = budgetCells(b).ranking;
    expect(withFlux.map((x) => `${x.derivative} ± ${x.error} ${x.per}`)).toEqual(['0.02813 ± 0 /s', '-4.4e6 ± 2.2e3 /s per deg', '1.23e3 ± 1.2e1 /s per deg']);
    expect(c.ranking.map((x) => [x.relative, x.share])).toEqual([['2.9', '100'], ['0.13', '100']]);
  });

  it('writes set-points in their shown units as one column, a dash for a parameter the line lacks', () => {
    // an angle and a flux: each unit its own notation; two fluxes, one past 1e6: both with exponents
    expect(setPointColumn([{ value: 30 * deg, factor: deg, unit: 'deg' }, { value: 2e9, factor: 1, unit: '/s' }, undefined])).toEqual(['30', '2e9', '—']);
    expect(setPointColumn([{ value: 5e5, factor: 1, unit: '/s' }, { value: 2e9, factor: 1, unit: '/s' }, { value: 0.5, factor: 1, unit: 'T' }])).toEqual(['5e5', '2e9', '0.5']);
  });

  it('lists the refused points of a scan with each parameter as one column in its unit', () => {
    const r = oneD();
    r.points[2] = { index: [2], values: [90.123456789 * deg], error: 'no' };
    expect(refusedLines(r)).toEqual([{ text: 'M2.axis.roll = 45 deg', reason: 'M2.axis.roll (refused here)' }, { text: 'M2.axis.roll = 90.1235 deg', reason: 'no' }]);
    expect(refusedLines(r, 1)).toHaveLength(1);
  });
});
