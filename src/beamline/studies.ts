/**
 * The studies a document keeps with its line (docs/design.md, "Scans" and "Tolerances"): `scans`, the set-points
 * to sweep, and `tolerances`, how far each set-point may be off on the bench. Both name parameters as a user does
 * ("M2.axis.roll", "oven.flux"), and their quantities are read in that parameter's dimension. They are read after
 * the line, against the quantities the line's reader read.
 */
import { type Obj, type QuantityRead, type ReadCtx, at, bounded, checkKeys, choice, describe, isObj, problem } from './read.ts';
import type { FitStudy, ScanStudy, SimulationStudy, ToleranceStudy } from './types.ts';
import { quote } from './messages.ts';
import { type Dimension, dimensionName, isProblem, parseQuantity } from './units.ts';

/** The name of the quantity at a JSON path: "elements[2].axis.roll" → "M2.axis.roll" (others keep their path). */
export function parameterName(path: string, ids: readonly string[]): string {
  const m = /^elements\[(\d+)\](.*)$/.exec(path);
  if (!m) return path;
  const id = ids[Number(m[1])];
  return id === undefined ? path : `${id}${m[2]}`;
}

/** The parameter names that share `name`'s element id (the part before the first "." or "["), in order. */
export function parametersNear(names: Iterable<string>, name: string): { head: string; near: string[] } {
  const head = name.split(/[.[]/)[0];
  const near: string[] = [];
  for (const n of names) if (!n.startsWith('elements[') && n.split(/[.[]/)[0] === head) near.push(n);
  return { head, near };
}

/** The most points one stored scan may ask for (the grid of two counted), as the engine's scans. */
export const MAX_STORED_SCAN_POINTS = 1_000_000;
const SCAN_KEYS = ['title', 'parameters'];
const SCAN_PARAM_KEYS = ['parameter', 'from', 'to', 'points', 'spacing'];
const TOLERANCE_KEYS = ['parameter', 'halfWidth', 'distribution'];

interface Named {
  readonly path: string;
  readonly dimension: Dimension;
}

function lookup(ctx: ReadCtx, o: Obj, path: string, byName: ReadonlyMap<string, Named>): { name: string; slot: Named } | undefined {
  const v = o.parameter;
  const p = at(path, 'parameter');
  if (v === undefined) return problem(ctx, p, 'missing "parameter": a set-point of the line by id and key, e.g. "M2.axis.roll" or "oven.flux"');
  if (typeof v !== 'string') return problem(ctx, p, `a parameter is named by a string such as "M2.axis.roll", got ${describe(v)}`);
  const slot = byName.get(v);
  if (!slot) {
    const { head, near: all } = parametersNear(byName.keys(), v);
    const near = all.slice(0, 12);
    return problem(ctx, p, `no parameter ${quote(v)} in this line${near.length ? ` (parameters of ${head}: ${near.join(', ')})` : ' (the id before the first "." must be an element of the line, "oven" or "ambient")'}`);
  }
  return { name: v, slot };
}

function inDimension(ctx: ReadCtx, o: Obj, k: string, path: string, slot: Named & { name: string }): number | undefined {
  const p = at(path, k);
  const v = o[k];
  if (v === undefined) return problem(ctx, p, `missing ${JSON.stringify(k)}: ${dimensionName(slot.dimension)}, as ${slot.name} is`);
  const r = parseQuantity(v, slot.dimension, p);
  if (isProblem(r)) {
    ctx.problems.push({ path: p, message: `${r.message} (${slot.name} is ${dimensionName(slot.dimension)})` });
    return undefined;
  }
  return r;
}

function readScan(ctx: ReadCtx, raw: unknown, path: string, byName: ReadonlyMap<string, Named>): ScanStudy | undefined {
  if (!isObj(raw)) return problem(ctx, path, `a scan is an object {"title", "parameters"}, got ${describe(raw)}`);
  checkKeys(ctx, raw, path, SCAN_KEYS, 'a scan');
  const title = raw.title === undefined ? '' : typeof raw.title === 'string' ? raw.title : problem(ctx, at(path, 'title'), `expected a string, got ${describe(raw.title)}`);
  const ps = raw.parameters;
  const pp = at(path, 'parameters');
  if (!Array.isArray(ps) || ps.length < 1 || ps.length > 2) return problem(ctx, pp, `a scan has a list of one or two parameters, got ${Array.isArray(ps) ? `${ps.length}` : describe(ps)}`);
  const axes: ScanStudy['axes'][number][] = [];
  let total = 1;
  ps.forEach((a: unknown, i) => {
    const ap = at(pp, i);
    if (!isObj(a)) return problem(ctx, ap, `a scanned parameter is an object {"parameter", "from", "to", "points"}, got ${describe(a)}`);
    checkKeys(ctx, a, ap, SCAN_PARAM_KEYS, 'a scanned parameter');
    const found = lookup(ctx, a, ap, byName);
    const spacing = choice(ctx, a, 'spacing', ap, ['linear', 'log'] as const) ?? 'linear';
    const n = a.points;
    const points = typeof n === 'number' && Number.isInteger(n) && n >= 1 ? n : problem(ctx, at(ap, 'points'), `the number of points is a whole number ≥ 1, got ${describe(n)}`);
    if (!found) return undefined;
    const named = { ...found.slot, name: found.name };
    const from = inDimension(ctx, a, 'from', ap, named);
    const to = inDimension(ctx, a, 'to', ap, named);
    if (from === undefined || to === undefined || points === undefined) return undefined;
    if (spacing === 'log' && !(from * to > 0)) return problem(ctx, ap, `a scan spaced by equal ratios ("spacing": "log") needs both ends non-zero and of one sign`);
    total *= points;
    axes.push({ name: found.name, path: found.slot.path, from, to, points, spacing });
    return undefined;
  });
  if (axes.length === 2 && axes[0].path === axes[1].path) return problem(ctx, pp, `${axes[0].name} is scanned twice`);
  if (total > MAX_STORED_SCAN_POINTS) return problem(ctx, pp, `the scan has ${total} points, more than ${MAX_STORED_SCAN_POINTS}`);
  return axes.length === ps.length && title !== undefined ? { title, axes } : undefined;
}

function readTolerance(ctx: ReadCtx, raw: unknown, path: string, byName: ReadonlyMap<string, Named>): ToleranceStudy | undefined {
  if (!isObj(raw)) return problem(ctx, path, `a tolerance is an object {"parameter", "halfWidth", "distribution"}, got ${describe(raw)}`);
  checkKeys(ctx, raw, path, TOLERANCE_KEYS, 'a tolerance');
  const found = lookup(ctx, raw, path, byName);
  const distribution = choice(ctx, raw, 'distribution', path, ['uniform', 'normal'] as const) ?? 'uniform';
  if (!found) return undefined;
  const h = inDimension(ctx, raw, 'halfWidth', path, { ...found.slot, name: found.name });
  if (h === undefined) return undefined;
  const halfWidth = bounded(ctx, h, at(path, 'halfWidth'), 'the half-width', { positive: true, range: { max: 1e30, text: 'at most 1e30 (SI)' } }, raw.halfWidth);
  return halfWidth === undefined ? undefined : { name: found.name, path: found.slot.path, halfWidth, distribution };
}

const FIT_KEYS = ['title', 'data', 'free', 'state'];
const FREE_KEYS = ['parameter', 'lower', 'upper'];
const SIMULATION_KEYS = ['title', 'atoms', 'seed'];
/** The most atoms a kept simulation may ask for (as the engine's simulate). */
export const MAX_STORED_ATOMS = 50_000_000;

function readFit(ctx: ReadCtx, raw: unknown, path: string, byName: ReadonlyMap<string, Named>): FitStudy | undefined {
  if (!isObj(raw)) return problem(ctx, path, `a fit is an object {"title", "data", "free", "state"}, got ${describe(raw)}`);
  checkKeys(ctx, raw, path, FIT_KEYS, 'a fit');
  const title = raw.title === undefined ? '' : typeof raw.title === 'string' ? raw.title : problem(ctx, at(path, 'title'), `expected a string, got ${describe(raw.title)}`);
  const data = typeof raw.data === 'string' && raw.data.trim() !== '' ? raw.data
    : problem(ctx, at(path, 'data'), `the measured counts: a CSV file's name, relative to the document's folder, got ${describe(raw.data)}`);
  const state = raw.state === undefined ? false : typeof raw.state === 'boolean' ? raw.state : problem(ctx, at(path, 'state'), `true to fit the oven's populations too, got ${describe(raw.state)}`);
  const fr = raw.free;
  const fp = at(path, 'free');
  const free: FitStudy['free'][number][] = [];
  if (fr !== undefined && !Array.isArray(fr)) return problem(ctx, fp, `a list of set-points to fit, got ${describe(fr)}`);
  (fr as unknown[] | undefined)?.forEach((f, i) => {
    const ip = at(fp, i);
    if (!isObj(f)) return problem(ctx, ip, `a set-point to fit is {"parameter", "lower"?, "upper"?}, got ${describe(f)}`);
    checkKeys(ctx, f, ip, FREE_KEYS, 'a set-point to fit');
    const found = lookup(ctx, f, ip, byName);
    if (!found) return undefined;
    const named = { ...found.slot, name: found.name };
    const lower = f.lower === undefined ? undefined : inDimension(ctx, f, 'lower', ip, named);
    const upper = f.upper === undefined ? undefined : inDimension(ctx, f, 'upper', ip, named);
    if (lower !== undefined && upper !== undefined && !(lower < upper)) return problem(ctx, ip, 'the lower bound must be below the upper bound');
    if (free.some((x) => x.path === found.slot.path)) return problem(ctx, at(ip, 'parameter'), `${found.name} is listed twice`);
    free.push({ name: found.name, path: found.slot.path, ...(lower !== undefined ? { lower } : {}), ...(upper !== undefined ? { upper } : {}) });
    return undefined;
  });
  if (!(fr as unknown[] | undefined)?.length && state === false) return problem(ctx, fp, 'a fit needs set-points in "free", or "state": true');
  if (title === undefined || data === undefined || state === undefined) return undefined;
  if (free.length !== ((fr as unknown[] | undefined)?.length ?? 0)) return undefined;
  return { title, data, free, state };
}

function readSimulation(ctx: ReadCtx, raw: unknown, path: string): SimulationStudy | undefined {
  if (!isObj(raw)) return problem(ctx, path, `a simulation is an object {"title", "atoms", "seed"}, got ${describe(raw)}`);
  checkKeys(ctx, raw, path, SIMULATION_KEYS, 'a simulation');
  const title = raw.title === undefined ? '' : typeof raw.title === 'string' ? raw.title : problem(ctx, at(path, 'title'), `expected a string, got ${describe(raw.title)}`);
  const whole = (k: string, min: number, max: number, fallback: number) => {
    const v = raw[k];
    if (v === undefined) return fallback;
    return typeof v === 'number' && Number.isInteger(v) && v >= min && v <= max ? v : problem(ctx, at(path, k), `a whole number from ${min} to ${max}, got ${describe(v)}`);
  };
  const atoms = whole('atoms', 1, MAX_STORED_ATOMS, 100_000);
  const seed = whole('seed', 0, 0xffffffff, 1);
  return title === undefined || atoms === undefined || seed === undefined ? undefined : { title, atoms, seed };
}

/** Read the studies of a document (`scans`, `tolerances`, `fits`, `simulations`) against the quantities its line's reader read. */
export function readStudies(ctx: ReadCtx, doc: Obj, quantities: readonly QuantityRead[], ids: readonly string[]):
  { scans?: ScanStudy[]; tolerances?: ToleranceStudy[]; fits?: FitStudy[]; simulations?: SimulationStudy[] } {
  const byName = new Map<string, Named>();
  for (const q of quantities) {
    byName.set(parameterName(q.path, ids), q);
    byName.set(q.path, q);
  }
  const out: { scans?: ScanStudy[]; tolerances?: ToleranceStudy[]; fits?: FitStudy[]; simulations?: SimulationStudy[] } = {};
  const list = (k: 'scans' | 'tolerances' | 'fits' | 'simulations') => {
    const v = doc[k];
    if (v === undefined) return undefined;
    if (!Array.isArray(v)) return problem(ctx, k, `expected a list, got ${describe(v)}`);
    if (v.length > LIMITS_LIST) return problem(ctx, k, `at most ${LIMITS_LIST} entries, got ${v.length}`);
    return v as unknown[];
  };
  const scans = list('scans');
  if (scans) out.scans = scans.map((s, i) => readScan(ctx, s, at('scans', i), byName)).filter((s): s is ScanStudy => s !== undefined);
  const tols = list('tolerances');
  if (tols) {
    const seen = new Set<string>();
    out.tolerances = tols.map((t, i) => {
      const r = readTolerance(ctx, t, at('tolerances', i), byName);
      if (r && seen.has(r.path)) return problem(ctx, at(at('tolerances', i), 'parameter'), `${r.name} has a tolerance already; give each set-point one`);
      if (r) seen.add(r.path);
      return r;
    }).filter((t): t is ToleranceStudy => t !== undefined);
  }
  const fits = list('fits');
  if (fits) out.fits = fits.map((f, i) => readFit(ctx, f, at('fits', i), byName)).filter((f): f is FitStudy => f !== undefined);
  const sims = list('simulations');
  if (sims) out.simulations = sims.map((m, i) => readSimulation(ctx, m, at('simulations', i))).filter((m): m is SimulationStudy => m !== undefined);
  return out;
}

/** The most scans or tolerances a document keeps (a bound on the reader's work, far above any bench's). */
const LIMITS_LIST = 1000;

/** True when `name` is a parameter of element `id` ("M2.axis.roll" of "M2"). */
export function namesElement(name: string, id: string): boolean {
  return name.startsWith(id) && (name.length === id.length || name[id.length] === '.' || name[id.length] === '[');
}
