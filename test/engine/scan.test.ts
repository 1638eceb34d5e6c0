/** Scans over a compiled line (src/engine/scan.ts): values, order, results per point, refused points, CSV. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { axisValues, compile, evaluate, scan, scanCsv, type Plan } from '../../src/engine/index.ts';

function plan(name: string): Plan {
  const c = compile(readFileSync(new URL(`../../samples/${name}`, import.meta.url), 'utf8'));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}
const deg = Math.PI / 180;

describe('axisValues', () => {
  it('spaces linearly with both ends exact, or by equal ratios', () => {
    expect(axisValues({ name: 'x', from: 0, to: 1, points: 5 })).toEqual([0, 0.25, 0.5, 0.75, 1]);
    const l = axisValues({ name: 'x', from: 1e-3, to: 1e1, points: 5, spacing: 'log' });
    expect(l[0]).toBe(1e-3);
    expect(l[4]).toBe(10);
    for (let i = 1; i < 5; i++) expect(l[i] / l[i - 1]).toBeCloseTo(10, 12);
    expect(axisValues({ name: 'x', from: 2, to: 3, points: 1 })).toEqual([2]);
  });

  it('refuses what cannot be spaced, naming the parameter', () => {
    expect(() => axisValues({ name: 'M2.axis.roll', from: 0, to: 1, points: 0 })).toThrow(/M2\.axis\.roll.*whole number/);
    expect(() => axisValues({ name: 'F1.field.x', from: -1, to: 1, points: 3, spacing: 'log' })).toThrow(/F1\.field\.x.*one sign/);
  });
});

describe('scan', () => {
  it('bench C: D1 follows ½·cos²(α/2) of the analyser roll α at every point (Born rule for spin ½, common practice)', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const r = scan(p, [{ name: 'M2.axis.roll', from: 0, to: Math.PI, points: 37 }]);
    expect(r.format).toBe('spinyard.scan');
    expect(r.parameters[0]).toMatchObject({ name: 'M2.axis.roll', unit: 'deg', present: 30 * deg });
    expect(r.points).toHaveLength(37);
    for (const pt of r.points) {
      const a = pt.values[0];
      const d1 = pt.detectors!.find((d) => d.id === 'D1')!;
      expect(d1.yield).toBeCloseTo(0.5 * Math.cos(a / 2) ** 2, 12);
      // counts for the dwell and the Poisson σ, background included (10 s, 5 /s, efficiency 0.9, 2e9 /s)
      expect(d1.counts).toBeCloseTo((2e9 * 0.9 * d1.yield + 5) * 10, 0);
      expect(d1.sigma).toBeCloseTo(Math.sqrt(d1.counts), 6);
    }
  });

  it('gives each point the numbers of an evaluation at that point, bit for bit', () => {
    const p = plan('bench-h-rb87-mj-then-eigenstate.spinyard');
    const r = scan(p, [{ name: 'M1.axis.roll', from: 0, to: 60 * deg, points: 4 }]);
    for (const pt of r.points) {
      const one = evaluate(p, { 'M1.axis.roll': pt.values[0] }, { light: true });
      expect(pt.detectors!.map((d) => d.yield)).toEqual(one.detectors.map((d) => d.yield));
      expect(pt.leaves!.map((l) => l.rate)).toEqual(one.leaves.map((l) => l.rate));
    }
  });

  it('runs a grid of two parameters with the first outer, and marks the present set-points', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const r = scan(p, [{ name: 'M2.axis.roll', from: 0, to: Math.PI / 2, points: 3 }, { name: 'oven.flux', from: 1e9, to: 4e9, points: 2 }]);
    expect(r.points.map((q) => q.index)).toEqual([[0, 0], [0, 1], [1, 0], [1, 1], [2, 0], [2, 1]]);
    expect(r.parameters.map((q) => q.present)).toEqual([30 * deg, 2e9]);
    // signal scales with the flux, the yield does not
    const [a, b] = [r.points[2], r.points[3]].map((q) => q.detectors!.find((d) => d.id === 'D1')!);
    expect(b.yield).toBe(a.yield);
    expect(b.signal / a.signal).toBeCloseTo(4, 12);
  });

  it('keeps a point the reader refuses without numbers and says why; the others are computed', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const r = scan(p, [{ name: 'D1.efficiency', from: 0.5, to: 1.5, points: 3 }]);
    expect(r.points[0].detectors).toBeDefined();
    expect(r.points[1].detectors).toBeDefined();
    expect(r.points[2].detectors).toBeUndefined();
    expect(r.points[2].error).toMatch(/D1\.efficiency.*\[0, 1\].*1\.5/);
    expect(JSON.stringify(r)).not.toMatch(/NaN|null/);
  });

  it('refuses an unknown parameter, the same parameter twice, and too many points', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    expect(() => scan(p, [{ name: 'M9.axis.roll', from: 0, to: 1, points: 2 }])).toThrow(/no parameter "M9.axis.roll"/);
    expect(() => scan(p, [{ name: 'M2.axis.roll', from: 0, to: 1, points: 2 }, { name: 'elements[1].axis.roll', from: 0, to: 1, points: 2 }])).toThrow(/given twice/);
    expect(() => scan(p, [{ name: 'M2.axis.roll', from: 0, to: 1, points: 2000 }, { name: 'oven.flux', from: 1, to: 2, points: 2000 }])).toThrow(/more than/);
  });

  it('stops when cancelled', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    let n = 0;
    expect(() => scan(p, [{ name: 'M2.axis.roll', from: 0, to: 1, points: 50 }], { isCancelled: () => ++n > 3 })).toThrow(/cancelled/);
  });
});

describe('scanCsv', () => {
  it('writes one row per point with units in the header, values in the shown unit, no binary round-off', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const csv = scanCsv(scan(p, [{ name: 'M2.axis.roll', from: 0, to: Math.PI / 2, points: 3 }]));
    const rows = csv.trimEnd().split('\r\n');
    expect(rows).toHaveLength(4);
    const head = rows[0].split(',');
    expect(head[0]).toBe('M2.axis.roll [deg]');
    expect(head).toContain('D1 yield');
    expect(head).toContain('D1 rate [/s]');
    expect(head.at(-1)).toBe('error');
    const col = (name: string) => rows.slice(1).map((r) => r.split(',')[head.indexOf(name)]);
    expect(col('M2.axis.roll [deg]')).toEqual(['0', '45', '90']);
    expect(col('D1 yield')).toEqual(['0.5', String(Number((0.5 * Math.cos(Math.PI / 8) ** 2).toPrecision(12))), '0.25']);
    expect(col('D3 yield')[1]).toBe('0.0625');
    // bench C's D2 and D3 at roll 0 are round-off (cos²(90°) of a binary π/2): 0, as in every table
    expect(col('D2 yield')[0]).toBe('0');
  });
});
