import { describe, expect, it } from 'vitest';
import { derivativeUnit, FIGURES, ROUND_OFF, formatColumn, formatCountsColumn, formatValue, isRoundOff, roundToPlace, writeRounded } from '../../src/beamline/numbers.ts';

const yieldSpec = { figures: FIGURES.yield, floor: ROUND_OFF };

describe('the number rule: round-off is 0', () => {
  it('writes yields below the engine round-off (1e-12 of the flux) as 0', () => {
    // bench H's ports that the analyser closes, and bench D's lost fraction (sums of cancelling traces)
    expect(formatValue(3.466673899897024e-33, yieldSpec)).toBe('0');
    expect(formatValue(1.5407439555097885e-33, yieldSpec)).toBe('0');
    expect(formatValue(2.7755575615628914e-16, yieldSpec)).toBe('0');
    expect(formatValue(-2.7755575615628914e-16, yieldSpec)).toBe('0');
    expect(formatValue(1.1796119636642288e-15, yieldSpec)).toBe('0');
  });
  it('keeps a small yield above the round-off', () => {
    expect(formatValue(2.5e-11, yieldSpec)).toBe('2.5e-11');
    expect(formatValue(1.37193e-8, yieldSpec)).toBe('1.37193e-8');
  });
  it('scales the floor with the flux for rates', () => {
    const flux = 5e8;
    expect(formatValue(1.733e-24, { figures: FIGURES.rate, floor: ROUND_OFF * flux })).toBe('0');
    expect(formatValue(0.01, { figures: FIGURES.rate, floor: ROUND_OFF * flux })).toBe('0.01');
    expect(isRoundOff(1.733e-24, flux)).toBe(true);
    expect(isRoundOff(0, flux)).toBe(false);
    expect(isRoundOff(1e-3, flux)).toBe(false);
  });
});

describe('the number rule: equal values print equally', () => {
  it('rounds the decimal value, not the binary noise around it (bench A: S/B 9.375e6 on both sides)', () => {
    expect(formatColumn([9374999.999999998, 9375000.000000002], { figures: 3 })).toEqual(['9.38e6', '9.38e6']);
    expect(formatColumn([3124999.9999999995, 3125000.0000000005], { figures: 3 })).toEqual(['3.13e6', '3.13e6']);
    // a rate of 3.1875e8 reached as a leaf sum and as a detector sum
    expect(formatValue(318749999.99999994, 4)).toBe(formatValue(318750000.00000006, 4));
  });
  it('rounds half away from zero on decimal digits (1.005 is 1.01, as written)', () => {
    expect(formatValue(1.005, 3)).toBe('1.01');
    expect(formatValue(-1.005, 3)).toBe('-1.01');
    expect(formatValue(0.37499999999999967, 6)).toBe('0.375');
  });
  it('carries a rounding into the next power of ten', () => {
    expect(formatValue(999999.7, 4)).toBe('1e6');
    expect(formatValue(0.099999999, 3)).toBe('0.1');
  });
});

describe('the number rule: one notation per column', () => {
  it('never writes 808000 beside 1.12e7', () => {
    expect(formatColumn([808000, 1.12e7], { figures: 4 })).toEqual(['8.08e5', '1.12e7']);
  });
  it('writes a column plain when every value lies in [1e-4, 1e6), zeros included', () => {
    expect(formatColumn([0.0977627, 0.5, 0, 3.4e-33], yieldSpec)).toEqual(['0.0977627', '0.5', '0', '0']);
  });
  it('leaves undefined cells blank and writes an unbounded value as ∞', () => {
    expect(formatColumn([1, undefined, Infinity], { figures: 3 }, { blank: '—' })).toEqual(['1', '—', '∞']);
  });
  it('uses the minus sign it is given', () => {
    expect(formatColumn([-5.680648], { figures: 4 }, { minus: '−' })).toEqual(['−5.681']);
  });
});

describe('the number rule: σ and stated errors', () => {
  it('writes σ to 2 figures and the counts to the same decimal place', () => {
    expect(formatCountsColumn([{ counts: 232.1, sigma: 15.234 }])).toEqual(['232 ± 15']);
    expect(formatCountsColumn([{ counts: 40, sigma: 6.3246 }])).toEqual(['40.0 ± 6.3']);
    // a column with a count above 1e6 is written with exponents throughout; zeros to σ's place are kept
    expect(formatCountsColumn([{ counts: 1.25e8, sigma: 11180.34 }, { counts: 232.1, sigma: 15.234 }]))
      .toEqual(['1.25000e8 ± 1.1e4', '2.32e2 ± 1.5e1']);
  });
  it('writes counts of round-off as 0 ± 0', () => {
    expect(formatCountsColumn([{ counts: 5.2e-23, sigma: 7.2e-12, floor: ROUND_OFF * 5e8 * 30 }])).toEqual(['0 ± 0']);
  });
  it('prints a value with a stated error to the place of the error (bench K: DA0 with a 6.1e-9 quadrature error)', () => {
    expect(formatValue(1.3719312e-8, { ...yieldSpec, error: 6.1e-9 })).toBe('1.4e-8');
    expect(formatValue(1.3719312e-8, { ...yieldSpec, error: 3.1e-9 })).toBe('1.4e-8');
    // where the figures of the column are coarser than the error, the figures rule
    expect(formatValue(0.33333333333, { ...yieldSpec, error: 6.1e-9 })).toBe('0.333333');
    // a value below its error is consistent with 0
    expect(formatValue(2.28e-10, { ...yieldSpec, error: 6.1e-9 })).toBe('0');
    // zeros up to the error's place are significant and kept
    expect(formatValue(1.2000001e-6, { ...yieldSpec, error: 3e-9 })).toBe('1.200e-6');
  });
  it('takes counts no finer than a stated error of the counts', () => {
    expect(formatCountsColumn([{ counts: 232.1, sigma: 15.234, error: 122 }])).toEqual(['200 ± 15']);
  });
  it('rounds to a place', () => {
    expect(writeRounded(roundToPlace(1234.5, 2), 'plain')).toBe('1200');
    expect(writeRounded(roundToPlace(0.04, -1), 'plain')).toBe('0');
    expect(writeRounded(roundToPlace(0.06, -1), 'plain')).toBe('0.1');
    // a carry into the next power of ten keeps the place: 9.6 to the units is 10, 0.996 to 1e-2 is 1.00
    expect(writeRounded(roundToPlace(9.604, 0), 'plain')).toBe('10');
    expect(writeRounded(roundToPlace(9.604, 0), 'exponent')).toBe('1.0e1');
    expect(writeRounded(roundToPlace(0.996, -2), 'plain')).toBe('1.00');
  });
});

describe('derivativeUnit', () => {
  it('writes ∂S/∂p (S in counts/s) per the parameter\'s unit, as a plain number for the flux (counts per atom), in /s for a plain number', () => {
    expect(derivativeUnit('deg')).toBe('/s per deg');
    expect(derivativeUnit('T')).toBe('/s per T');
    expect(derivativeUnit('/s')).toBe('');
    expect(derivativeUnit('')).toBe('/s');
  });
});
