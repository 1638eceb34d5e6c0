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
  piDependencies, eDependencies, tauDependencies, InfinityDependencies, NaNDependencies,
  type FactoryFunctionMap, type MathNode, type Unit,
} from 'mathjs';
import type { Problem } from './types.ts';

declare module 'mathjs' {
  /** Exported by mathjs (its generated dependency groups) like InfinityDependencies, but missing from its types. */
  export const NaNDependencies: FactoryFunctionMap;
}

/**
 * The project's mathjs instance (docs/design.md, "Document format v1"), made of only what a quantity needs: the
 * parser and units, the operators of OPERATORS, the functions of FUNCTIONS and the constants pi, e, tau,
 * Infinity and NaN (Infinity and NaN so that "Infinity m" is refused as non-finite, not as unknown). A bundle
 * keeps these factories and drops the rest of mathjs (the app's worker and main chunk, the command line).
 * Names that are not here (mathjs' physical constants such as speedOfLight, the imaginary unit i, its other
 * functions) are not read as values; a name that is also a unit ("min", "sec") reads as that unit.
 */
export const math = create({
  parseDependencies, unitDependencies, createUnitDependencies, formatDependencies, typeOfDependencies,
  addDependencies, subtractDependencies, multiplyDependencies, divideDependencies, powDependencies,
  unaryMinusDependencies, unaryPlusDependencies, toDependencies,
  sqrtDependencies, sinDependencies, cosDependencies, tanDependencies, expDependencies, logDependencies,
  log10Dependencies, absDependencies, cbrtDependencies,
  piDependencies, eDependencies, tauDependencies, InfinityDependencies, NaNDependencies,
});

/**
 * Unified atomic mass unit u = m(¹²C)/12 = 1.660 539 066 60(50)e-27 kg
 * (CODATA 2018, Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021); NIST SP 961 (2019)). mathjs has the
 * constant (`atomicMass`) but no unit.
 */
export const ATOMIC_MASS_UNIT_KG = 1.6605390666e-27;
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

function checkNodes(node: MathNode): string | undefined {
  let bad: string | undefined;
  node.traverse((n: MathNode) => {
    if (bad) return;
    if (!NODE_TYPES.has(n.type)) bad = `"${n.toString()}" is not a quantity`;
    else if (n.type === 'FunctionNode') {
      const name = (n as unknown as { fn: { name?: string } }).fn.name ?? '';
      if (!FUNCTIONS.has(name)) bad = `function ${name || '?'} is not allowed in a quantity`;
    } else if (n.type === 'OperatorNode') {
      const { op, fn } = n as unknown as { op: string; fn: string };
      if (!OPERATORS.has(fn)) bad = `operator "${op}" is not allowed in a quantity (use + - * / ^)`;
    }
  });
  return bad;
}

const cache = new Map<string, { value: unknown } | { error: string }>();

/** Evaluate a quantity string with the project's mathjs instance (no scope, no assignments). */
export function evaluateQuantity(text: string): { value: unknown } | { error: string } {
  const hit = cache.get(text);
  if (hit) return hit;
  let src = text.trim();
  // "/s" alone reads as "1/s" (docs/design.md writes rates "3 /s"; mathjs needs a value before "/").
  if (src.startsWith('/')) src = `1 ${src}`;
  let out: { value: unknown } | { error: string };
  try {
    const node = math.parse(src);
    const bad = checkNodes(node);
    out = bad ? { error: bad } : { value: node.evaluate({}) };
  } catch (e) {
    out = { error: `cannot read "${text}": ${(e as Error).message}` };
  }
  if (cache.size > 5000) cache.clear();
  cache.set(text, out);
  return out;
}

function show(value: unknown): string {
  return math.format(value as never, { precision: 6 });
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
  if (dim !== 'dimensionless') {
    const m = SIMPLE.exec(value);
    if (m) {
      const f = simpleFactor(m[2], dim);
      if (f !== undefined) {
        const n = Number(m[1]) * f;
        if (Number.isFinite(n)) return n;
      }
    }
  }
  const r = evaluateQuantity(value);
  if ('error' in r) return fail(path, `expected ${want}: ${r.error}`);
  const v = r.value;
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return fail(path, `expected ${want}, got ${v}`);
    if (dim === 'dimensionless') return v;
    return fail(path, `expected ${want}, got "${value}" with no unit (write e.g. "${DIMENSIONS[dim].example}")`);
  }
  if (!isUnit(v)) {
    return fail(path, `expected ${want}, got "${value}" (${math.typeOf(v)}), not a real quantity`);
  }
  if (typeof v.value !== 'number' && v.value !== null) {
    return fail(path, `expected ${want}, got "${value}" (${math.typeOf(v.value)}), not a real quantity`);
  }
  if (dim === 'dimensionless') {
    if (v.dimensions.every((d) => d === 0)) {
      const n = v.toNumber('');
      return Number.isFinite(n) ? n : fail(path, `expected ${want}, got ${show(v)}`);
    }
    return fail(path, `expected ${want}, got ${show(v)}`);
  }
  const target = siUnit(dim);
  if (!v.equalBase(target)) {
    let hint = '';
    if (value.includes('/') && v.dimensions.every((d, i) => d === -target.dimensions[i])) {
      hint = ` (mathjs reads "a/b unit" as a/(b unit): write "(a/b) unit", e.g. "(pi/4) rad")`;
    }
    return fail(path, `expected ${want}, got ${show(v)}${hint}`);
  }
  const n = v.toNumber(DIMENSIONS[dim].si);
  if (!Number.isFinite(n)) return fail(path, `expected ${want}, got ${show(v)}`);
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
