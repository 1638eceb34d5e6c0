import { describe, expect, it } from 'vitest';
import { alignTable, detectorTable, formatDuration, formatNumber, formatRun, leafTable } from '../../src/cli/format.ts';
import type { DetectorResult, LeafResult, RunResult } from '../../src/engine/index.ts';
import { formatColumn, formatCountsColumn } from '../../src/beamline/numbers.ts';

describe('formatNumber', () => {
  it('keeps 6 significant digits and drops trailing zeros', () => {
    expect(formatNumber(0.37499999999999967)).toBe('0.375');
    expect(formatNumber(0.466506350946)).toBe('0.466506');
    expect(formatNumber(0)).toBe('0');
  });
  it('writes an exponent outside [1e-4, 1e6)', () => {
    expect(formatNumber(6.75e8)).toBe('6.75e8');
    expect(formatNumber(2.7385283345e-8, 3)).toBe('2.74e-8');
    expect(formatNumber(-3.46945e-18, 3)).toBe('-3.47e-18');
    expect(formatNumber(1e6)).toBe('1e6');
  });
  it('writes ∞ for an unbounded ratio', () => {
    expect(formatNumber(Infinity)).toBe('∞');
  });
});

describe('formatDuration', () => {
  it('chooses the unit a person reads', () => {
    expect(formatDuration(1.4814814e-5)).toBe('14.8 µs');
    expect(formatDuration(0.0025)).toBe('2.5 ms');
    expect(formatDuration(30)).toBe('30 s');
    expect(formatDuration(600)).toBe('10 min');
    expect(formatDuration(3 * 3600)).toBe('3 h');
    expect(formatDuration(5 * 86400)).toBe('5 d');
  });
  it('says "never" for a signal of zero (the engine reports the largest double)', () => {
    expect(formatDuration(Number.MAX_VALUE)).toBe('never');
    expect(formatDuration(Infinity)).toBe('never');
  });
});

describe('alignTable', () => {
  it('pads text left-aligned and numbers right-aligned, counting characters not bytes', () => {
    expect(alignTable([['a', 'n'], ['μ_eff', '1'], ['b', '100']], [false, true])).toBe('a        n\nμ_eff    1\nb      100');
  });
});

const leaf = (target: string, y: number, rate: number): LeafResult => ({ path: ['M1:+1/2'], target, yield: y, rate });
const detector = (id: string, y: number, signal: number, background: number, dwell: number): DetectorResult => {
  const rate = signal + background;
  return {
    id, yield: y, rate, counts: rate * dwell, sigma: Math.sqrt(rate * dwell), signal, background, dwell,
    signalToBackground: background > 0 ? signal / background : undefined, timeToPrecision: { epsilon: 0.01, seconds: signal > 0 ? rate / (signal * signal * 1e-4) : undefined },
  };
};
const cells = (table: string, row: number) => table.split('\n')[row].trim().split(/\s{2,}/);

describe('the run tables follow the one number rule (src/beamline/numbers.ts)', () => {
  it('writes yields and rates of round-off as 0 (bench H: 3.46667e-33 at a stop)', () => {
    const t = leafTable([leaf('D1', 0.0977627, 1.635e6), leaf('stop', 3.466673899897024e-33, 1.733e-24)], 5e8);
    expect(cells(t, 2)).toEqual(['M1:+1/2', 'stop', '0', '0']);
    expect(t).not.toMatch(/e-33|e-24/);
  });
  it('writes one notation per column, as the rule does', () => {
    const t = leafTable([leaf('D1', 0.5, 808000), leaf('D2', 0.25, 1.12e7)], 1e8);
    expect(cells(t, 1)[3]).toBe('8.08e5');
    expect(cells(t, 2)[3]).toBe('1.12e7');
    expect([cells(t, 1)[3], cells(t, 2)[3]]).toEqual(formatColumn([808000, 1.12e7], { figures: 4 }));
  });
  it('prints equal S/B equally (bench A: 9.375e6 reached from both sides of it)', () => {
    const a = detector('D2', 0.09375, 9374999.999999998 * 4, 4, 10);
    const b = detector('D3', 0.09375, 9375000.000000002 * 4, 4, 10);
    const t = detectorTable([a, b], 5e8);
    expect(cells(t, 1)[4]).toBe(cells(t, 2)[4]);
    expect(cells(t, 1)[4]).toBe('9.38e6');
  });
  it('gives σ to 2 figures and the counts to its place', () => {
    const d = detector('D1', 0.375, 6.75e8, 3, 10);
    const t = detectorTable([d], 2e9);
    expect(cells(t, 1)[3]).toBe(`${formatCountsColumn([{ counts: d.counts, sigma: d.sigma }])[0]} in 10 s`);
    expect(cells(t, 1)[3]).toBe('6.750000e9 ± 8.2e4 in 10 s');
  });
  it('prints a yield with a stated error no finer than the error (bench K: DA0, 6.1e-9)', () => {
    const t = leafTable([leaf('DA1', 0.3333333, 2.333e8), leaf('DA0', 1.3719312e-8, 9.604)], 1e9, 6.1e-9);
    expect(cells(t, 2)[2]).toBe('1.4e-8');
    expect(cells(t, 1)[2]).toBe('3.33333e-1');
  });
  it('says "no signal" and S/B 0 for a detector whose signal is round-off', () => {
    const t = detectorTable([detector('DA2', 2.28e-16, 1.598e-7, 2, 20)], 1e9);
    const c = cells(t, 1);
    expect(c[1]).toBe('0');
    expect(c[4]).toBe('0');
    expect(c[5]).toBe('no signal');
  });
  it('writes the lost fraction of round-off as 0 (bench D: 2.77556e-16)', () => {
    const r = { format: 'spinyard.result', version: 1, leaves: [leaf('D1', 1, 1e9)], detectors: [], lost: 2.7755575615628914e-16, warnings: [], flux: 1e9,
      invariants: { balance: 0, maxHermiticity: 0, positive: true } } as unknown as RunResult;
    expect(formatRun(r, 'h')).toMatch(/lost: 0 of the oven flux/);
  });
});
