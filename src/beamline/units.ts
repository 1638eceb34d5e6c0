/**
 * Quantities of the document: strings with units ("250 T/m", "(pi/4) rad", "2e9 /s") read by ONE mathjs
 * instance and converted to SI numbers. The dimension is checked with mathjs' unit system (equalBase),
 * never guessed: a missing or wrong unit on a dimensional quantity is a Problem that names the expected
 * dimension and what was got.
 */
import {
  create, parseDependencies, unitDependencies, createUnitDependencies, formatDependencies, typeOfDependencies,
  addDependencies, subtractDependencies, multiplyDependencies, divideDependencies, powDependencies,
  unaryMinusDependencies, unaryPlusDependencies, toDependencies,
  sqrtDependencies, sinDependencies, cosDependencies, tanDependencies, expDependencies, logDependencies,
  log10Dependencies, absDependencies, cbrtDependencies,
  piDependencies, tauDependencies, InfinityDependencies, NaNDependencies,
  type FactoryFunctionMap, type MathNode, type Unit,
} from 'mathjs';
import { abbreviate, groupDigits, quote } from './messages.ts';
import { ATOMIC_MASS_KG } from '../physics/constants.ts';
import type { Problem } from './types.ts';

declare module 'mathjs' {
  /** Exported by mathjs (its generated dependency groups) like InfinityDependencies, but missing from its types. */
  export const NaNDependencies: FactoryFunctionMap;
}

/**
 * The project's mathjs instance (docs/design.md, "Document format v1"), made of only what a quantity needs: the
 * parser and units, the operators of OPERATORS, the functions of FUNCTIONS and the constants pi, tau,
 * Infinity and NaN (Infinity and NaN so that "Infinity m" is refused as non-finite, not as unknown). A bundle
 * keeps these factories and drops the rest of mathjs (the app's worker and main chunk, the command line).
 * Names that are not here (mathjs' physical constants such as speedOfLight or Planck's h, the imaginary unit i,
 * its other functions) are not read as values; a name that is also a unit ("min", "sec", "h") reads as that
 * unit. The constant e is left out and refused by name: in "2 e T" it is a typo for "2e" or a charge, not
 * 2.718 (exp(1) is e).
 */
export const math = create({
  parseDependencies, unitDependencies, createUnitDependencies, formatDependencies, typeOfDependencies,
  addDependencies, subtractDependencies, multiplyDependencies, divideDependencies, powDependencies,
  unaryMinusDependencies, unaryPlusDependencies, toDependencies,
  sqrtDependencies, sinDependencies, cosDependencies, tanDependencies, expDependencies, logDependencies,
  log10Dependencies, absDependencies, cbrtDependencies,
  piDependencies, tauDependencies, InfinityDependencies, NaNDependencies,
});

/** The unit u = m(¹²C)/12 in kg (src/physics/constants.ts, CODATA 2018). mathjs has the constant (`atomicMass`) but no unit. */
export const ATOMIC_MASS_UNIT_KG = ATOMIC_MASS_KG;
math.createUnit('u', { definition: `${ATOMIC_MASS_UNIT_KG} kg`, prefixes: 'none' });

/** The gauss, G = 1e-4 T exactly (NIST SP 811 (2008), B.8), as labs still quote fields and gradients ("20 G/cm"). */
math.createUnit('gauss', { definition: '1e-4 T', prefixes: 'short', aliases: ['G'] });

export type Dimension =
  | 'length' | 'angle' | 'field' | 'gradient' | 'rate' | 'time' | 'temperature'
  | 'speed' | 'frequency' | 'mass' | 'dimensionless';

/** SI unit each dimension is converted to, and how a message names it. */
const DIMENSIONS: Readonly<Record<Exclude<Dimension, 'dimensionless'>, { si: string; name: string; example: string }>> = {
  length: { si: 'm', name: 'a length', example: '3.5 cm' },
  angle: { si: 'rad', name: 'an angle', example: '90 deg' },
  field: { si: 'T', name: 'a magnetic field', example: '0.8 T' },
  gradient: { si: 'T/m', name: 'a field gradient', example: '250 T/m' },
  rate: { si: 'Hz', name: 'a rate', example: '3 /s' },
  time: { si: 's', name: 'a time', example: '10 s' },
  temperature: { si: 'K', name: 'a temperature', example: '460 K' },
  speed: { si: 'm/s', name: 'a speed', example: '600 m/s' },
  frequency: { si: 'Hz', name: 'a frequency', example: '6.8 GHz' },
  mass: { si: 'kg', name: 'a mass', example: '106.905 u' },
};

/** How a message names a dimension: "an angle", "a plain number". */
export function dimensionName(dim: Dimension): string {
  return dim === 'dimensionless' ? 'a plain number' : DIMENSIONS[dim].name;
}

const siUnits = new Map<Dimension, Unit>();
function siUnit(dim: Exclude<Dimension, 'dimensionless'>): Unit {
  let u = siUnits.get(dim);
  if (!u) {
    u = math.unit(DIMENSIONS[dim].si);
    siUnits.set(dim, u);
  }
  return u;
}

/** Functions a quantity may use; nothing that assigns, defines or reaches into the parser. */
const FUNCTIONS = new Set(['sqrt', 'sin', 'cos', 'tan', 'exp', 'log', 'log10', 'abs', 'cbrt']);
/** Operators a quantity may use (mathjs' function names): arithmetic, and "to"/"in" between units. */
const OPERATORS = new Set(['add', 'subtract', 'multiply', 'divide', 'pow', 'unaryMinus', 'unaryPlus', 'to']);
const NODE_TYPES = new Set(['ConstantNode', 'SymbolNode', 'OperatorNode', 'ParenthesisNode', 'FunctionNode']);
/** The constants a quantity may name ("(pi/4) rad", "(tau/8) rad"). */
const CONSTANTS = new Set(['pi', 'tau']);

/** Longest quantity text read (a quantity is a number and a unit, or a short expression of them). */
export const QUANTITY_MAX_CHARS = 256;

/** Unicode dashes a pasted text uses as a minus sign: hyphen, figure dash, en and em dash, minus sign, small and full-width forms. */
const DASHES = /[\u2010-\u2015\u2212\uFE58\uFE63\uFF0D]/g;
/** White space of any kind (no-break, thin, narrow no-break spaces from typeset text, tabs, line breaks). */
const SPACES = /\s/g;
/** The micro sign and the Greek mu before a unit ("5 µT"): mathjs writes the prefix "u". */
const MICRO = /[\u00B5\u03BC](?=[A-Za-z])/g;
/** Hexadecimal, binary and octal literals, which mathjs reads ("0x10" = 16) and a quantity does not. */
const RADIX = /(?<![\w.])0(?:[xX][0-9a-fA-F]|[bB][01]|[oO][0-7])/;

/** The text mathjs reads: Unicode dashes as minus, any space as a space, µ as the micro prefix "u". Each replacement keeps one character for one, so positions agree. */
function normalize(text: string): string {
  return text.replace(DASHES, '-').replace(SPACES, ' ').replace(MICRO, 'u');
}

type Parsed = { value: unknown } | { error: string };

/** What is wrong with a parsed quantity's nodes, in the project's words, or undefined. */
function checkNodes(node: MathNode): string | undefined {
  let bad: string | undefined;
  node.traverse((n: MathNode, path: string) => {
    if (bad) return;
    if (!NODE_TYPES.has(n.type)) {
      bad = `${quote(n.toString())} is not a quantity (a quantity is a number and a unit, with + - * / ^ and parentheses)`;
    } else if (n.type === 'FunctionNode') {
      const name = (n as unknown as { fn: { name?: string } }).fn.name ?? '';
      if (!FUNCTIONS.has(name)) bad = `function ${quote(name || '?')} is not allowed in a quantity (allowed: ${[...FUNCTIONS].join(', ')})`;
    } else if (n.type === 'OperatorNode') {
      const { op, fn } = n as unknown as { op: string; fn: string };
      if (!OPERATORS.has(fn)) bad = `operator "${op}" is not allowed in a quantity (use + - * / ^)`;
    } else if (n.type === 'ConstantNode') {
      const v = (n as unknown as { value: unknown }).value;
      if (typeof v !== 'number') bad = typeof v === 'string' ? `quoted text ${quote(v)} inside a quantity: write the number and the unit without inner quotes` : `${quote(String(v))} is not a number`;
    } else if (n.type === 'SymbolNode' && path !== 'fn') {
      bad = checkSymbol((n as unknown as { name: string }).name);
    }
  });
  return bad;
}

/** A name in a quantity: a unit, pi or tau; anything else is refused with the reason. */
function checkSymbol(name: string): string | undefined {
  if (CONSTANTS.has(name)) return undefined;
  if (name === 'e') return 'the constant e is not read in a quantity: write a power of ten without spaces ("2e3" is 2000), or exp(1) if e itself is meant';
  if (name === 'Infinity' || name === 'NaN') return `${name} is not a finite number`;
  if (FUNCTIONS.has(name)) return `${name} is a function: write ${name}(…)`;
  if (math.Unit.isValuelessUnit(name)) return undefined;
  return `unknown unit or name ${quote(name)}`;
}

/** A mathjs error in the project's words: the kind of mistake and, for a syntax error, its position in the text as written. */
function mathjsWords(e: unknown, written: string, shift: number): string {
  if (e instanceof RangeError) return 'the expression is nested too deeply';
  const m = e instanceof Error ? e.message : '';
  const charAt = /\(char (\d+)\)/.exec(m);
  const pos = charAt ? Math.max(1, Number(charAt[1]) - shift) : undefined;
  const where = pos === undefined ? '' : ` at position ${pos}`;
  const decimalComma = /\d,\d/.test(written) ? ' (write decimals with a point: "1.5", not "1,5")' : '';
  if (/^Unexpected end of expression/.test(m)) return 'the quantity ends too early: a value or a unit is missing at its end';
  if (/^Value expected/.test(m)) return `a value is expected${where}`;
  if (/^Parenthesis \) expected/.test(m)) return 'a closing parenthesis ")" is missing';
  if (/^Unexpected (operator|part)|^Syntax error in part/.test(m) && pos !== undefined) {
    const c = [...written.slice(pos - 1)][0] ?? '';
    return `unexpected ${c ? quote(c) : 'character'}${where}${decimalComma}`;
  }
  if (/^Units do not match/.test(m)) return 'it adds, subtracts or converts quantities of different dimensions';
  if (/in function (add|subtract)(Scalar)? /.test(m)) return 'it adds or subtracts a plain number and a quantity with a unit';
  if (/in function pow /.test(m)) return 'a power takes a plain number as its exponent';
  if (/in function to |^Cannot convert to a unit with a value/.test(m)) return 'a conversion is written as a quantity, "to" and a unit ("3 cm to mm")';
  const badNumber = /^String "(.*)" is not a valid number/.exec(m);
  if (badNumber) return `${quote(badNumber[1])} is not a valid number`;
  if (/^Unit in function \w+ is no angle/.test(m)) return 'sin, cos and tan take an angle or a plain number';
  const fn = /in function (\w+)/.exec(m)?.[1];
  if (fn && FUNCTIONS.has(fn)) {
    if (/^Too (few|many) arguments/.test(m)) return `${fn}() takes ${fn === 'log' ? 'one or two arguments' : 'one argument'}`;
    return `${fn}() cannot take this argument${fn === 'exp' || fn === 'log' || fn === 'log10' ? ' (it takes a plain number)' : ''}`;
  }
  if (pos !== undefined) return `it cannot be read${where}${decimalComma}`;
  return `it is not a quantity (a quantity is a number and a unit, with + - * / ^ and parentheses)${decimalComma}`;
}

const cache = new Map<string, Parsed>();

/** Evaluate a quantity string with the project's mathjs instance (no scope, no assignments); errors in the project's words. */
export function evaluateQuantity(text: string): Parsed {
  const hit = cache.get(text);
  if (hit) return hit;
  const out = evaluateUncached(text);
  if (cache.size > 5000) cache.clear();
  cache.set(text, out);
  return out;
}

function evaluateUncached(text: string): Parsed {
  if (text.length > QUANTITY_MAX_CHARS) return { error: `the text is ${groupDigits(text.length)} characters long; a quantity is at most ${QUANTITY_MAX_CHARS}` };
  let src = normalize(text);
  const hash = src.indexOf('#');
  if (hash >= 0) return { error: `unexpected "#" at position ${hash + 1}: a quantity has no comments` };
  const radix = RADIX.exec(src);
  if (radix) return { error: `${quote(radix[0].slice(0, 2))} starts a hexadecimal, binary or octal number at position ${radix.index + 1}: write numbers in decimal` };
  // "/s" alone reads as "1/s" (docs/design.md writes rates "3 /s"; mathjs needs a value before "/").
  let shift = 0;
  const lead = src.length - src.trimStart().length;
  if (src.startsWith('/', lead)) {
    src = `${src.slice(0, lead)}1 ${src.slice(lead)}`;
    shift = 2;
  }
  let node: MathNode;
  try {
    node = math.parse(src);
  } catch (e) {
    return { error: mathjsWords(e, text, shift) };
  }
  const bad = checkNodes(node);
  if (bad) return { error: bad };
  try {
    return { value: node.evaluate({}) };
  } catch (e) {
    return { error: mathjsWords(e, text, shift) };
  }
}

/** A value as a message shows it: the number in the units as written ("0.785398 rad^-1", "1e-40 s"), never an automatic prefix. */
function show(value: Unit): string {
  const u = value.clone();
  (u as unknown as { fixPrefix: boolean }).fixPrefix = true;
  return abbreviate(math.format(u as never, { precision: 6 }));
}

function fail(path: string, message: string): Problem {
  return { path, message };
}

function isUnit(v: unknown): v is Unit {
  return math.isUnit(v);
}

/** "<number> <unit>" with a plain product/quotient of units: read as number × (1 unit), the unit read once. */
const SIMPLE = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*((?:\/\s*)?[A-Za-z]+(?:\^-?\d+)?(?:\s*[/*]\s*[A-Za-z]+(?:\^-?\d+)?)*)\s*$/;
const unitFactors = new Map<string, number | null>();

/** SI factor of a unit text for `dim`, or undefined when the fast path does not apply (then mathjs reads the whole text). */
function simpleFactor(unitText: string, dim: Exclude<Dimension, 'dimensionless'>): number | undefined {
  const key = `${dim} ${unitText}`;
  let f = unitFactors.get(key);
  if (f === undefined) {
    const r = evaluateQuantity(`1 ${unitText}`);
    const v = 'value' in r ? r.value : undefined;
    // offset units (degC, degF) do not scale, and other dimensions need mathjs' message: leave both to mathjs
    const ok = isUnit(v) && typeof v.value === 'number' && v.units.every((x) => x.unit.offset === 0) && v.equalBase(siUnit(dim));
    f = ok ? (v as Unit).toNumber(DIMENSIONS[dim].si) : null;
    if (unitFactors.size > 1000) unitFactors.clear();
    unitFactors.set(key, f);
  }
  return f ?? undefined;
}

/**
 * Read one quantity of dimension `dim` and return it in SI (m, rad, T, T/m, 1/s, s, K, m/s, Hz, kg), or a
 * Problem at `path`. A dimensionless quantity may be a JSON number or a unitless string; every other
 * dimension needs a string with a unit of that dimension. NaN and ±Infinity are rejected.
 */
export function parseQuantity(value: unknown, dim: Dimension, path: string): number | Problem {
  const want = dimensionName(dim);
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) return fail(path, `expected ${want}, got a non-finite number`);
    if (dim === 'dimensionless') return value;
    return fail(path, `expected ${want}, got the plain number ${value} with no unit (write e.g. "${DIMENSIONS[dim].example}")`);
  }
  if (typeof value !== 'string') {
    const got = value === null ? 'null' : Array.isArray(value) ? 'a list' : typeof value === 'object' ? 'an object' : typeof value;
    return fail(path, `expected ${want}${dim === 'dimensionless' ? '' : ` as a string with a unit (e.g. "${DIMENSIONS[dim].example}")`}, got ${got}`);
  }
  if (value.trim() === '') return fail(path, `expected ${want}, got an empty string`);
  if (dim !== 'dimensionless' && value.length <= QUANTITY_MAX_CHARS) {
    const m = SIMPLE.exec(normalize(value));
    if (m) {
      const f = simpleFactor(m[2], dim);
      if (f !== undefined) {
        const n = Number(m[1]) * f;
        if (Number.isFinite(n)) return n;
      }
    }
  }
  const r = evaluateQuantity(value);
  if ('error' in r) return fail(path, `expected ${want}: cannot read ${quote(value)}: ${r.error}`);
  const v = r.value;
  const notFinite = `expected ${want}, got ${quote(value)}, which is not a finite number`;
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return fail(path, notFinite);
    if (dim === 'dimensionless') return v;
    return fail(path, `expected ${want}, got ${quote(value)} with no unit (write e.g. "${DIMENSIONS[dim].example}")`);
  }
  if (!isUnit(v) || (typeof v.value !== 'number' && v.value !== null)) {
    const complex = math.typeOf(isUnit(v) ? v.value : v) === 'Complex';
    return fail(path, `expected ${want}, got ${quote(value)}, ${complex ? 'a complex number' : 'not a number with a unit'}`);
  }
  if (v.value === null) return fail(path, `expected ${want}, got the unit ${quote(value)} with no number (write e.g. "${dim === 'dimensionless' ? '1' : DIMENSIONS[dim].example}")`);
  if (!Number.isFinite(v.value)) return fail(path, notFinite);
  if (dim === 'dimensionless') {
    if (v.dimensions.every((d) => d === 0)) {
      const n = v.toNumber('');
      return Number.isFinite(n) ? n : fail(path, notFinite);
    }
    return fail(path, `expected ${want}, got ${show(v)}`);
  }
  const target = siUnit(dim);
  if (!v.equalBase(target)) {
    let hint = '';
    if (value.includes('/') && v.dimensions.every((d, i) => d === -target.dimensions[i])) {
      hint = ` ("a/b unit" reads as a/(b unit): write "(a/b) unit", e.g. "(pi/4) rad")`;
    }
    return fail(path, `expected ${want}, got ${show(v)}${hint}`);
  }
  const n = v.toNumber(DIMENSIONS[dim].si);
  if (!Number.isFinite(n)) return fail(path, notFinite);
  return n;
}

/** True when parseQuantity returned a Problem. */
export function isProblem(x: unknown): x is Problem {
  return typeof x === 'object' && x !== null && 'message' in x && 'path' in x;
}

/** Format an SI angle in degrees for an axis text ("60°"). */
export function degreesText(rad: number): string {
  const d = (rad * 180) / Math.PI;
  return `${Number(d.toPrecision(6))}°`;
}
