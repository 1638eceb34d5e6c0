import { describe, expect, it } from 'vitest';
import { all, create } from 'mathjs';
import { ATOMIC_MASS_UNIT_KG, isProblem, math, parseQuantity } from '../../src/beamline/units.ts';

/** mathjs with every factory, and the project's two extra units, to check the project's smaller instance against. */
const full = create(all);
full.createUnit('u', { definition: `${ATOMIC_MASS_UNIT_KG} kg`, prefixes: 'none' });
full.createUnit('gauss', { definition: '1e-4 T', prefixes: 'short', aliases: ['G'] });

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
    expect(full.atomicMass.toNumber('kg')).toBe(ATOMIC_MASS_UNIT_KG);
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
      const want = math.parse(unit.startsWith('/') ? `${x} * 1 ${unit}` : text).evaluate().toNumber(si);
      const got = parseQuantity(text, dim, 'p');
      if (typeof got !== 'number') return false;
      return got === want || Math.abs(got - want) <= 1e-15 * Math.abs(want);
    }), { numRuns: 2000 });
  });
});

describe('the project mathjs instance (only what a quantity needs)', () => {
  type Dim = Parameters<typeof parseQuantity>[1];
  /** Forms the samples, the default document and the tests write, and the expressions the grammar allows. */
  const forms: [string, Dim, string][] = [
    ['3.5 cm', 'length', 'm'], ['-5.7 mm', 'length', 'm'], ['0.05 mm', 'length', 'm'], ['1e-3 km', 'length', 'm'], ['2 inch', 'length', 'm'],
    ['3 cm + 2 mm', 'length', 'm'], ['6 cm / 2', 'length', 'm'], ['sqrt(2) * 1 mm', 'length', 'm'], ['cbrt(8 m^3)', 'length', 'm'],
    ['abs(-3 m)', 'length', 'm'], ['5 mm ^ 2 / 1 mm', 'length', 'm'], ['3 cm to inch', 'length', 'm'], ['3 cm in m', 'length', 'm'],
    ['90 deg', 'angle', 'rad'], ['(pi/4) rad', 'angle', 'rad'], ['(tau/8) rad', 'angle', 'rad'], ['2 deg + 1 rad', 'angle', 'rad'],
    ['5 grad', 'angle', 'rad'], ['0.5 uT', 'field', 'T'], ['20 mT', 'field', 'T'], ['5 kG', 'field', 'T'], ['1 gauss', 'field', 'T'],
    ['250 T/m', 'gradient', 'T/m'], ['20 G/cm', 'gradient', 'T/m'], ['2e9 /s', 'rate', 'Hz'], ['1/s', 'rate', 'Hz'], ['20 Hz', 'rate', 'Hz'],
    ['5 s^-1', 'rate', 'Hz'], ['10 s', 'time', 's'], ['5 ms', 'time', 's'], ['1 h', 'time', 's'], ['460 K', 'temperature', 'K'],
    ['25 degC', 'temperature', 'K'], ['32 degF', 'temperature', 'K'], ['600 m/s', 'speed', 'm/s'], ['36 km/h', 'speed', 'm/s'],
    ['6.8 GHz', 'frequency', 'Hz'], ['0.3 kHz', 'frequency', 'Hz'], ['106.905 u', 'mass', 'kg'], ['5 mg', 'mass', 'kg'],
  ];

  it('reads every form to the same SI number as mathjs with all its factories', () => {
    for (const [text, dim, si] of forms) {
      const src = text.startsWith('/') ? `1 ${text}` : text;
      expect(q(text, dim), text).toBe(full.evaluate(src).toNumber(si));
    }
    for (const text of ['1/2', '-3/2', '+1', '3 m / (30 cm)', 'exp(0)', 'log(e)', 'log10(100)', 'log(8, 2)', 'sin(pi/2)', 'cos(0 deg)', 'tan(45 deg)', '50%']) {
      expect(q(text, 'dimensionless'), text).toBe(full.evaluate(text));
    }
  });

  it('does not read mathjs physical constants as values (a quantity names its unit)', () => {
    expect(msg('speedOfLight', 'speed')).toBe('expected a speed: cannot read "speedOfLight": Undefined symbol speedOfLight');
    expect(msg('1 atomicMass', 'mass')).toMatch(/Undefined symbol atomicMass/);
    expect(msg('2 PI m', 'length')).toMatch(/Undefined symbol PI/);
    expect(msg('2i m', 'length')).toMatch(/Undefined symbol i/);
  });

  it('reads "min" and "sec" as the minute and the second (mathjs functions of those names are not in the instance)', () => {
    expect(q('5 min', 'time')).toBe(300);
    expect(q('2 sec', 'time')).toBe(2);
  });

  it('refuses operators other than arithmetic and unit conversion, naming the operator', () => {
    expect(msg('5!', 'dimensionless')).toBe('expected a plain number: operator "!" is not allowed in a quantity (use + - * / ^)');
    expect(msg('7 mod 3', 'dimensionless')).toMatch(/operator "mod" is not allowed/);
    expect(msg('2 .* 3 m', 'length')).toMatch(/operator "\.\*" is not allowed/);
    expect(msg('2 == 2', 'dimensionless')).toMatch(/operator "==" is not allowed/);
    expect(msg("3 m'", 'length')).toMatch(/operator "'" is not allowed/);
  });

  it('keeps complex results and functions outside the list refused as before', () => {
    expect(msg('sqrt(-1) m', 'length')).toBe('expected a length, got "sqrt(-1) m" (Complex), not a real quantity');
    expect(msg('gamma(3)', 'dimensionless')).toMatch(/function gamma is not allowed/);
  });
});
