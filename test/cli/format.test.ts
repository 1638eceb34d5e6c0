import { describe, expect, it } from 'vitest';
import { alignTable, formatDuration, formatNumber } from '../../src/cli/format.ts';

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
