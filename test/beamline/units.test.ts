import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_UNIT_KG, isProblem, math, parseQuantity } from '../../src/beamline/units.ts';

const q = (v: unknown, dim: Parameters<typeof parseQuantity>[1]) => parseQuantity(v, dim, 'p');
const msg = (v: unknown, dim: Parameters<typeof parseQuantity>[1]) => {
  const r = q(v, dim);
  if (!isProblem(r)) throw new Error(`expected a problem, got ${r}`);
  return r.message;
};

describe('parseQuantity', () => {
  it('reads lengths, fields, gradients and speeds into SI', () => {
    expect(q('3.5 cm', 'length')).toBeCloseTo(0.035, 15);
    expect(q('0.1 mm', 'length')).toBeCloseTo(1e-4, 18);
    expect(q('5 uT', 'field')).toBeCloseTo(5e-6, 18);
    expect(q('0.2 mT', 'field')).toBeCloseTo(2e-4, 18);
    expect(q('250 T/m', 'gradient')).toBe(250);
    expect(q('600 m/s', 'speed')).toBe(600);
    expect(q('6.8 GHz', 'frequency')).toBeCloseTo(6.8e9, 3);
    expect(q('10 s', 'time')).toBe(10);
  });

  it('reads angles in deg and rad, with (pi/4) rad as pi/4', () => {
    expect(q('90 deg', 'angle')).toBeCloseTo(Math.PI / 2, 15);
    expect(q('(pi/4) rad', 'angle')).toBeCloseTo(Math.PI / 4, 15);
  });

  it('rejects "pi/4 rad" (mathjs reads pi/(4 rad)) as a wrong dimension', () => {
    const m = msg('pi/4 rad', 'angle');
    expect(m).toMatch(/^expected an angle, got 0\.785398 rad\^-1/);
    expect(m).toContain('(pi/4) rad');
  });

  it('names the expected dimension and what was got', () => {
    expect(parseQuantity('4 rad^-1', 'angle', 'elements[2].axis.roll')).toEqual({
      path: 'elements[2].axis.roll', message: 'expected an angle, got 4 rad^-1',
    });
    expect(msg('3 cm', 'field')).toBe('expected a magnetic field, got 3 cm');
  });

  it('rejects a missing unit on a dimensional quantity', () => {
    expect(msg(3, 'length')).toMatch(/expected a length, got the plain number 3 with no unit/);
    expect(msg('3', 'length')).toMatch(/expected a length, got "3" with no unit/);
  });

  it('reads rates written "3 /s", "2e9 /s", "/s" and "1/s"', () => {
    expect(q('3 /s', 'rate')).toBe(3);
    expect(q('2e9 /s', 'rate')).toBe(2e9);
    expect(q('/s', 'rate')).toBe(1);
    expect(q('20 Hz', 'rate')).toBe(20);
  });

  it('reads temperatures in K, degC and degF', () => {
    expect(q('460 K', 'temperature')).toBe(460);
    expect(q('25 degC', 'temperature')).toBeCloseTo(298.15, 10); // 0 °C = 273.15 K (SI Brochure 9th ed., 2.3.1)
    expect(q('32 degF', 'temperature')).toBeCloseTo(273.15, 10); // 32 °F = 0 °C (NIST SP 811, B.8)
  });

  it('defines the atomic mass unit u = 1.66053906660e-27 kg (CODATA 2018)', () => {
    expect(ATOMIC_MASS_UNIT_KG).toBe(1.6605390666e-27);
    // mathjs ships CODATA 2018 atomicMass; the unit must agree with it
    expect(math.atomicMass.toNumber('kg')).toBe(ATOMIC_MASS_UNIT_KG);
    expect(q('106.905 u', 'mass')).toBeCloseTo(106.905 * 1.6605390666e-27, 40);
    expect(q('5 uT', 'field')).toBeCloseTo(5e-6, 18); // the micro prefix is still "u"
  });

  it('takes a dimensionless quantity as a JSON number or a unitless string', () => {
    expect(q(0.9, 'dimensionless')).toBe(0.9);
    expect(q('0.5', 'dimensionless')).toBe(0.5);
    expect(q('3 m / (30 cm)', 'dimensionless')).toBeCloseTo(10, 12);
    expect(msg('3 m', 'dimensionless')).toBe('expected a plain number, got 3 m');
  });

  it('rejects NaN and Infinity', () => {
    expect(msg('NaN m', 'length')).toMatch(/expected a length/);
    expect(msg('Infinity m', 'length')).toMatch(/expected a length/);
    expect(msg(Number.NaN, 'dimensionless')).toMatch(/non-finite/);
    expect(msg('Infinity', 'dimensionless')).toMatch(/got Infinity/);
  });

  it('refuses expressions that are not quantities (assignments, functions, undefined symbols)', () => {
    expect(msg('x = 3 m', 'length')).toMatch(/not a quantity/);
    expect(msg('f(x) = 2', 'dimensionless')).toMatch(/not a quantity/);
    expect(msg('evaluate("1")', 'dimensionless')).toMatch(/not allowed/);
    expect(msg('3 furlong', 'length')).toMatch(/cannot read/);
    expect(msg('', 'length')).toMatch(/empty/);
    expect(msg(null, 'length')).toMatch(/got null/);
    expect(msg('[1, 2] m', 'length')).toMatch(/not a real quantity|not a quantity|expected a length/);
  });

  it('knows the gauss, 1 G = 1e-4 T (NIST SP 811, B.8), without breaking GHz', () => {
    expect(q('20 G/cm', 'gradient')).toBeCloseTo(0.2, 15);
    expect(q('5 kG', 'field')).toBeCloseTo(0.5, 15);
    expect(q('6.8 GHz', 'frequency')).toBeCloseTo(6.8e9, 3);
  });

  it('accepts sqrt and simple arithmetic', () => {
    expect(q('sqrt(2) * 1 mm', 'length')).toBeCloseTo(Math.SQRT2 * 1e-3, 18);
  });
});

describe('parseQuantity fast path', () => {
  it('agrees with mathjs reading the whole text', async () => {
    const fc = await import('fast-check');
    const cases: [string, Parameters<typeof parseQuantity>[1], string][] = [
      ['m/s', 'speed', 'm/s'], ['km/h', 'speed', 'm/s'], ['mm', 'length', 'm'], ['uT', 'field', 'T'], ['mT', 'field', 'T'],
      ['T/m', 'gradient', 'T/m'], ['G/cm', 'gradient', 'T/m'], ['/s', 'rate', 'Hz'], ['MHz', 'frequency', 'Hz'],
      ['deg', 'angle', 'rad'], ['u', 'mass', 'kg'], ['ms', 'time', 's'], ['K', 'temperature', 'K'],
    ];
    // normal magnitudes (subnormal doubles lose relative precision in any product, and are not lab values)
    const value = fc.oneof(fc.constant(0), fc.tuple(fc.boolean(), fc.double({ min: 1e-30, max: 1e12, noNaN: true })).map(([neg, x]) => (neg ? -x : x)));
    fc.assert(fc.property(value, fc.integer({ min: 0, max: cases.length - 1 }), (x, i) => {
      const [unit, dim, si] = cases[i];
      const text = `${x} ${unit}`;
      const want = math.evaluate(unit.startsWith('/') ? `${x} * 1 ${unit}` : text).toNumber(si);
      const got = parseQuantity(text, dim, 'p');
      if (typeof got !== 'number') return false;
      return got === want || Math.abs(got - want) <= 1e-15 * Math.abs(want);
    }), { numRuns: 2000 });
  });
});
