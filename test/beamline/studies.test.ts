/** Stored scans and tolerances (src/beamline/studies.ts): read against the line's parameters, kept by edits. */
import { describe, expect, it } from 'vitest';
import { deleteElement, renameElement, serializeDoc } from '../../src/beamline/index.ts';
import type { BeamlineDoc } from '../../src/beamline/types.ts';
import { DESIGN_V1 } from './examples.ts';
import { check, lines, ok } from './helpers.ts';

const base = () => JSON.parse(DESIGN_V1) as BeamlineDoc & Record<string, unknown>;

describe('scans and tolerances in the document', () => {
  it('reads them in SI against the parameters of the line', () => {
    const d = base();
    d.scans = [{ title: 'analyser roll', parameters: [{ parameter: 'M2.axis.roll', from: '0 deg', to: '180 deg', points: 37 }] }];
    d.tolerances = [
      { parameter: 'M2.axis.roll', halfWidth: '0.5 deg' },
      { parameter: 'oven.flux', halfWidth: '2e8 /s', distribution: 'normal' },
    ];
    const l = ok(check(d)).line;
    expect(l.scans).toEqual([{ title: 'analyser roll', axes: [{ name: 'M2.axis.roll', path: 'elements[1].axis.roll', from: 0, to: Math.PI, points: 37, spacing: 'linear' }] }]);
    expect(l.tolerances).toEqual([
      { name: 'M2.axis.roll', path: 'elements[1].axis.roll', halfWidth: 0.5 * Math.PI / 180, distribution: 'uniform' },
      { name: 'oven.flux', path: 'oven.flux', halfWidth: 2e8, distribution: 'normal' },
    ]);
  });

  it('leaves a line without them as it was', () => {
    expect(ok(check(base())).line).not.toHaveProperty('scans');
    expect(ok(check(base())).line).not.toHaveProperty('tolerances');
  });

  it('names every problem with its path', () => {
    const d = base();
    d.scans = [{ parameters: [{ parameter: 'M2.axis.rol', from: '0 deg', to: '1 deg', points: 3 }] },
      { parameters: [{ parameter: 'M2.axis.roll', from: '0 mm', to: '1 deg', points: 0 }] },
      { parameters: [{ parameter: 'oven.flux', from: '0 /s', to: '1e9 /s', points: 3, spacing: 'log' }] }];
    d.tolerances = [{ parameter: 'M2.axis.roll', halfWidth: '-1 deg' }, { parameter: 'M2.axis.roll', halfWidth: '1 deg', distribution: 'gauss' as 'normal' },
      { parameter: 'D1.efficiency', halfWidth: 0.01 }, { parameter: 'D1.efficiency', halfWidth: 0.02 }];
    const msgs = lines(d);
    expect(msgs).toContainEqual(expect.stringMatching(/^scans\[0\]\.parameters\[0\]\.parameter: no parameter "M2\.axis\.rol" .*M2\.axis\.roll/));
    expect(msgs).toContainEqual(expect.stringMatching(/^scans\[1\]\.parameters\[0\]\.from: expected an angle.*M2\.axis\.roll is an angle/));
    expect(msgs).toContainEqual(expect.stringMatching(/^scans\[1\]\.parameters\[0\]\.points: the number of points is a whole number/));
    expect(msgs).toContainEqual(expect.stringMatching(/^scans\[2\]\.parameters\[0\]: a scan spaced by equal ratios/));
    expect(msgs).toContainEqual(expect.stringMatching(/^tolerances\[0\]\.halfWidth: the half-width must be positive/));
    expect(msgs).toContainEqual(expect.stringMatching(/^tolerances\[1\]\.distribution: expected one of "uniform", "normal"/));
    expect(msgs).toContainEqual(expect.stringMatching(/^tolerances\[3\]\.parameter: D1\.efficiency has a tolerance already/));
  });

  it('writes them back in place and follows a renamed or deleted element', () => {
    const d = base();
    d.tolerances = [{ parameter: 'M2.axis.roll', halfWidth: '0.5 deg' }, { parameter: 'D1.efficiency', halfWidth: 0.01 }];
    d.scans = [{ parameters: [{ parameter: 'M2.axis.roll', from: '0 deg', to: '90 deg', points: 3 }] }];
    const again = JSON.parse(serializeDoc(d));
    expect(again.tolerances).toEqual(d.tolerances);
    const r = renameElement(d, 'M2', 'MA');
    if (!r.ok) throw new Error(r.message);
    expect(r.doc.tolerances?.[0].parameter).toBe('MA.axis.roll');
    expect(r.doc.scans?.[0].parameters[0].parameter).toBe('MA.axis.roll');
    expect(ok(check(r.doc)).line.tolerances?.[0].name).toBe('MA.axis.roll');
    const del = deleteElement(r.doc, 'MA');
    if (!del.ok) throw new Error(del.message);
    expect(del.doc.tolerances?.map((t) => t.parameter)).toEqual(['D1.efficiency']);
    expect(del.doc.scans).toBeUndefined();
  });
});

describe('kept fits and simulations', () => {
  it('reads a fit (data, set-points with bounds in SI, state) and a simulation (atoms, seed, defaults)', () => {
    const d = base();
    d.fits = [{ title: 'roll', data: 'counts.csv', free: [{ parameter: 'M2.axis.roll', lower: '20 deg', upper: '40 deg' }, { parameter: 'oven.flux' }] },
      { data: 'pol.csv', state: true }];
    d.simulations = [{ atoms: 5000, seed: 3 }, {}];
    const l = ok(check(d)).line;
    expect(l.fits![0]).toEqual({ title: 'roll', data: 'counts.csv', state: false,
      free: [{ name: 'M2.axis.roll', path: 'elements[1].axis.roll', lower: (20 * Math.PI) / 180, upper: (40 * Math.PI) / 180 }, { name: 'oven.flux', path: 'oven.flux' }] });
    expect(l.fits![1]).toEqual({ title: '', data: 'pol.csv', state: true, free: [] });
    expect(l.simulations).toEqual([{ title: '', atoms: 5000, seed: 3 }, { title: '', atoms: 100000, seed: 1 }]);
  });

  it('names every problem with its path', () => {
    const d = base();
    d.fits = [{ free: [{ parameter: 'M2.axis.roll', lower: '40 deg', upper: '20 deg' }] } as never, { data: 'x.csv' }, { data: 'y.csv', free: [{ parameter: 'M2.axis.roll', lower: '1 mm' }] }];
    d.simulations = [{ atoms: 0 }, { seed: 1.5 }];
    const msgs = lines(d);
    expect(msgs).toContainEqual(expect.stringMatching(/^fits\[0\]\.data: the measured counts: a CSV file's name/));
    expect(msgs).toContainEqual(expect.stringMatching(/^fits\[0\]\.free\[0\]: the lower bound must be below the upper bound/));
    expect(msgs).toContainEqual(expect.stringMatching(/^fits\[1\]\.free: a fit needs set-points in "free", or "state": true/));
    expect(msgs).toContainEqual(expect.stringMatching(/^fits\[2\]\.free\[0\]\.lower: expected an angle/));
    expect(msgs).toContainEqual(expect.stringMatching(/^simulations\[0\]\.atoms: a whole number from 1/));
    expect(msgs).toContainEqual(expect.stringMatching(/^simulations\[1\]\.seed: a whole number from 0/));
  });

  it('follows a renamed or deleted element in the kept fits', () => {
    const d = base();
    d.fits = [{ data: 'c.csv', free: [{ parameter: 'M2.axis.roll' }] }];
    const r = renameElement(d, 'M2', 'MA');
    if (!r.ok) throw new Error(r.message);
    expect(r.doc.fits?.[0].free?.[0].parameter).toBe('MA.axis.roll');
    const del = deleteElement(r.doc, 'MA');
    if (!del.ok) throw new Error(del.message);
    expect(del.doc.fits).toBeUndefined();
  });
});
