/**
 * Shared readers for the document: every reader records Problems in the context and returns undefined
 * on failure, so one pass reports ALL problems of a file.
 */
import type { LabelSpecies } from './labels.ts';
import { LIMITS, type Limit, within } from './limits.ts';
import { MAX_PROBLEMS, QUOTE_MAX, abbreviate, listText, quote } from './messages.ts';
import type { Axis, Problem, Rect, Vec3 } from './types.ts';
import { type Dimension, degreesText, isProblem, parseQuantity } from './units.ts';

export interface ReadCtx {
  readonly problems: Problem[];
  readonly warnings: Problem[];
  /** The line's species, when it could be resolved (labels are checked only then). */
  readonly species: LabelSpecies | undefined;
  /**
   * Every quantity read, in document order (the parameters of a line, parameters.ts): its JSON path, dimension
   * and SI value, and what the document wrote (absent where the key is optional and its default applies).
   */
  readonly quantities?: QuantityRead[];
  /** SI values that replace what the document writes at these JSON paths (a parameter set by a scan or a fit). */
  readonly values?: ReadonlyMap<string, number>;
}

/** One quantity as the reader read it. */
export interface QuantityRead {
  readonly path: string;
  readonly dimension: Dimension;
  readonly value: number;
  readonly written?: unknown;
}

export type Obj = Record<string, unknown>;

/** JSON path of a key: "oven.to", "elements[4].ports[\"F=2,mF=+1\"]"; a key longer than QUOTE_MAX is shown by its two ends. */
export function at(base: string, key: string | number): string {
  if (typeof key === 'number') return `${base}[${key}]`;
  if (key.length <= QUOTE_MAX && /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(key)) return base ? `${base}.${key}` : key;
  return `${base}[${quote(key)}]`;
}

export function problem(ctx: ReadCtx, path: string, message: string): undefined {
  if (ctx.problems.length <= MAX_PROBLEMS) ctx.problems.push({ path, message });
  return undefined;
}

export function warn(ctx: ReadCtx, path: string, message: string): void {
  if (ctx.warnings.length <= MAX_PROBLEMS) ctx.warnings.push({ path, message });
}

/** True once more problems were found than are listed: loops over a document's lists stop there. */
export function full(ctx: ReadCtx): boolean {
  return ctx.problems.length > MAX_PROBLEMS;
}

export function isObj(v: unknown): v is Obj {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

export function describe(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'a list';
  if (typeof v === 'object') return 'an object';
  if (typeof v === 'string') return quote(v);
  return `${typeof v} ${String(v)}`;
}

/** Set o[k] as an own property, whatever k is ("__proto__" included): labels and ports are keys a user writes. */
export function setOwn<T>(o: Record<string, T>, k: string, v: T): void {
  Object.defineProperty(o, k, { value: v, enumerable: true, writable: true, configurable: true });
}

/** Levenshtein distance (case-insensitive), for "did you mean" on unknown keys; both strings at most SUGGEST_MAX_CHARS. */
function distance(a: string, b: string): number {
  const x = a.toLowerCase(), y = b.toLowerCase();
  let prev = Array.from({ length: y.length + 1 }, (_, j) => j);
  for (let i = 1; i <= x.length; i++) {
    const row = [i];
    for (let j = 1; j <= y.length; j++) row[j] = Math.min(prev[j] + 1, row[j - 1] + 1, prev[j - 1] + (x[i - 1] === y[j - 1] ? 0 : 1));
    prev = row;
  }
  return prev[y.length];
}

/** Keys and names longer than this get no suggestion (no key of the format is near it, and the search would cost time). */
export const SUGGEST_MAX_CHARS = 64;
/** Candidates searched for a suggestion, at most. */
export const SUGGEST_MAX_CANDIDATES = 200;

/** " (did you mean "gradient"?)" for a near miss, else "". Bounded in time: long keys and long candidate lists are not searched in full. */
export function suggest(k: string, allowed: readonly string[]): string {
  if (k.length > SUGGEST_MAX_CHARS) return '';
  const limit = Math.max(1, Math.floor(k.length / 3));
  let best = '';
  let bd = Infinity;
  for (let i = 0; i < allowed.length && i < SUGGEST_MAX_CANDIDATES; i++) {
    const a = allowed[i];
    if (a.length > SUGGEST_MAX_CHARS || Math.abs(a.length - k.length) > limit) continue;
    const dd = distance(k, a);
    if (dd < bd) {
      bd = dd;
      best = a;
    }
  }
  return bd <= limit ? ` (did you mean ${quote(best)}?)` : '';
}

/**
 * Reject keys of `o` not in `allowed`. `why` gives keys that exist in the format but do not apply here,
 * with the reason ("group applies to hyperfine species only").
 */
export function checkKeys(ctx: ReadCtx, o: Obj, path: string, allowed: readonly string[], what: string, why: Readonly<Record<string, string>> = {}): void {
  for (const k of Object.keys(o)) {
    if (full(ctx)) return;
    if (allowed.includes(k)) continue;
    // own keys only: a key named "toString" or "__proto__" is as unknown as any other
    if (Object.hasOwn(why, k)) problem(ctx, at(path, k), `${quote(k)} does not apply here: ${why[k]}`);
    else problem(ctx, at(path, k), `unknown key ${quote(k)} in ${what}${suggest(k, allowed)}; allowed: ${allowed.join(', ')}`);
  }
}

/** An object-valued key; `required` reports its absence. */
export function object(ctx: ReadCtx, o: Obj, k: string, path: string, required: boolean): Obj | undefined {
  const v = o[k];
  const p = at(path, k);
  if (v === undefined) return required ? problem(ctx, p, `missing ${JSON.stringify(k)}`) : undefined;
  if (!isObj(v)) return problem(ctx, p, `expected an object, got ${describe(v)}`);
  return v;
}

export interface Bounds {
  /** Reject values below 0. */
  nonNegative?: boolean;
  /** Reject values ≤ 0. */
  positive?: boolean;
  /** Reject values outside [0, 1]. */
  unit?: boolean;
  /** The range of docs/design.md "Keys by element kind" (limits.ts), checked after the sign. */
  range?: Limit;
}

/** Check a number against bounds; the message names the bound. */
export function bounded(ctx: ReadCtx, n: number, p: string, what: string, b: Bounds, written?: unknown): number | undefined {
  if (b.positive && !(n > 0)) return problem(ctx, p, `${what} must be positive, got ${gotText(n, written)}`);
  if (b.nonNegative && n < 0) return problem(ctx, p, `${what} must not be negative, got ${gotText(n, written)}`);
  if (b.unit && (n < 0 || n > 1)) return problem(ctx, p, `${what} must lie in [0, 1], got ${gotText(n, written)}`);
  if (b.range && !within(n, b.range)) return problem(ctx, p, `${what} must be ${b.range.text}, got ${gotText(n, written)}`);
  return n;
}

/** What a refused quantity was, for its message: the text as written (abbreviated) where it is not the number itself. */
function gotText(n: number, written: unknown): string {
  return typeof written === 'string' && written.trim() !== String(n) ? abbreviate(written.trim()) : String(n);
}

/** A quantity of dimension `dim` at o[k], in SI. `fallback` is used when the key is absent (optional key). */
export function quantity(ctx: ReadCtx, o: Obj, k: string, dim: Dimension, path: string,
  opts: Bounds & { required?: boolean; fallback?: number; what?: string } = {}): number | undefined {
  const p = at(path, k);
  const given = ctx.values?.get(p);
  if (given !== undefined) return recorded(ctx, p, dim, bounded(ctx, given, p, opts.what ?? k, opts), o[k]);
  const v = o[k];
  if (v === undefined) {
    if (opts.fallback !== undefined) return recorded(ctx, p, dim, opts.fallback, undefined);
    return opts.required === false ? undefined : problem(ctx, p, `missing ${JSON.stringify(k)}`);
  }
  const r = parseQuantity(v, dim, p);
  if (isProblem(r)) {
    ctx.problems.push(r);
    return undefined;
  }
  return recorded(ctx, p, dim, bounded(ctx, r, p, opts.what ?? k, opts, v), v);
}

function recorded(ctx: ReadCtx, path: string, dimension: Dimension, value: number | undefined, written: unknown): number | undefined {
  if (value !== undefined && ctx.quantities) ctx.quantities.push(written === undefined ? { path, dimension, value } : { path, dimension, value, written });
  return value;
}

/** Unit vector n̂(θ, φ) = (sinθ cosφ, sinθ sinφ, cosθ). */
export function axisFromAngles(theta: number, phi: number): Vec3 {
  return { x: Math.sin(theta) * Math.cos(phi), y: Math.sin(theta) * Math.sin(phi), z: Math.cos(theta) };
}

/**
 * An axis at o[k]: {theta, phi} → n̂(θ, φ), or {roll} → n̂ = (sin α, 0, cos α) (a roll α about the beam).
 * A component along the beam (y) is accepted here; the engine warns.
 */
export function axis(ctx: ReadCtx, o: Obj, k: string, path: string): Axis | undefined {
  const a = object(ctx, o, k, path, true);
  if (!a) return undefined;
  const p = at(path, k);
  const keys = Object.keys(a);
  if (keys.length === 1 && keys[0] === 'roll') {
    const roll = quantity(ctx, a, 'roll', 'angle', p);
    if (roll === undefined) return undefined;
    return { x: Math.sin(roll), y: 0, z: Math.cos(roll), text: `roll ${degreesText(roll)}` };
  }
  if (keys.length === 2 && keys.includes('theta') && keys.includes('phi')) {
    const theta = quantity(ctx, a, 'theta', 'angle', p);
    const phi = quantity(ctx, a, 'phi', 'angle', p);
    if (theta === undefined || phi === undefined) return undefined;
    return { ...axisFromAngles(theta, phi), text: `θ ${degreesText(theta)}, φ ${degreesText(phi)}` };
  }
  return problem(ctx, p, `an axis is {"theta", "phi"} or {"roll"}, got keys ${keys.length ? listText(keys.slice(0, 100).map(quote), ', ', undefined, keys.length) : 'none'}`);
}

/** A vector {x, y, z} of dimension `dim` (all three components required), each component in `range`. */
export function vec(ctx: ReadCtx, o: Obj, k: string, dim: Dimension, path: string, range?: Limit): Vec3 | undefined {
  const v = object(ctx, o, k, path, true);
  if (!v) return undefined;
  const p = at(path, k);
  checkKeys(ctx, v, p, ['x', 'y', 'z'], 'a vector');
  const b: Bounds = range ? { range } : {};
  const x = quantity(ctx, v, 'x', dim, p, { ...b, what: 'the x component' });
  const y = quantity(ctx, v, 'y', dim, p, { ...b, what: 'the y component' });
  const z = quantity(ctx, v, 'z', dim, p, { ...b, what: 'the z component' });
  return x === undefined || y === undefined || z === undefined ? undefined : { x, y, z };
}

/** A rectangle {width, height, x?, z?} (positive sizes; x, z offsets from the beam axis, default 0). */
export function rect(ctx: ReadCtx, o: Obj, k: string, path: string): Rect | undefined {
  const r = object(ctx, o, k, path, false);
  if (!r) return undefined;
  const p = at(path, k);
  checkKeys(ctx, r, p, ['x', 'z', 'width', 'height'], 'a rectangle');
  const width = quantity(ctx, r, 'width', 'length', p, { positive: true, range: LIMITS.size, what: 'the width' });
  const height = quantity(ctx, r, 'height', 'length', p, { positive: true, range: LIMITS.size, what: 'the height' });
  const x = quantity(ctx, r, 'x', 'length', p, { fallback: 0, range: LIMITS.offset, what: 'the offset x' });
  const z = quantity(ctx, r, 'z', 'length', p, { fallback: 0, range: LIMITS.offset, what: 'the offset z' });
  if (width === undefined || height === undefined || x === undefined || z === undefined) return undefined;
  return { x, z, width, height };
}

/** A routing target at o[k]: an element id or "stop" (existence is checked on the whole line). */
export function target(ctx: ReadCtx, o: Obj, k: string, path: string, what: string): string | undefined {
  const v = o[k];
  const p = at(path, k);
  if (v === undefined) return problem(ctx, p, `missing ${JSON.stringify(k)}: ${what} has one output; route it to an element id or "stop"`);
  if (typeof v !== 'string' || v === '') return problem(ctx, p, `a target is an element id or "stop", got ${describe(v)}`);
  return v;
}

/** One of a fixed set of strings. */
export function choice<T extends string>(ctx: ReadCtx, o: Obj, k: string, path: string, options: readonly T[]): T | undefined {
  const v = o[k];
  if (v === undefined) return undefined;
  if (typeof v === 'string' && (options as readonly string[]).includes(v)) return v as T;
  return problem(ctx, at(path, k), `expected one of ${options.map((x) => JSON.stringify(x)).join(', ')}, got ${describe(v)}`);
}
