/**
 * Fits to measured counts (src/engine/fit.ts, measurements.ts). Readings are made by the engine at known "true"
 * set-points, with Poisson noise from the seeded generator or without any (the expected counts rounded), and the
 * fit must find the truth: exactly (to the rounding) without noise, within its stated σ with it.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, type Plan } from '../../src/engine/index.ts';
import { fit, solve } from '../../src/engine/fit.ts';
import { readMeasurements } from '../../src/engine/measurements.ts';
import { Random } from '../../src/engine/random.ts';

const deg = Math.PI / 180;
function plan(): Plan {
  const c = compile(readFileSync(new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url), 'utf8'));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

/** Readings of bench C's three detectors with M3 rolled 0…180° in 20° steps, 2 s each, at the true values. */
function readings(p: Plan, truth: Record<string, number>, noise: Random | null): string {
  const rows = ['# synthetic readings', 'detector,counts,dwell [s],M3.axis.roll [deg]'];
  for (let a = 0; a <= 180; a += 20) {
    const r = evaluate(p, { ...truth, 'M3.axis.roll': a * deg });
    for (const d of r.detectors) rows.push(`${d.id},${noise ? noise.poisson(d.rate * 2) : Math.round(d.rate * 2)},2,${a}`);
  }
  return rows.join('\n');
}

describe('fit', () => {
  it('finds the analyser roll and the flux from noise-free readings', () => {
    const p = plan();
    const truth = { 'M2.axis.roll': 33 * deg, 'oven.flux': 1.5e6 };
    const f = fit(p, readMeasurements(readings(p, truth, null), p), { free: [{ name: 'M2.axis.roll' }, { name: 'oven.flux' }] });
    expect(f.converged).toBe(true);
    expect(f.parameters[0].value / deg).toBeCloseTo(33, 3);
    expect(f.parameters[1].value / 1.5e6).toBeCloseTo(1, 4);
    // the only misfit is the rounding of the counts: a deviance far below its degrees of freedom
    expect(f.deviance).toBeLessThan(1);
    expect(f.degreesOfFreedom).toBe(30 - 2);
  });

  it('with Poisson noise: the truth within 3σ, σ and the profile interval agree, the deviance fits its χ²', () => {
    const p = plan();
    const truth = { 'M2.axis.roll': 33 * deg, 'oven.flux': 1.5e6 };
    const f = fit(p, readMeasurements(readings(p, truth, new Random(11)), p), { free: [{ name: 'M2.axis.roll' }, { name: 'oven.flux' }] });
    for (const [i, t] of [[0, 33 * deg], [1, 1.5e6]] as const) {
      const q = f.parameters[i];
      expect(Math.abs(q.value - t)).toBeLessThan(3 * q.sigma!);
      expect(q.profile!.asymmetric).toBe(false);
      expect(Math.abs(q.profile!.upper! - q.value) / q.sigma!).toBeCloseTo(1, 1);
    }
    expect(f.pValue).toBeGreaterThan(0.001);
    expect(f.correlation[0][0]).toBeCloseTo(1, 12);
    expect(f.residuals).toHaveLength(30);
    expect(f.residuals[0].line).toBe(3);
  });

  it('fits the oven\'s populations, kept in [0, 1] and summing to 1', () => {
    const p = plan();
    // the oven polarised 80 % along +z: D1 gets 0.8 of the +½ atoms' share
    const doc = JSON.parse(readFileSync(new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url), 'utf8'));
    doc.oven.state = { kind: 'populations', axis: { theta: '0 deg', phi: '0 deg' }, p: { '+1/2': 0.8, '-1/2': 0.2 } };
    doc.oven.flux = '1e6 /s';
    const c = compile(JSON.stringify(doc));
    if (!c.ok) throw new Error(c.problems.join('\n'));
    const data = readMeasurements(readings(c.plan, {}, null), p);
    const q = compile(JSON.stringify({ ...doc, oven: { ...doc.oven, state: { kind: 'unpolarized' } } }));
    if (!q.ok) throw new Error(q.problems.join('\n'));
    const f = fit(q.plan, data, { free: [], state: true });
    expect(f.state!.labels).toEqual(['+1/2', '-1/2']);
    expect(f.state!.populations[0]).toBeCloseTo(0.8, 4);
    expect(f.state!.populations[0] + f.state!.populations[1]).toBeCloseTo(1, 14);
    expect(f.state!.sigma[0]).toBeGreaterThan(0);
  });

  it('says when the readings cannot tell parameters apart, and refuses a fitted column', () => {
    const p = plan();
    const data = readMeasurements(readings(p, {}, null), p);
    // the flux and the +½ population enter only as their product
    const f = fit(p, data, { free: [{ name: 'oven.flux' }], state: true });
    expect(f.warnings.join('\n')).toMatch(/singular/);
    expect(() => fit(p, data, { free: [{ name: 'M3.axis.roll' }] })).toThrow(/column of the data/);
    expect(() => fit(p, data, { free: [] })).toThrow(/nothing to fit/);
  });

  it('stops on a bound and says so', () => {
    const p = plan();
    const data = readMeasurements(readings(p, { 'M2.axis.roll': 33 * deg }, null), p);
    const f = fit(p, data, { free: [{ name: 'M2.axis.roll', lower: 0, upper: 31 * deg }] });
    expect(f.parameters[0].value).toBeCloseTo(31 * deg, 9);
    expect(f.parameters[0].atBound).toBe(true);
    expect(f.warnings.join('\n')).toMatch(/M2\.axis\.roll: the best value lies on its bound/);
  });
});

describe('solve', () => {
  it('solves a small system and reports a singular one', () => {
    expect(solve([[2, 1], [1, 3]], [3, 5])!.map((v) => Number(v.toFixed(12)))).toEqual([0.8, 1.4]);
    expect(solve([[1, 2], [2, 4]], [1, 2])).toBeNull();
  });
});

describe('readMeasurements', () => {
  it('names the file, line and column of a problem', () => {
    const p = plan();
    const bad: [string, RegExp][] = [
      ['counts,dwell [s]\n', /line 1: the header needs a "detector" and a "counts" column/],
      ['detector,counts\nD9,5\n', /line 2: detector "D9" is not a detector of the line/],
      ['detector,counts\nD1,5.5\n', /line 2: counts: a whole number ≥ 0, got "5\.5"/],
      ['detector,counts,M2.axis.roll\nD1,5,1\n', /line 1: column "M2\.axis\.roll": give the unit of M2\.axis\.roll in brackets/],
      ['detector,counts,M2.axis.roll [mm]\nD1,5,1\n', /line 1: column "M2\.axis\.roll \[mm\]": expected an angle/],
      ['detector,counts,M9.gap [mm]\nD1,5,1\n', /no parameter "M9\.gap"/],
      ['detector,counts\nD1,5,3\n', /line 2: 3 fields where the header \(line 1\) has 2/],
      ['detector,counts\n', /no readings after the header/],
    ];
    for (const [text, msg] of bad) expect(() => readMeasurements(text, p, 'counts.csv'), text).toThrow(msg);
    expect(() => readMeasurements('detector,counts\nD9,5\n', p, 'counts.csv')).toThrow(/^counts\.csv line 2/);
  });

  it('reads units, quoted fields, comments and the detector\'s dwell by default', () => {
    const p = plan();
    const m = readMeasurements('\uFEFF# run 4\r\ndetector,"counts",M2.axis.roll [mrad],dwell [min]\r\n"D1",120,500,2\r\nD2,7,0,0.5\r\n', p);
    expect(m.readings[0]).toEqual({ line: 3, detector: 'D1', counts: 120, dwell: 120, setPoints: { 'M2.axis.roll': 0.5 } });
    expect(readMeasurements('detector,counts\nD1,3\n', p).readings[0].dwell).toBe(10);
  });
});

describe('fit coverage (a statistical test: fixed seed, stated false-alarm rate)', () => {
  it('for 200 simulated data sets, the true roll lies within 1σ in 57–78 % (68 % ± the binomial 3σ band) and within 3σ in at least 98 %', () => {
    const p = plan();
    // bench C at a modest flux so that the roll's σ is not tiny: 2e5 /s, 1 s per reading
    const truth = { 'M2.axis.roll': 33 * deg, 'oven.flux': 2e5 };
    const rates: { det: string; a: number; rate: number }[] = [];
    for (let a = 0; a <= 180; a += 30) {
      const r = evaluate(p, { ...truth, 'M3.axis.roll': a * deg });
      for (const d of r.detectors) rates.push({ det: d.id, a, rate: d.rate });
    }
    const rng = new Random(2026);
    let in1 = 0, in3 = 0;
    const n = 200;
    for (let t = 0; t < n; t++) {
      const rows = ['detector,counts,dwell [s],M3.axis.roll [deg],oven.flux [/s]', ...rates.map((x) => `${x.det},${rng.poisson(x.rate)},1,${x.a},200000`)];
      const f = fit(p, readMeasurements(rows.join('\n'), p), { free: [{ name: 'M2.axis.roll' }], profiles: false });
      const q = f.parameters[0];
      const z = Math.abs(q.value - truth['M2.axis.roll']) / q.sigma!;
      if (z <= 1) in1++;
      if (z <= 3) in3++;
    }
    expect(in1 / n).toBeGreaterThanOrEqual(0.57);
    expect(in1 / n).toBeLessThanOrEqual(0.78);
    expect(in3 / n).toBeGreaterThanOrEqual(0.98);
  }, 120_000);

  it('refuses fewer readings than fitted coordinates, naming them', () => {
    const p = plan();
    const data = readMeasurements('detector,counts\nD1,100\n', p);
    expect(() => fit(p, data, { free: [{ name: 'M2.axis.roll' }, { name: 'oven.flux' }] })).toThrow(/1 reading for 2 fitted coordinates \(M2\.axis\.roll, oven\.flux\)/);
  });
});
