/**
 * Scans (docs/design.md, "Scans"): a compiled line (plan.ts) evaluated at every value of one parameter, or on the
 * grid of two, each addressed by its name ("M2.axis.roll", "F1.field.x", "oven.velocity.temperature"). The result
 * (format spinyard.scan, version 1) keeps per point the yield, rate, counts ± σ of every detector and the yield,
 * rate and captured fraction of every leaf; a point whose value the reader refuses (a bound) carries that message
 * instead of numbers. `runScan` and `withParameter` below are the older form over a normalized line's keys.
 */
import type { Beamline, Element } from '../beamline/types.ts';
import { DISPLAY_UNITS } from '../beamline/parameters.ts';
import { ROUND_OFF, csvValue } from '../beamline/numbers.ts';
import type { Dimension } from '../beamline/units.ts';
import { evaluate, parameter, type Plan } from './plan.ts';
import { runLine, RunError, CancelledError, type RunOptions } from './run.ts';
import type { RunResult } from './result.ts';
import { checkCost } from './cost.ts';
import { EvaluationSession } from './replay.ts';
import { RowBatch } from './batch.ts';
import type { FinePath } from './detector-plane.ts';

/** One scanned parameter: `points` values from `from` to `to` (SI), equally spaced or spaced by equal ratios. */
export interface ScanAxis {
  readonly name: string;
  readonly from: number;
  readonly to: number;
  readonly points: number;
  readonly spacing?: 'linear' | 'log';
}

/** The most points a scan takes (a 2-D scan counts the grid): a bound on its time and its result's size. */
export const MAX_SCAN_POINTS = 1_000_000;

export interface ScanParameterResult {
  readonly name: string;
  /** JSON path in the document. */
  readonly path: string;
  readonly dimension: Dimension;
  /** The unit the values are shown in, and its SI factor (SI = shown × factor). */
  readonly unit: string;
  readonly factor: number;
  readonly spacing: 'linear' | 'log';
  /** The line's own value (SI): the set-point a plot marks. */
  readonly present: number;
  /** The scanned values (SI). */
  readonly values: number[];
}

export interface ScanDetector { id: string; yield: number; rate: number; signal: number; counts: number; sigma: number }
export interface ScanLeaf { path: string[]; target: string; yield: number; rate: number; captured?: number }

export interface ScanPoint {
  /** Index of each parameter's value (the grid's row and column for two). */
  index: number[];
  /** The parameters' values at this point (SI). */
  values: number[];
  detectors?: ScanDetector[];
  leaves?: ScanLeaf[];
  lost?: number;
  /** Why this point has no numbers (the reader refused a value, or the engine this line). */
  error?: string;
  /** Indices into the scan's `warnings` that this point gave. */
  warnings?: number[];
}

export interface ScanResult {
  format: 'spinyard.scan';
  version: 1;
  title: string;
  parameters: ScanParameterResult[];
  /** Detector ids in the line's order. */
  detectors: string[];
  points: ScanPoint[];
  /** Every distinct warning of any point, once. */
  warnings: string[];
}

/** The values of one axis (SI): linear from → to, or log (equal ratios; both ends of one sign, not 0). */
export function axisValues(a: ScanAxis): number[] {
  const n = a.points;
  if (!Number.isInteger(n) || n < 1) throw new RunError(`scan ${a.name}: the number of points must be a whole number ≥ 1, got ${n}`);
  if (!Number.isFinite(a.from) || !Number.isFinite(a.to)) throw new RunError(`scan ${a.name}: the ends must be finite numbers`);
  if (n === 1) return [a.from];
  if (a.spacing === 'log') {
    if (!(a.from * a.to > 0)) throw new RunError(`scan ${a.name}: a logarithmic scan needs both ends non-zero and of one sign, got ${a.from} and ${a.to} (SI)`);
    const r = Math.log(a.to / a.from);
    return Array.from({ length: n }, (_, i) => (i === n - 1 ? a.to : a.from * Math.exp((r * i) / (n - 1))));
  }
  return Array.from({ length: n }, (_, i) => (i === n - 1 ? a.to : a.from + ((a.to - a.from) * i) / (n - 1)));
}

/** The points of a scan in order: the first parameter outer, the second inner. */
export function scanIndices(counts: readonly number[]): number[][] {
  if (counts.length === 1) return Array.from({ length: counts[0] }, (_, i) => [i]);
  const out: number[][] = [];
  for (let i = 0; i < counts[0]; i++) for (let j = 0; j < counts[1]; j++) out.push([i, j]);
  return out;
}

/** The parameters of a scan, checked against the plan (names, points, spacing). */
export function scanParameters(plan: Plan, axes: readonly ScanAxis[]): ScanParameterResult[] {
  if (axes.length < 1 || axes.length > 2) throw new RunError(`a scan takes one or two parameters, got ${axes.length}`);
  if (axes.length === 2 && parameter(plan, axes[0].name) === parameter(plan, axes[1].name)) throw new RunError(`scan: ${axes[0].name} is given twice`);
  const out = axes.map((a) => {
    const slot = parameter(plan, a.name);
    const shown = DISPLAY_UNITS[slot.dimension];
    return { name: slot.name, path: slot.path, dimension: slot.dimension, unit: shown.unit, factor: shown.factor, spacing: a.spacing ?? 'linear', present: slot.value, values: axisValues(a) };
  });
  const total = out.reduce((n, p) => n * p.values.length, 1);
  if (total > MAX_SCAN_POINTS) throw new RunError(`scan: ${total} points is more than ${MAX_SCAN_POINTS}; scan fewer points`);
  return out;
}

/**
 * The evaluation session of a plan's scans (replay.ts): a point reads again only the parts its values changed, and
 * walks only the part of the line behind the element they belong to. Kept with the plan, so a worker's share of
 * points and the app's scans of one plan share it.
 */
const sessions = new WeakMap<Plan, EvaluationSession>();
function sessionOf(plan: Plan): EvaluationSession {
  let s = sessions.get(plan);
  if (!s) sessions.set(plan, (s = new EvaluationSession()));
  return s;
}

/** One point of a scan (a worker evaluates its share of them with this); the same numbers as `evaluate` at its values. */
export function scanPoint(plan: Plan, params: readonly ScanParameterResult[], index: readonly number[], warnings: Map<string, number>, opts: RunOptions = {}): ScanPoint {
  return pointRun(plan, params, index, warnings, pointOptions(plan, opts)).point;
}

/** The options of a scan's runs: no progress of their own, light, no profiles, the plan's session unless one is given. */
function pointOptions(plan: Plan, opts: RunOptions): RunOptions {
  return { ...opts, onProgress: undefined, light: true, noProfiles: true, session: opts.session ?? sessionOf(plan) };
}

/** A point's run (null where the reader or the engine refused it) and the point made of it. */
function pointRun(plan: Plan, params: readonly ScanParameterResult[], index: readonly number[], warnings: Map<string, number>, opts: RunOptions): { point: ScanPoint; r: RunResult | null } {
  const values = params.map((p, k) => p.values[index[k]]);
  const point: ScanPoint = { index: [...index], values };
  const set: Record<string, number> = {};
  for (let k = 0; k < params.length; k++) set[params[k].name] = values[k];
  let r: RunResult;
  try {
    r = evaluate(plan, set, opts);
  } catch (err) {
    if (err instanceof RunError && !(err instanceof CancelledError)) {
      point.error = err.message;
      return { point, r: null };
    }
    throw err;
  }
  const dets = r.detectors, ls = r.leaves;
  const detectors: ScanDetector[] = new Array(dets.length);
  for (let i = 0; i < dets.length; i++) {
    const d = dets[i];
    detectors[i] = { id: d.id, yield: d.yield, rate: d.rate, signal: d.signal, counts: d.counts, sigma: d.sigma };
  }
  const leaves: ScanLeaf[] = new Array(ls.length);
  for (let i = 0; i < ls.length; i++) {
    const l = ls[i];
    leaves[i] = l.captured === undefined ? { path: l.path, target: l.target, yield: l.yield, rate: l.rate } : { path: l.path, target: l.target, yield: l.yield, rate: l.rate, captured: l.captured };
  }
  point.detectors = detectors;
  point.leaves = leaves;
  point.lost = r.lost;
  let w: number[] | undefined;
  for (const text of r.warnings) {
    if (plan.warnings.includes(text)) continue;
    let i = warnings.get(text);
    if (i === undefined) warnings.set(text, (i = warnings.size));
    if (!w) w = [i];
    else if (!w.includes(i)) w.push(i);
  }
  if (w) point.warnings = w.sort((a, b) => a - b);
  return { point, r };
}

/**
 * True when `scan` may form some of these axes' points as a batch (batch.ts): its numbers then agree with a run per
 * point to 1e-14 of the flux, not bit for bit, so a host that would deal the points out to workers one by one
 * (scanPoint) runs the scan whole in one thread instead, and gets the same numbers whatever its number of workers.
 */
export function scanBatches(plan: Plan, axes: readonly ScanAxis[]): boolean {
  const params = scanParameters(plan, axes);
  return RowBatch.applies(plan.line, params[params.length - 1].path, params.length === 2 ? params[0].path : undefined);
}

/**
 * Evaluate the plan at every point of the scan, in order (the first parameter outer). Where the inner parameter is
 * a set-point of a last analysing magnet, the points of a row after its first run are formed from that run as a batch
 * (batch.ts; to 1e-14 of the flux); `opts.batchRows: false` runs every point.
 */
export function scan(plan: Plan, axes: readonly ScanAxis[], opts: RunOptions = {}): ScanResult {
  const params = scanParameters(plan, axes);
  // the document's line estimated once (a refusal stops the scan before its first point), not at every point
  if (!opts.costChecked) checkCost(plan.line, opts);
  opts = { ...opts, costChecked: true };
  const warnings = new Map<string, number>();
  const indices = scanIndices(params.map((p) => p.values.length));
  const points: ScanPoint[] = [];
  const runOpts = pointOptions(plan, opts);
  const session = runOpts.session instanceof EvaluationSession ? runOpts.session : null;
  const two = params.length === 2;
  const inner = params[params.length - 1], outer = two ? params[0] : undefined;
  // a caller that reads every run's paths (RunOptions.onPaths) gets a run per point
  const batch = session && opts.batchRows !== false && !opts.onPaths
    ? RowBatch.of(session, plan.line, inner.path, outer?.path, (j, o) => {
      const r = session.lineAt(plan.source, outer ? { [outer.name]: o!, [inner.name]: inner.values[j] } : { [inner.name]: inner.values[j] });
      return r.ok ? r.line : null;
    })
    : null;
  // the paths and flux of a run that may serve its row (RunOptions.onPaths)
  const seen: { fines: readonly FinePath[] | null; flux: number } = { fines: null, flux: 0 };
  const probeOpts: RunOptions = batch ? { ...runOpts, onPaths: (fines, flux) => { seen.fines = fines; seen.flux = flux; runOpts.onPaths?.(fines, flux); } } : runOpts;
  for (let k = 0; k < indices.length; k++) {
    if (opts.isCancelled?.()) throw new CancelledError('scan: cancelled');
    const idx = indices[k];
    const row = two ? idx[0] : 0, j = idx[params.length - 1], o = two ? outer!.values[row] : undefined;
    let p = batch ? batch.point(row, j, o, idx, two ? [o!, inner.values[j]] : [inner.values[j]]) : null;
    if (!p) {
      if (batch?.trying(row)) {
        const probe = batch.arm();
        seen.fines = null;
        try {
          const { point, r } = pointRun(plan, params, idx, warnings, probeOpts);
          batch.learn(probe, row, j, o, r, seen.fines, seen.flux, point);
          p = point;
        } finally {
          session!.probe = null;
        }
      } else p = pointRun(plan, params, idx, warnings, runOpts).point;
    }
    points.push(p);
    opts.onProgress?.((k + 1) / indices.length);
  }
  return scanResult(plan, params, points, warnings);
}

/** The scan's result from its points (in order) and the warnings they index. */
export function scanResult(plan: Plan, params: ScanParameterResult[], points: ScanPoint[], warnings: ReadonlyMap<string, number>): ScanResult {
  const list: string[] = [...plan.warnings];
  for (const [text, i] of warnings) list[plan.warnings.length + i] = text;
  if (plan.warnings.length) for (const p of points) if (p.warnings) p.warnings = p.warnings.map((i) => i + plan.warnings.length);
  return {
    format: 'spinyard.scan', version: 1, title: plan.line.title, parameters: params,
    detectors: plan.line.elements.filter((e) => e.kind === 'detector').map((e) => e.id), points, warnings: list,
  };
}

export interface ScanSpec {
  /** Element id. */
  readonly element: string;
  /** Dotted key inside the normalized element, e.g. "field.x", "axis" (for an axis pass a vector), "gap". */
  readonly key: string;
  readonly values: readonly unknown[];
}

/** The line with one key of one element replaced (the line itself is not changed). */
export function withParameter(line: Beamline, element: string, key: string, value: unknown): Beamline {
  const idx = line.elements.findIndex((e) => e.id === element);
  if (idx < 0) throw new RunError(`scan: no element "${element}"`);
  const elements = line.elements.slice();
  elements[idx] = replaced(line.elements[idx], key.split('.'), 0, value, element) as Element;
  return { ...line, elements };
}

/** obj with the key path parts[i…] set to value (copies along the path; a module-level function, not a closure per point). */
function replaced(obj: unknown, parts: readonly string[], i: number, value: unknown, element: string): unknown {
  if (i === parts.length) return value;
  if (obj === null || typeof obj !== 'object' || !(parts[i] in obj)) throw new RunError(`scan: ${element} has no key "${parts.slice(0, i + 1).join('.')}"`);
  return { ...(obj as Record<string, unknown>), [parts[i]]: replaced((obj as Record<string, unknown>)[parts[i]], parts, i + 1, value, element) };
}

export function runScan(line: Beamline, spec: ScanSpec, opts: RunOptions = {}): RunResult[] {
  const out: RunResult[] = [];
  spec.values.forEach((v, i) => {
    if (opts.isCancelled?.()) throw new RunError('scan: cancelled');
    // the table-resolution check and the velocity plot are done at the two ends of the scan
    const light = i > 0 && i < spec.values.length - 1;
    out.push(runLine(withParameter(line, spec.element, spec.key, v), { ...opts, onProgress: undefined, light }));
    opts.onProgress?.((i + 1) / spec.values.length);
  });
  return out;
}

/**
 * A number for a CSV cell by the one number rule (src/beamline/numbers.ts `csvValue`: 12 significant figures, no
 * binary round-off such as 29.999999999999996); a fraction of the oven flux (a yield, the lost fraction) below
 * the engine's round-off with `floor` ROUND_OFF is 0; "" for none.
 */
export function csvNumber(x: number | undefined, floor?: number): string {
  return x === undefined || !Number.isFinite(x) ? '' : csvValue(x, floor);
}

function csvCell(s: string): string {
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A leaf's name in a table: its path and target ("M1:+1/2 M2:-1/2 → D1"). */
export function leafName(l: { path: readonly string[]; target: string }): string {
  return `${l.path.join(' ')} → ${l.target}`;
}

/**
 * The scan as CSV (RFC 4180): one row per point; each parameter in its unit ("M2.axis.roll [deg]"), then per
 * detector its yield, rate, signal, counts and σ for its dwell, per leaf its yield, rate and captured fraction
 * (where the line has geometry), the lost fraction and, for a point without numbers, why.
 */
export function scanCsv(r: ScanResult): string {
  const leafNames: string[] = [];
  const leafCaptured = new Set<string>();
  for (const p of r.points) for (const l of p.leaves ?? []) {
    const n = leafName(l);
    if (!leafNames.includes(n)) leafNames.push(n);
    if (l.captured !== undefined) leafCaptured.add(n);
  }
  const head = r.parameters.map((p) => (p.unit ? `${p.name} [${p.unit}]` : p.name));
  for (const d of r.detectors) head.push(`${d} yield`, `${d} rate [/s]`, `${d} signal [/s]`, `${d} counts`, `${d} sigma`);
  for (const n of leafNames) head.push(`${n} yield`, `${n} rate [/s]`, ...(leafCaptured.has(n) ? [`${n} captured`] : []));
  head.push('lost', 'error');
  const rows = [head.map(csvCell).join(',')];
  for (const p of r.points) {
    const row = p.values.map((v, k) => csvNumber(v / r.parameters[k].factor));
    for (const id of r.detectors) {
      const d = p.detectors?.find((x) => x.id === id);
      row.push(csvNumber(d?.yield, ROUND_OFF), csvNumber(d?.rate), csvNumber(d?.signal), csvNumber(d?.counts), csvNumber(d?.sigma));
    }
    for (const n of leafNames) {
      const l = p.leaves?.find((x) => leafName(x) === n);
      row.push(csvNumber(l?.yield, ROUND_OFF), csvNumber(l?.rate), ...(leafCaptured.has(n) ? [csvNumber(l?.captured)] : []));
    }
    row.push(csvNumber(p.lost, ROUND_OFF), csvCell(p.error ?? ''));
    rows.push(row.join(','));
  }
  return `${rows.join('\r\n')}\r\n`;
}
