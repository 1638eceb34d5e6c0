import { describe, it, expect } from 'vitest';
import { csvField, detectorCells, dwellById, lostCell, portCells, portRows, portRowsCsv, toCsv, warningsByElement, type RunResultView } from '../../src/app/results.ts';
import { formatColumn, formatCountsColumn } from '../../src/beamline/numbers.ts';

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
    expect(lines[3]).toBe('M1:-1/2,stop,0.5,0,,,,,,,,,,unsaved,');
  });

  it('carries each sub-beam\'s displacement, spread and captured fraction in mm without float noise, and the document\'s name and hash', () => {
    const placed: RunResultView = { ...result, leaves: [
      // 0.1 + 0.2 m is 0.30000000000000004 in binary: the CSV writes 300 mm
      { path: ['M1:+1/2'], target: 'D1', yield: 0.5, rate: 9e8, displacement: { x: 0.1 + 0.2, z: -0.0057 }, spread: { x: 1.2e-4, z: 3.3e-4 }, captured: 0.8125 },
      { path: ['M1:-1/2'], target: 'stop', yield: 0.5, rate: 0 },
    ] };
    const csv = portRowsCsv(portRows(placed, new Map([['D1', 10]]), 0.01), 0.01, { name: 'bench-x.spinyard', sha256: 'ab'.repeat(32) });
    const [head, d1, stop] = csv.trim().split('\r\n');
    expect(head).toBe('path,target,yield (fraction of the oven flux),signal rate (1/s),counts (in the dwell),sigma (counts),detector rate (1/s),time to 1% (s),'
      + 'captured (fraction of the sub-beam in the window),displacement x (mm),displacement z (mm),spread x (mm),spread z (mm),document,document sha256');
    const cells = d1.split(',');
    expect(cells.slice(8)).toEqual(['0.8125', '300', '-5.7', '0.12', '0.33', 'bench-x.spinyard', 'ab'.repeat(32)]);
    expect(stop.split(',').slice(8)).toEqual(['', '', '', '', '', 'bench-x.spinyard', 'ab'.repeat(32)]);
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

describe('the tables follow the one number rule (src/beamline/numbers.ts)', () => {
  // bench H's closed ports (3.5e-33 of the flux), bench A's equal S/B reached from both sides of 9.375e6, bench K's DA0 with the run's 6.1e-9 error
  const noisy: RunResultView = {
    ...result, flux: 5e8, lost: 2.7755575615628914e-16,
    leaves: [
      { path: ['M1:+1/2'], target: 'D1', yield: 0.0977627, rate: 808000 },
      { path: ['M1:-1/2'], target: 'D2', yield: 0.102262, rate: 1.12e7 },
      { path: ['M2:F=1,mF=+1'], target: 'stop', yield: 3.466673899897024e-33, rate: 1.733e-24 },
    ],
    detectors: [
      { ...detector('D1', 0.0977627, 808000), signalToBackground: 9374999.999999998 },
      { ...detector('D2', 0.102262, 1.12e7), signalToBackground: 9375000.000000002 },
      { ...detector('DA2', 2.28e-16, 1.14e-7), signalToBackground: 3.8e-8 },
    ],
  };
  const rows = portRows(noisy, new Map([['D1', 10], ['D2', 10]]), 0.01);
  const cells = portCells(rows);

  it('writes round-off as 0 in the ports table, the lost fraction and the detectors table', () => {
    expect(cells[2].yield).toBe('0');
    expect(cells[2].rate).toBe('0');
    expect(lostCell(noisy)).toBe('0');
    const dead = detectorCells(noisy)[2];
    expect(dead.yield).toBe('0');
    expect(dead.signalToBackground).toBe('0');
    expect(dead.noSignal).toBe(true);
  });
  it('writes one notation per column: no 808000 beside 1.12e7', () => {
    expect([cells[0].rate, cells[1].rate]).toEqual(['8.08e5', '1.12e7']);
    expect([cells[0].rate, cells[1].rate]).toEqual(formatColumn([808000, 1.12e7], { figures: 4 }));
  });
  it('prints equal values equally', () => {
    const d = detectorCells(noisy);
    expect(d[0].signalToBackground).toBe('9.38e6');
    expect(d[1].signalToBackground).toBe(d[0].signalToBackground);
  });
  it('gives counts ± σ with σ to 2 figures and the counts to its place', () => {
    expect(cells[0].counts).toBe(formatCountsColumn([{ counts: rows[0].counts!, sigma: rows[0].sigma! }, { counts: rows[1].counts!, sigma: rows[1].sigma! }])[0]);
    expect(cells[0].counts).toBe('8.0800e6 ± 2.8e3');
    expect(cells[2].counts).toBe('—');
  });
  it('prints a yield no finer than the run\'s stated error (bench K: DA0 1.37193e-8, error 6.1e-9)', () => {
    const k: RunResultView = { ...noisy, quadrature: { nodes: 4416, error: 6.108e-9, method: 'speed by speed' },
      leaves: [{ path: ['MA:0'], target: 'DA0', yield: 1.3719312e-8, rate: 9.604 }], detectors: [detector('DA0', 1.3719312e-8, 9.604)] };
    const c = portCells(portRows(k, new Map([['DA0', 20]]), 0.01))[0];
    expect(c.yield).toBe('1.4e-8');
    // the signal's error, 6.1e-9 of the flux: 4.3 /s on a rate of 9.6 + 3 /s background
    expect(c.rate).toBe('10');
    expect(c.detectorRate).toBe('13');
    expect(detectorCells(k)[0].yield).toBe('1.4e-8');
  });
  it('exports round-off as 0 and other numbers without binary noise in the CSV', () => {
    const lines = portRowsCsv(rows, 0.01).trim().split('\r\n');
    expect(lines[3]).toBe('"M2:F=1,mF=+1",stop,0,0,,,,,,,,,,unsaved,');
    const tidy = portRowsCsv(portRows({ ...result, leaves: [{ path: ['M1:+1/2'], target: 'D1', yield: 0.37499999999999967, rate: 6.75e8 }] }, new Map([['D1', 10]]), 0.01), 0.01);
    expect(tidy.split('\r\n')[1].split(',')[2]).toBe('0.375');
  });
});
