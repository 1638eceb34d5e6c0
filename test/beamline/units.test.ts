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
    expect(msg('Infinity', 'dimensionless')).toBe('expected a plain number, got "Infinity", which is not a finite number');
  });

  it('refuses expressions that are not quantities (assignments, functions, undefined symbols)', () => {
    expect(msg('x = 3 m', 'length')).toMatch(/not a quantity/);
    expect(msg('f(x) = 2', 'dimensionless')).toMatch(/not a quantity/);
    expect(msg('evaluate("1")', 'dimensionless')).toMatch(/not allowed/);
    expect(msg('3 furlong', 'length')).toBe('expected a length: cannot read "3 furlong": unknown unit or name "furlong"');
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
    for (const text of ['1/2', '-3/2', '+1', '3 m / (30 cm)', 'exp(0)', 'log(exp(1))', 'log10(100)', 'log(8, 2)', 'sin(pi/2)', 'cos(0 deg)', 'tan(45 deg)', '50%']) {
      expect(q(text, 'dimensionless'), text).toBe(full.evaluate(text));
    }
  });

  it('does not read mathjs physical constants as values (a quantity names its unit)', () => {
    expect(msg('speedOfLight', 'speed')).toBe('expected a speed: cannot read "speedOfLight": unknown unit or name "speedOfLight"');
    expect(msg('1 atomicMass', 'mass')).toMatch(/unknown unit or name "atomicMass"$/);
    expect(msg('2 PI m', 'length')).toMatch(/unknown unit or name "PI"$/);
    expect(msg('2i m', 'length')).toMatch(/unknown unit or name "i"$/);
  });

  it('reads "min" and "sec" as the minute and the second (mathjs functions of those names are not in the instance)', () => {
    expect(q('5 min', 'time')).toBe(300);
    expect(q('2 sec', 'time')).toBe(2);
  });

  it('refuses operators other than arithmetic and unit conversion, naming the operator', () => {
    expect(msg('5!', 'dimensionless')).toBe('expected a plain number: cannot read "5!": operator "!" is not allowed in a quantity (use + - * / ^)');
    expect(msg('7 mod 3', 'dimensionless')).toMatch(/operator "mod" is not allowed/);
    expect(msg('2 .* 3 m', 'length')).toMatch(/operator "\.\*" is not allowed/);
    expect(msg('2 == 2', 'dimensionless')).toMatch(/operator "==" is not allowed/);
    expect(msg("3 m'", 'length')).toMatch(/operator "'" is not allowed/);
  });

  it('keeps complex results and functions outside the list refused as before', () => {
    expect(msg('sqrt(-1) m', 'length')).toBe('expected a length, got "sqrt(-1) m", a complex number');
    expect(msg('gamma(3)', 'dimensionless')).toBe('expected a plain number: cannot read "gamma(3)": function "gamma" is not allowed in a quantity (allowed: sqrt, sin, cos, tan, exp, log, log10, abs, cbrt)');
  });
});

/** mathjs' own wording, which no message of the reader may show. */
const MATHJS_WORDS = /Undefined symbol|Unexpected type of argument|Syntax error in part|\(char \d+\)|Value expected|Units do not match|Unexpected (end|operator|part)|Parenthesis|is no angle|Too (few|many) arguments|Cannot convert|function \w+\(\) \{|\[object Object\]|native code|Complex|DenseMatrix/;

describe('quantities as a careless or hostile user writes them', () => {
  it('refuses the constant e (a typo for the exponent or a charge) and says how to write a power of ten or e', () => {
    const m = msg('2 e T', 'field');
    expect(m).toBe('expected a magnetic field: cannot read "2 e T": the constant e is not read in a quantity: write a power of ten without spaces ("2e3" is 2000), or exp(1) if e itself is meant');
    expect(msg('e', 'dimensionless')).toMatch(/the constant e is not read/);
    expect(msg('log(e)', 'dimensionless')).toMatch(/the constant e is not read/);
    expect(q('2e-3 T', 'field')).toBe(2e-3);
    expect(q('2E3 m', 'length')).toBe(2000);
    expect(q('exp(1)', 'dimensionless')).toBe(Math.E);
  });
  it('keeps pi and tau, which documents use for angles', () => {
    expect(q('(pi/4) rad', 'angle')).toBe(Math.PI / 4);
    expect(q('(tau/8) rad', 'angle')).toBe(Math.PI / 4);
  });
  it.each([['0x10 cm', '0x'], ['0X1F mm', '0X'], ['0b11 cm', '0b'], ['0o17 cm', '0o'], ['3 cm + 0x1 mm', '0x']])('refuses the radix literal %s', (text, prefix) => {
    const m = msg(text, 'length');
    expect(m.startsWith(`expected a length: cannot read "${text}": "${prefix}" starts a hexadecimal, binary or octal number at position ${text.indexOf(prefix) + 1}`)).toBe(true);
    expect(m.endsWith(': write numbers in decimal')).toBe(true);
  });
  it('still reads decimals that start with 0', () => {
    expect(q('0 cm', 'length')).toBe(0);
    expect(q('0.5 cm', 'length')).toBe(0.005);
    expect(q('05 mm', 'length')).toBe(0.005);
    expect(q('10 cm', 'length')).toBe(0.1);
  });
  it.each([['\u2212'], ['\u2012'], ['\u2013'], ['\u2014'], ['\u2010'], ['\uFE63'], ['\uFF0D']])('reads the dash U+%s as a minus sign', (dash) => {
    expect(q(`${dash}3 cm`, 'length')).toBe(-0.03);
    expect(q(`3 cm ${dash} 5 mm`, 'length')).toBeCloseTo(0.025, 15);
    expect(q(`2e${dash}3 T`, 'field')).toBe(2e-3);
  });
  it('reads the micro sign and Greek mu as the micro prefix, and any space as a space', () => {
    expect(q('5 \u00b5T', 'field')).toBe(q('5 uT', 'field'));
    expect(q('5 \u03bcT', 'field')).toBe(q('5 uT', 'field'));
    expect(q('5\u2009mm', 'length')).toBe(0.005); // thin space, as typeset
    expect(q('5\u00a0mm', 'length')).toBe(0.005); // no-break space
    expect(q('5\u202fmm', 'length')).toBe(0.005); // narrow no-break space
  });
  it('reads named units of time where a time is meant; "h" is the hour (the instance has no Planck constant)', () => {
    expect(q('5 min', 'time')).toBe(300);
    expect(q('2 h', 'time')).toBe(7200);
    expect(q('1.5 hour', 'time')).toBe(5400);
    expect(q('1 day', 'time')).toBe(86400);
    expect(msg('2 h', 'frequency')).toBe('expected a frequency, got 2 h');
    expect(msg('1 h', 'dimensionless')).toBe('expected a plain number, got 1 h');
  });
  it('names syntax mistakes and their position in the project\'s words', () => {
    expect(msg('3 cm)', 'length')).toBe('expected a length: cannot read "3 cm)": unexpected ")" at position 5');
    expect(msg('2 3', 'length')).toBe('expected a length: cannot read "2 3": unexpected "3" at position 3');
    expect(msg('(3 cm', 'length')).toBe('expected a length: cannot read "(3 cm": a closing parenthesis ")" is missing');
    expect(msg('3 +', 'length')).toBe('expected a length: cannot read "3 +": the quantity ends too early: a value or a unit is missing at its end');
    expect(msg('3 m ^ ^ 2', 'length')).toMatch(/: a value is expected at position \d+$/);
    expect(msg('1,5 mm', 'length')).toBe('expected a length: cannot read "1,5 mm": unexpected "," at position 2 (write decimals with a point: "1.5", not "1,5")');
    expect(msg('3 foo', 'length')).toBe('expected a length: cannot read "3 foo": unknown unit or name "foo"');
    expect(msg('sqrt m', 'length')).toBe('expected a length: cannot read "sqrt m": sqrt is a function: write sqrt(…)');
    expect(msg('3 cm + 2 s', 'length')).toBe('expected a length: cannot read "3 cm + 2 s": it adds, subtracts or converts quantities of different dimensions');
    expect(msg('3 cm + 2', 'length')).toBe('expected a length: cannot read "3 cm + 2": it adds or subtracts a plain number and a quantity with a unit');
    expect(msg('sin(3 m)', 'dimensionless')).toBe('expected a plain number: cannot read "sin(3 m)": sin, cos and tan take an angle or a plain number');
    expect(msg('exp(1 m)', 'dimensionless')).toBe('expected a plain number: cannot read "exp(1 m)": exp() cannot take this argument (it takes a plain number)');
    expect(msg('2 ^ (1 m)', 'dimensionless')).toBe('expected a plain number: cannot read "2 ^ (1 m)": a power takes a plain number as its exponent');
    expect(msg('3 cm to 2 m', 'length')).toBe('expected a length: cannot read "3 cm to 2 m": a conversion is written as a quantity, "to" and a unit ("3 cm to mm")');
    expect(msg('"3 cm"', 'length')).toBe('expected a length: cannot read "\\"3 cm\\"": quoted text "3 cm" inside a quantity: write the number and the unit without inner quotes');
    expect(msg('3 cm # 5 mm', 'length')).toBe('expected a length: cannot read "3 cm # 5 mm": unexpected "#" at position 6: a quantity has no comments');
    expect(msg('cm', 'length')).toBe('expected a length, got the unit "cm" with no number (write e.g. "3.5 cm")');
  });
  it('shows no mathjs wording for any of a list of broken texts', () => {
    const broken = ['3 cm)', '(3', '3 +', '−', '3 $', '3 m m m ^ ^', '1 ? 2 : 3', 'a.b', '3 cm[1]', '{a: 1}', '[1, 2] m', 'f(x) = 2', 'x = 3',
      'sqrt(1, 2)', 'sin()', 'log(3 m)', 'abs("a")', '3 cm to 5', '3 to cm', 'cm to', '3 cm; 4 cm', 'sqrt(-1) m', 'NaN m', 'Infinity', '1e999 m',
      '0bar', '3 €', 'true', 'null m', '((((', '))))', '3 .* 2', "3'", '2i', 'speedOfLight', 'i^2', '1 deg^2 to rad', '5 m / 0', '0 m / 0'];
    for (const t of broken) {
      for (const dim of ['length', 'dimensionless'] as const) {
        const r = q(t, dim);
        if (!isProblem(r)) throw new Error(`${t} read as ${r}`);
        expect(r.message, t).not.toMatch(MATHJS_WORDS);
        expect(r.message.length, t).toBeLessThanOrEqual(500);
      }
    }
  });
  it('shows a value in the unit written, never with an automatic prefix (quecto, yocto, quetta)', () => {
    expect(msg('1e-40 s', 'length')).toBe('expected a length, got 1e-40 s');
    expect(msg('5e-25 kg', 'length')).toBe('expected a length, got 5e-25 kg');
    expect(msg('1e-31 T', 'length')).toBe('expected a length, got 1e-31 T');
    expect(msg('1e30 m', 'time')).toBe('expected a time, got 1e+30 m');
    expect(msg('3 cm * 2 s', 'length')).toBe('expected a length, got 6 cm s');
  });
  it('refuses a non-finite value in the project\'s words', () => {
    expect(msg('1e400 m', 'length')).toBe('expected a length, got "1e400 m", which is not a finite number');
    expect(msg('10^400 m', 'length')).toBe('expected a length, got "10^400 m", which is not a finite number');
    expect(msg('Infinity m', 'length')).toBe('expected a length, got "Infinity m", which is not a finite number');
    expect(msg('NaN', 'dimensionless')).toBe('expected a plain number, got "NaN", which is not a finite number');
  });
  it('refuses a text longer than a quantity, quoting it by its two ends', () => {
    const m = msg(`${'1'.repeat(299)}m`, 'length');
    expect(m).toMatch(/^expected a length: cannot read "1{28}…1{27}m" \(300 characters\): the text is 300 characters long; a quantity is at most 256$/);
  });
});
