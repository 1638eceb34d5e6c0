/**
 * No NaN, no infinity, no null leaves the engine (issue: silent wrong numbers): unbounded values are left out
 * by a documented rule, rounding below zero is 0, and a number that is still not finite stops the run with a
 * message naming the element.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { formatRun } from '../../src/cli/format.ts';
import { RunError, runDocumentText, runLine, withParameter } from '../../src/engine/index.ts';
import { roundOffFloor } from '../../src/engine/detector-plane.ts';

function line(extra: Record<string, unknown> = {}): Beamline {
  const r = validateBeamline({
    format: 'spinyard.beamline', version: 1, title: 'Bench N, two analysers without background',
    species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
    oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'M1' },
    elements: [
      { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } },
      { id: 'D1', kind: 'detector', efficiency: 0.9, background: '0 /s', dwell: '10 s' },
      { id: 'D2', kind: 'detector', efficiency: 0.9, background: '0 /s', dwell: '10 s' },
    ],
    ...extra,
  });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}

describe('unbounded values by rule, never null', () => {
  it('S/B is absent without background, the time to precision absent without signal; the JSON has no null', () => {
    const r = runLine(line());
    const d1 = r.detectors.find((d) => d.id === 'D1')!;
    const d2 = r.detectors.find((d) => d.id === 'D2')!;
    expect(d1.signal).toBeGreaterThan(0);
    expect('signalToBackground' in d1).toBe(false);
    expect(d1.timeToPrecision.seconds).toBeCloseTo(1 / (d1.signal * 1e-4), 12);
    // D2 sees nothing: the pure +1/2 state goes wholly to D1
    expect(d2.signal).toBe(0);
    expect(d2.signalToBackground).toBe(0);
    expect('seconds' in d2.timeToPrecision).toBe(false);
    const json = JSON.stringify(r);
    expect(json).not.toContain('null');
    expect(json).not.toContain('1.7976931348623157e+308');
    const text = formatRun(r, 'Bench N');
    expect(text).toMatch(/D1 .* ∞ \(no background\)/);
    expect(text).toMatch(/D2 .* no signal/);
    expect(text).not.toMatch(/NaN|Infinity|e\+308/);
  });

  it('every sample\'s result is free of null, NaN and the largest double', () => {
    const dir = new URL('../../samples/', import.meta.url);
    for (const name of readdirSync(dir).filter((n) => n.endsWith('.spinyard'))) {
      const r = runDocumentText(readFileSync(new URL(name, dir), 'utf8'));
      if (!r.ok) throw new Error(name);
      const json = JSON.stringify(r.result);
      expect(json, name).not.toMatch(/null|NaN|1\.7976931348623157e\+308/);
    }
  });
});

describe('rounding and the last guard', () => {
  it('a yield below zero by rounding only is 0; anything else is kept as it is', () => {
    expect(roundOffFloor(-3.9e-17)).toBe(0);
    expect(roundOffFloor(-1e-12)).toBe(0);
    expect(roundOffFloor(-2e-12)).toBe(-2e-12);
    expect(roundOffFloor(0.25)).toBe(0.25);
  });

  it('a number that is not finite stops the run and names the element (never printed as NaN)', () => {
    const l = line();
    for (const [id, key, v] of [['D2', 'efficiency', Number.NaN], ['D1', 'dwell', Number.POSITIVE_INFINITY]] as const) {
      const bad = withParameter(l, id, key, v);
      expect(() => runLine(bad), `${id}.${key}`).toThrow(RunError);
      expect(() => runLine(bad)).toThrow(new RegExp(`^elements\\[${id === 'D1' ? 1 : 2}\\] \\(${id}\\): the (rate|counts|yield|time to precision|σ) is (NaN|Infinity)`));
    }
  });
});
