/**
 * Tolerance budgets (src/engine/budget.ts), checked on bench C against the closed form of its signals: D1 sees
 * the atoms that M1 passes as +½ along roll α1 and M2 passes as +½ along roll α2, so S1 = F·η·½·cos²((α2 − α1)/2)
 * (spin ½, Born rule; common practice), and ∂S1/∂F = η·Y1, ∂S1/∂η = F·Y1, ∂S1/∂α2 = −F·η·¼·sin(α2 − α1).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { budget, compile, type Plan } from '../../src/engine/index.ts';

const text = readFileSync(new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url), 'utf8');
function plan(t = text): Plan {
  const c = compile(t);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}
const deg = Math.PI / 180;
const F = 2e9, eta = 0.9, a2 = 30 * deg, Y1 = 0.5 * Math.cos(a2 / 2) ** 2;

describe('budget', () => {
  it('gives bench C\'s sensitivities as the closed form, and their root sum of squares', () => {
    const b = budget(plan(), { draws: 0 });
    const sens = (tol: string, det: string) => b.tolerances.find((t) => t.name === tol)!.sensitivities!.find((s) => s.detector === det)!;
    expect(sens('oven.flux', 'D1').derivative).toBeCloseTo(eta * Y1, 12);
    expect(sens('D1.efficiency', 'D1').derivative / (F * Y1)).toBeCloseTo(1, 10);
    expect(sens('M2.axis.roll', 'D1').derivative / (-F * eta * 0.25 * Math.sin(a2))).toBeCloseTo(1, 6);
    expect(sens('M1.axis.roll', 'D1').derivative / (F * eta * 0.25 * Math.sin(a2))).toBeCloseTo(1, 6);
    expect(sens('M3.axis.roll', 'D1').derivative).toBe(0);
    const tol = (n: string) => b.tolerances.find((t) => t.name === n)!;
    expect(tol('M2.axis.roll').sigma).toBeCloseTo((0.5 * deg) / Math.sqrt(3), 15);
    expect(tol('oven.flux').sigma).toBe(1e8);
    const d1 = b.detectors.find((d) => d.id === 'D1')!;
    const rss = Math.sqrt((eta * Y1 * 1e8) ** 2 + (F * Y1 * 0.02 / Math.sqrt(3)) ** 2 + 2 * (F * eta * 0.25 * Math.sin(a2) * (0.5 * deg) / Math.sqrt(3)) ** 2);
    expect(d1.linearSigma / rss).toBeCloseTo(1, 6);
    expect(d1.nominal).toBeCloseTo(F * eta * Y1, 3);
    // shares add up to 1 per detector, ranking is by relative effect
    expect(b.tolerances.reduce((s, t) => s + t.sensitivities!.find((x) => x.detector === 'D1')!.share, 0)).toBeCloseTo(1, 12);
    for (let i = 1; i < b.ranking.length; i++) expect(b.ranking[i].relative).toBeLessThanOrEqual(b.ranking[i - 1].relative);
  });

  it('agrees with a Monte Carlo where the signal is linear, and repeats it for a seed', () => {
    const a = budget(plan(), { draws: 1500, seed: 3 });
    const d1 = a.detectors.find((d) => d.id === 'D1')!;
    // σ of the Monte Carlo σ is about σ/√(2n) = 1.8 %
    expect(Math.abs(d1.monteCarlo!.sigma / d1.linearSigma - 1)).toBeLessThan(0.07);
    expect(Math.abs(d1.monteCarlo!.mean - d1.nominal)).toBeLessThan(4 * d1.linearSigma / Math.sqrt(1500));
    expect(d1.monteCarlo!.q05).toBeLessThan(d1.nominal);
    expect(d1.monteCarlo!.q95).toBeGreaterThan(d1.nominal);
    expect(d1.nonlinear).toBeUndefined();
    expect(JSON.stringify(budget(plan(), { draws: 1500, seed: 3 }))).toBe(JSON.stringify(a));
    expect(budget(plan(), { draws: 50, seed: 4 }).detectors[0].monteCarlo!.mean).not.toBe(budget(plan(), { draws: 50, seed: 5 }).detectors[0].monteCarlo!.mean);
  });

  it('says where the signal is not linear: the analyser at the same roll as the polariser (an extremum of cos²)', () => {
    const doc = JSON.parse(text);
    doc.elements[1].axis.roll = '0 deg';
    doc.tolerances = [{ parameter: 'M2.axis.roll', halfWidth: '10 deg' }];
    const b = budget(plan(JSON.stringify(doc)), { draws: 400 });
    const d1 = b.detectors.find((d) => d.id === 'D1')!;
    expect(d1.linearSigma).toBeLessThan(1e-6 * d1.nominal);
    expect(d1.monteCarlo!.sigma).toBeGreaterThan(1e-3 * d1.nominal);
    expect(d1.nonlinear).toMatch(/not linear/);
    expect(b.warnings.join('\n')).toMatch(/D1: the Monte Carlo/);
  });

  it('uses one side where the reader refuses the other, and leaves out refused draws with a warning', () => {
    const doc = JSON.parse(text);
    doc.elements[3].efficiency = 1;
    doc.tolerances = [{ parameter: 'D1.efficiency', halfWidth: 0.05 }];
    const b = budget(plan(JSON.stringify(doc)), { draws: 200 });
    const t = b.tolerances[0];
    expect(t.method).toBe('backward');
    expect(t.sensitivities![0].derivative / (F * Y1)).toBeCloseTo(1, 8);
    expect(b.monteCarlo.refused).toBeGreaterThan(50);
    expect(b.monteCarlo.refused).toBeLessThan(150);
    expect(b.warnings[0]).toMatch(/draws put a set-point where the document's reader refuses it.*efficiency/);
  });

  it('refuses a line without tolerances, and bad counts', () => {
    const doc = JSON.parse(text);
    delete doc.tolerances;
    expect(() => budget(plan(JSON.stringify(doc)))).toThrow(/no tolerances/);
    expect(() => budget(plan(), { draws: -1 })).toThrow(/draws/);
    expect(() => budget(plan(), { seed: 1.5 })).toThrow(/seed/);
  });
});

describe('sensitivities of a spin-1 analyser against the closed form', () => {
  it('∂S/∂β of |d¹_{m1}(β)|² to 1e-8 relative (Wigner d¹: d¹₁₁ = (1 + cos β)/2, d¹₀₁ = sin β/√2, d¹₋₁₁ = (1 − cos β)/2; J. J. Sakurai, Modern Quantum Mechanics, §3.5)', () => {
    const beta = 50 * deg;
    const doc = {
      format: 'spinyard.beamline', version: 1, species: { spin: '1', g: 2.0023, mass: '4.0026 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '3e9 /s', velocity: { kind: 'fixed', speed: '1500 m/s' }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1': 'M2', '0': 'stop', '-1': 'stop' } },
        { id: 'M2', kind: 'magnet', axis: { roll: '50 deg' }, ports: { '+1': 'D1', '0': 'D2', '-1': 'D3' } },
        { id: 'D1', kind: 'detector' }, { id: 'D2', kind: 'detector' }, { id: 'D3', kind: 'detector' },
      ],
      tolerances: [{ parameter: 'M2.axis.roll', halfWidth: '0.1 deg' }],
    };
    const b = budget(plan(JSON.stringify(doc)), { draws: 0 });
    const s = b.tolerances[0].sensitivities!;
    const c = Math.cos(beta), sn = Math.sin(beta), k = 3e9 / 3; // flux × efficiency 1 × P(m = +1 at M1) = 1/3
    const expected: Record<string, number> = {
      D1: k * 2 * ((1 + c) / 2) * (-sn / 2),
      D2: k * 2 * (sn / Math.SQRT2) * (c / Math.SQRT2),
      D3: k * 2 * ((1 - c) / 2) * (sn / 2),
    };
    for (const x of s) expect(Math.abs(x.derivative / expected[x.detector] - 1), x.detector).toBeLessThan(1e-8);
  });
});
