// The fit and simulated-run panels' figures and rows (pure), and a fit's values written into the document as one
// edit: in the parameter's shown unit with 10 significant digits, the oven's populations with 8.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fitDensityCells, fitStateCells, fitValueCells, hitMapFigure, profileComparison, profileText, residualAxis, residualGroups, residualsFigure, simulatedCells, simulatedRows } from '../../src/app/fit-view.ts';
import { applyPlanEdit } from '../../src/app/plan-edit.ts';
import { checkDocument, fittedQuantity, lineParameters, readDocument, type FitResult, type FittedParameter, type SimulationResult } from '../../src/app/core-adapter.ts';
import type { FitData } from '../../src/app/engine-protocol.ts';

const deg = Math.PI / 180;
const theme = { font: { color: '#000' }, xaxis: {}, yaxis: {}, margin: { l: 1, r: 1, t: 1, b: 1 } };
const benchC = readFileSync(join(import.meta.dirname, '..', '..', 'samples', 'bench-c-roll-calibration.spinyard'), 'utf8');

const rollP: FittedParameter = {
  name: 'M2.axis.roll', path: 'elements[2].axis.roll', dimension: 'angle', unit: 'deg', factor: deg, start: 30 * deg,
  value: 31.19975123456789 * deg, sigma: 0.0006 * deg, profile: { lower: 31.1992 * deg, upper: 31.2004 * deg, asymmetric: true },
};
function fitOf(over: Partial<FitResult> = {}): FitResult {
  return {
    format: 'spinyard.fit', version: 1, title: 't', parameters: [rollP], coordinates: ['M2.axis.roll'], correlation: [[1]], deviance: 2, degreesOfFreedom: 3,
    pValue: 0.5, readings: 4, iterations: 3, converged: true, method: 'm', warnings: [],
    residuals: [
      { line: 4, detector: 'D1', counts: 10, expected: 9, pearson: 1 / 3, deviance: 0.1 },
      { line: 5, detector: 'D2', counts: 4, expected: 4, pearson: 0, deviance: 0 },
      { line: 6, detector: 'D1', counts: 7, expected: 9, pearson: -2 / 3, deviance: 0.4 },
      { line: 7, detector: 'D2', counts: 5, expected: 4, pearson: Number.NaN, deviance: 0 },
    ],
    ...over,
  };
}
const data: FitData = {
  columns: [{ name: 'M3.axis.roll', unit: 'deg', factor: deg }],
  readings: [4, 5, 6, 7].map((line, i) => ({ line, detector: i % 2 ? 'D2' : 'D1', values: [i < 2 ? 0 : 20 * deg] })),
};

describe('the residuals plot', () => {
  it('groups the Pearson residuals by detector against the first set-point column in its unit; a residual that is not a number is left out', () => {
    expect(residualAxis(data)).toEqual({ title: 'M3.axis.roll (deg)', column: 0 });
    const g = residualGroups(fitOf(), data);
    expect(g.map((x) => x.detector)).toEqual(['D1', 'D2']);
    expect(g[0].x).toEqual([0, 20]);
    expect(g[0].y).toEqual([1 / 3, -2 / 3]);
    expect(g[1].x).toEqual([0]);
    const fig = residualsFigure(fitOf(), data, theme);
    expect(fig.data).toHaveLength(2);
    expect(JSON.stringify(fig)).not.toMatch(/NaN|null/);
    expect((fig.layout.shapes as { y0: number }[]).map((s) => s.y0)).toEqual([0, 2, -2]);
  });

  it('uses the line in the file where the data have no set-point column', () => {
    const plain: FitData = { columns: [], readings: data.readings.map((r) => ({ ...r, values: [] })) };
    expect(residualAxis(plain).title).toBe('line in the data file');
    expect(residualGroups(fitOf(), plain)[0].x).toEqual([4, 6]);
  });

  it('writes a profile interval in the parameter\'s unit and marks it asymmetric', () => {
    expect(profileText(rollP)).toEqual({ text: '31.1992 to 31.2004 deg', asymmetric: true });
    expect(profileText({ ...rollP, profile: { upper: 31.2 * deg, asymmetric: false } })!.text).toBe('… to 31.2 deg');
    expect(profileText({ ...rollP, profile: undefined })).toBeUndefined();
    const flux: FittedParameter = { ...rollP, name: 'oven.flux', unit: '/s', factor: 1, profile: { lower: 1.92997e9, upper: 1.9300e9, asymmetric: false } };
    expect(profileText(flux)!.text).toBe('1.92997e9 to 1.93e9 /s');
  });
});

describe('applying a fit', () => {
  it('writes the values in the parameter\'s unit to 10 significant digits, as one edit named for Undo; the reader takes the result', () => {
    expect(fittedQuantity(31.19975123456789 * deg, 'deg', deg)).toBe('31.19975123 deg');
    expect(fittedQuantity(1.929992345678e9, '/s', 1)).toBe('1929992346 /s');
    expect(fittedQuantity(0.912345678912, '', 1)).toBe(0.9123456789);
    const r = readDocument(benchC);
    if (!r.ok) throw new Error('bench C does not read');
    const path = lineParameters(benchC).find((s) => s.name === 'M2.axis.roll')!.path;
    const flux: FittedParameter = { name: 'oven.flux', path: 'oven.flux', dimension: 'rate', unit: '/s', factor: 1, start: 2e9, value: 1.929992345678e9, sigma: 2e4 };
    const e = applyPlanEdit(r.doc, { kind: 'applyFit', fit: fitOf({ parameters: [{ ...rollP, path }, flux] }) });
    if (!e.ok) throw new Error(e.message);
    expect(e.label).toBe('apply fitted M2.axis.roll, oven.flux');
    const c = checkDocument(e.doc);
    if (!c.ok) throw new Error(JSON.stringify(c.problems));
    const after = lineParameters(c.text);
    expect(after.find((s) => s.name === 'M2.axis.roll')!.value / deg).toBeCloseTo(31.19975123, 8);
    expect(after.find((s) => s.name === 'oven.flux')!.value).toBe(1929992346);
    expect(c.text).toContain('"31.19975123 deg"');
    expect(c.text).toContain('1929992346 /s');
    // the document given is unchanged
    expect(checkDocument(r.doc).text).not.toContain('31.19975123');
  });

  it('writes the oven\'s fitted populations along the oven state\'s axis, and refuses a value that is not a number', () => {
    const r = readDocument(benchC);
    if (!r.ok) throw new Error('bench C does not read');
    const e = applyPlanEdit(r.doc, { kind: 'applyFit', fit: fitOf({ parameters: [], state: { axis: 'z', labels: ['+1/2', '-1/2'], populations: [0.612345678912, 0.387654321088], sigma: [0.01, null] } }) });
    if (!e.ok) throw new Error(e.message);
    expect(e.doc.oven.state).toMatchObject({ kind: 'populations', p: { '+1/2': 0.61234568, '-1/2': 0.38765432 } });
    const c = checkDocument(e.doc);
    expect(c.ok ? [] : c.problems).toEqual([]);
    expect(e.label).toBe('apply fitted oven.state');
    expect(applyPlanEdit(r.doc, { kind: 'applyFit', fit: fitOf({ parameters: [{ ...rollP, value: Number.NaN }] }) })).toMatchObject({ ok: false, message: expect.stringMatching(/M2\.axis\.roll/) });
    expect(applyPlanEdit(r.doc, { kind: 'applyFit', fit: fitOf({ parameters: [] }) })).toMatchObject({ ok: false });
  });
});

describe('a simulated run beside the engine', () => {
  const det = {
    id: 'DU', hits: 3, fraction: 0.3, fractionSigma: 0.1, signal: 300, signalSigma: 20, background: 0, dwell: 30, counts: 9000,
    map: { x: [-1e-3, 0, 1e-3], z: [0, 1e-4, 2e-4], counts: [[1, 0], [0, 2]] },
  };
  const sim = { detectors: [det, { ...det, id: 'DL', hits: 0, signal: 0, signalSigma: 0, map: undefined }] } as unknown as SimulationResult;

  it('gives each detector\'s difference from the engine in σ of the sampling, none without a σ', () => {
    const rows = simulatedRows(sim, [{ id: 'DU', signal: 330 }, { id: 'DL', signal: 1 }]);
    expect(rows[0]).toMatchObject({ id: 'DU', signal: 300, sigma: 20, engine: 330, difference: -1.5 });
    expect(rows[1].difference).toBeUndefined();
    expect(simulatedRows(sim, [])[0].engine).toBeUndefined();
  });

  it('draws a hit map over the window in mm, rows along z and columns along x', () => {
    const f = hitMapFigure(det, theme, false)!;
    const h = f.data[0] as { x: number[]; y: number[]; z: number[][] };
    expect(h.x).toEqual([-0.5, 0.5]);
    expect(h.y).toEqual([0.05, 0.15]);
    // counts[i][j]: x bin i, z bin j → z[j][i]
    expect(h.z).toEqual([[1, 0], [0, 2]]);
    expect((f.layout.xaxis as { range: number[] }).range).toEqual([-1, 1]);
    expect(hitMapFigure(sim.detectors[1], theme, true)).toBeUndefined();
  });

  it('compares the hits\' shape along the profile axis with the engine\'s, both normalised over the window, or draws nothing', () => {
    const flat = { id: 'DU', signal: 1, profiles: [{ axis: 'z' as const, positions: [-1, 1], density: [5, 5] }] };
    const f = profileComparison(det, flat, theme)!;
    const [hits, engine] = f.data as { x: number[]; y: number[] }[];
    expect(hits.x).toEqual([0.05, 0.15]);
    // 1 hit in the lower z bin, 2 in the upper, bins 0.1 mm wide: 1/3 and 2/3 of the window per 0.1 mm
    expect(hits.y[0]).toBeCloseTo(1 / 3 / 0.1, 12);
    expect(hits.y[1]).toBeCloseTo(2 / 3 / 0.1, 12);
    // a flat profile is 1/(0.2 mm) per mm across the window whatever its height
    expect(engine.y).toEqual([5, 5].map(() => expect.closeTo(5, 12)));
    expect(profileComparison(det, undefined, theme)).toBeUndefined();
    expect(profileComparison(det, { id: 'DU', signal: 1, profiles: [{ axis: 'z', positions: [5, 6], density: [1, 1] }] }, theme)).toBeUndefined();
  });
});

describe('keeping a fit or a simulated run in the document', () => {
  it('adds them at the end of the document\'s lists, named for Undo; the reader takes them, and refuses a bound in the wrong unit', () => {
    const r = readDocument(benchC);
    if (!r.ok) throw new Error('bench C does not read');
    const f = applyPlanEdit(r.doc, { kind: 'keepFit', fit: { data: 'run-2.csv', free: [{ parameter: 'M3.axis.roll', lower: '-5 deg' }], state: true } });
    if (!f.ok) throw new Error(f.message);
    expect(f.label).toBe('keep fit M3.axis.roll, oven.state');
    expect(f.doc.fits).toHaveLength(2);
    const c = checkDocument(f.doc);
    expect(c.ok ? c.line.fits?.[1] : c.problems).toMatchObject({ data: 'run-2.csv', state: true, free: [{ name: 'M3.axis.roll', lower: expect.closeTo(-5 * deg, 12) }] });
    const bad = applyPlanEdit(r.doc, { kind: 'keepFit', fit: { data: 'x.csv', free: [{ parameter: 'M3.axis.roll', lower: '2 mm' }] } });
    const cb = bad.ok ? checkDocument(bad.doc) : undefined;
    expect(cb?.ok).toBe(false);
    const s = applyPlanEdit(r.doc, { kind: 'keepSimulation', simulation: { atoms: 20000, seed: 3 } });
    if (!s.ok) throw new Error(s.message);
    expect(s.label).toBe('keep simulated run of 20000 atoms, seed 3');
    const cs = checkDocument(s.doc);
    expect(cs.ok ? cs.line.simulations : cs.problems).toMatchObject([{ atoms: 20000, seed: 3 }]);
  });
});

describe('the fit and simulated-run tables by the one number rule per column', () => {
  it('writes a fitted value no finer than its σ (zeros to that place kept), σ to 2 figures, one notation per unit down each column', () => {
    // per value, 31.19975123 deg would have printed to 7 figures although its σ is 0.0006 deg
    const field: FittedParameter = {
      name: 'oven.flux', path: 'oven.flux', dimension: 'rate', unit: '/s', factor: 1, start: 1.2e10,
      value: 1.2345678e10, sigma: 3.1e7, profile: { lower: 1.2314e10, upper: undefined, asymmetric: false },
    };
    const bound: FittedParameter = { ...rollP, name: 'M1.axis.roll', value: 0, sigma: undefined, profile: undefined, atBound: true, start: 0 };
    const c = fitValueCells(fitOf({ parameters: [rollP, field, bound] }));
    // 31.1998 to the place of σ (1e-4); 1.235e10 to the place of σ (1e7); the rows of one unit share a notation
    // (the fluxes need exponents, the angles not)
    expect(c.map((x) => x.value)).toEqual(['31.1998 deg', '1.235e10 /s', '0 deg']);
    expect(c.map((x) => x.sigma)).toEqual(['0.0006 deg', '3.1e7 /s', 'at its bound']);
    expect(c.map((x) => x.start)).toEqual(['30 deg', '1.2e10 /s', '0 deg']);
    expect(c[0].profile).toEqual({ text: '31.1992 to 31.2004 deg', asymmetric: true });
    // two angles, one of them past 1e6 deg: both with exponents
    const far = fitValueCells(fitOf({ parameters: [rollP, { ...rollP, name: 'M3.axis.roll', value: 2e6 * deg, sigma: 1e3 * deg, start: 2e6 * deg, profile: undefined }] }));
    expect(far.map((x) => x.value)).toEqual(['3.11998e1 deg', '2.000e6 deg']);
    expect(c[1].profile).toEqual({ text: '1.231e10 to … /s', asymmetric: false });
    expect(c[2].profile).toBeUndefined();
    // one parameter alone, within [1e-4, 1e6): plain numbers
    const one = fitValueCells(fitOf())[0];
    expect(one).toEqual({ value: '31.1998 deg', sigma: '0.0006 deg', start: '30 deg', profile: { text: '31.1992 to 31.2004 deg', asymmetric: true } });
    for (const x of c) expect(Object.values(x).join(' ')).not.toMatch(/NaN/);
  });

  it('writes the fitted populations no finer than their σ, and a dash where a σ is missing', () => {
    const cells = fitStateCells({ axis: 'z', labels: ['+1/2', '-1/2'], populations: [0.6123456, 0.3876544], sigma: [0.012, null] });
    expect(cells).toEqual([{ population: '0.61', sigma: '0.012' }, { population: '0.38765', sigma: '—' }]);
  });

  it('writes a simulated signal no finer than the σ of its sampling, in one notation with the other detectors', () => {
    const det = { id: 'DU', hits: 3, fraction: 0.3, fractionSigma: 0.1, signal: 312.345, signalSigma: 20.4, background: 0, dwell: 30, counts: 9000 };
    const sim = { detectors: [det, { ...det, id: 'DL', signal: 2512345, signalSigma: 1600, dwell: 2.5 }, { ...det, id: 'DN', signal: 0, signalSigma: 0 }] } as unknown as SimulationResult;
    const rows = simulatedRows(sim, [{ id: 'DU', signal: 330.2 }, { id: 'DL', signal: 2.5e6 }]);
    const c = simulatedCells(rows);
    expect(c.map((x) => x.signal)).toEqual(['3.1e2', '2.512e6', '0']);
    // σ in the signals' notation: one cell reads "3.1e2 ± 2e1", never "2.512e6 ± 1600"
    expect(c.map((x) => x.sigma)).toEqual(['2e1', '1.6e3', '0']);
    expect(c.map((x) => x.engine)).toEqual(['3.302e2', '2.5e6', '—']);
    // (312.345 − 330.2)/20.4 = −0.875…; (2512345 − 2.5e6)/1600 = +7.7…
    expect(c.map((x) => x.difference)).toEqual(['−0.88', '+7.7', '—']);
    expect(c.map((x) => x.dwell)).toEqual(['30', '2.5', '30']);
  });
});

describe('a fitted density matrix', () => {
  it('is shown as a table of Re ± σ (and Im ± σ off the diagonal), no finer than σ, with its purity and ⟨J⟩/j', () => {
    const dm = {
      axis: 'z', basis: ['+1/2', '-1/2'],
      re: [[0.7312345, 0.2012345], [0.2012345, 0.2687655]], im: [[0, -0.0512345], [0.0512345, 0]],
      sigmaRe: [[0.0021, 0.0033], [0.0033, 0.0021]], sigmaIm: [[null, 0.0034], [0.0034, null]],
      eigenvalues: [0.19, 0.81], purity: 0.6951234, puritySigma: 0.0042,
      polarization: { x: 0.4024690, y: 0.102469, z: 0.462469, sigma: { x: 0.0066, y: 0.0068, z: 0.0042 } },
      determined: 3, parameters: 3,
    };
    const t = fitDensityCells(dm);
    // the value ends at the place of its σ's first figure (σ 0.0021 → 0.731), as every value ± σ of the panels
    expect(t.cells).toEqual([
      ['0.731 ± 0.0021', '0.201 ± 0.0033, i: -0.051 ± 0.0034'],
      ['0.201 ± 0.0033, i: 0.051 ± 0.0034', '0.269 ± 0.0021'],
    ]);
    expect(t.summary).toBe('purity 0.6951 ± 0.0042; ⟨J⟩/j = (0.402, 0.102, 0.462); the readings determine 3 of the 3 parameters of ρ');
  });
});
