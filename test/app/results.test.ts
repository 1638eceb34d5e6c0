import { describe, it, expect } from 'vitest';
import { csvField, dwellById, portRows, portRowsCsv, toCsv, warningsByElement, type RunResultView } from '../../src/app/results.ts';

// A hand-made result in result format v1 (docs/design.md), not an engine run: the table logic is under test.
// A detector with 3 /s background and a 10 s dwell.
const detector = (id: string, y: number, signal: number) => ({
  id, yield: y, rate: signal + 3, counts: (signal + 3) * 10, sigma: Math.sqrt((signal + 3) * 10),
  signal, background: 3, dwell: 10, signalToBackground: signal / 3, timeToPrecision: { epsilon: 0.01, seconds: (signal + 3) / (signal * signal * 1e-4) },
});
const result: RunResultView = {
  format: 'spinyard.result', version: 1, flux: 1.8e9, invariants: { balance: 0, maxHermiticity: 0, positive: true },
  leaves: [
    { path: ['M1:+1/2', 'M2:+1/2'], target: 'D1', yield: 0.375, rate: 6.75e8 },
    { path: ['M1:+1/2', 'M2:-1/2'], target: 'D2', yield: 0.125, rate: 2.25e8 },
    { path: ['M1:-1/2'], target: 'stop', yield: 0.5, rate: 0 },
  ],
  detectors: [
    detector('D1', 0.375, 6.75e8),
    detector('D2', 0.125, 2.25e8),
  ],
  lost: 0,
  warnings: ['elements[1].axis: an axis along the beam is an idealisation', 'oven.velocity: one speed'],
};

describe('portRows', () => {
  it('gives each leaf its counts in its detector dwell with σ = √N and its detector\'s time to ε on the signal, as the detector table', () => {
    const dwell = dwellById([{ id: 'D1', kind: 'detector', dwell: 10 }, { id: 'D2', kind: 'detector', dwell: 10 }, { id: 'M1', kind: 'magnet' }]);
    const rows = portRows(result, dwell, 0.01);
    expect(rows[0].path).toBe('M1:+1/2 → M2:+1/2');
    expect(rows[0].counts).toBeCloseTo(6.75e9, 0);
    expect(rows[0].sigma).toBeCloseTo(Math.sqrt(6.75e9), 6);
    // the same number as the detector's own time to precision: (S + B)/(S² ε²)
    expect(rows[0].time).toBe(result.detectors[0].timeToPrecision.seconds);
    expect(rows[0].time).toBeCloseTo((6.75e8 + 3) / (6.75e8 ** 2 * 1e-4), 20);
    expect(rows[2].counts).toBeUndefined();
    expect(rows[2].time).toBeUndefined();
  });
});

describe('CSV', () => {
  it('quotes fields with commas, quotes or line breaks (RFC 4180)', () => {
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('F=2,mF=+1')).toBe('"F=2,mF=+1"');
    expect(csvField(0.375)).toBe('0.375');
    expect(csvField(Infinity)).toBe('inf');
    expect(csvField(undefined)).toBe('');
    expect(toCsv(['a', 'b'], [[1, 'x\ny']])).toBe('a,b\r\n1,"x\ny"\r\n');
  });

  it('writes the ports table at full precision with ε in the header', () => {
    const rows = portRows(result, new Map([['D1', 10], ['D2', 10]]), 0.02);
    const csv = portRowsCsv(rows, 0.02);
    const lines = csv.trim().split('\r\n');
    expect(lines[0]).toContain('time to 2% (s)');
    expect(lines).toHaveLength(4);
    expect(lines[1].startsWith('M1:+1/2 → M2:+1/2,D1,0.375,675000000,6750000000,')).toBe(true);
    expect(lines[3]).toBe('M1:-1/2,stop,0.5,0,,,,,');
  });
});

describe('warningsByElement', () => {
  it('files "path: message" warnings under the element the path names, else oven or line', () => {
    const m = warningsByElement([...result.warnings, 'something general'], ['M1', 'M2', 'D1', 'D2']);
    expect(m.get('M2')).toEqual([result.warnings[0]]);
    expect(m.get('oven')).toEqual([result.warnings[1]]);
    expect(m.get('line')).toEqual(['something general']);
  });
});
