/**
 * `spinyard scan FILE --param NAME --from A --to B --points N [--log] [second --param …] [--json | --csv] [-o OUT]`:
 * the line evaluated over one parameter or the grid of two (src/engine/scan.ts). The k-th --from, --to, --points
 * and --log belong to the k-th --param.
 */
import { compile, parameter, parameterValue, scan, scanBatches, scanCsv, type Plan, type ScanAxis, type ScanResult } from '../engine/index.ts';
import { RunError } from '../engine/index.ts';
import { DISPLAY_UNITS } from '../beamline/index.ts';
import { FIGURES, ROUND_OFF, formatColumn, formatCountsColumn, isRoundOff } from '../beamline/numbers.ts';
import { alignTable, formatNumber } from './format.ts';
import { availableParallelism } from 'node:os';
import { costGate, outputProblem, problemsOut, workersOption } from './common.ts';
import { scanParallel } from './scan-parallel.ts';
import { THREADS_WORTH_MS } from './workers.ts';
import { type CliOutput, bad, ok } from './quick.ts';
import { progressOf } from './progress.ts';

export const SCAN_OPTIONS = [
  { name: 'param', value: true, repeat: true },
  { name: 'from', value: true, repeat: true },
  { name: 'to', value: true, repeat: true },
  { name: 'points', value: true, repeat: true },
  { name: 'log', value: true, repeat: true },
  { name: 'json', value: false },
  { name: 'csv', value: false },
  { name: 'output', value: true, short: 'o' },
  { name: 'stored', value: true },
  { name: 'workers', value: true },
  { name: 'accept-cost', value: false },
] as const;

/** Points from which a scan is spread over worker threads by default (below, starting them costs more than it saves). */
export const PARALLEL_FROM_POINTS = 200;

const err = (m: string) => bad(`spinyard scan: ${m}`, 'Run "spinyard scan --help" for its use.');

/** A value in its parameter's unit for the terminal ("30 deg"). */
function shown(v: number, p: ScanResult['parameters'][number]): string {
  const x = formatNumber(v / p.factor, 6);
  return p.unit ? `${x} ${p.unit}` : x;
}

export function scanText(r: ScanResult, file: string): string {
  const out: string[] = [];
  const what = r.parameters.map((p) => `${p.name} from ${shown(p.values[0], p)} to ${shown(p.values[p.values.length - 1], p)} in ${p.values.length} point${p.values.length === 1 ? '' : 's'}${p.spacing === 'log' ? ' (equal ratios)' : ''}`).join(', by ');
  out.push(`Scan of ${r.title || '(untitled)'}  [${file}]`, `  ${what}`);
  out.push(`  as set in the document: ${r.parameters.map((p) => `${p.name} = ${shown(p.present, p)}`).join(', ')}`, '');
  const head = r.parameters.map((p) => (p.unit ? `${p.name} (${p.unit})` : p.name));
  for (const d of r.detectors) head.push(`${d} yield`, `${d} counts ± σ`);
  // the numbers by the one rule per column (src/beamline/numbers.ts): each parameter's values to 6 figures in one
  // notation, each detector's yields to 6 figures with round-off (below 1e-12 of the flux) as 0, its counts ± σ
  // with σ to 2 figures and the counts to σ's place, one notation down the column
  const columns: string[][] = r.parameters.map((par, k) => formatColumn(r.points.map((p) => p.values[k] / par.factor), { figures: 6 }));
  for (const id of r.detectors) {
    const ds = r.points.map((p) => p.detectors?.find((x) => x.id === id));
    columns.push(
      formatColumn(ds.map((d) => (d ? (isRoundOff(d.yield) ? 0 : d.yield) : undefined)), { figures: FIGURES.yield, floor: ROUND_OFF }, { blank: '-' }),
      formatCountsColumn(ds.map((d) => (d ? { counts: d.counts, sigma: d.sigma } : undefined)), { blank: '-' }).map((c, i) => (ds[i] === undefined && r.points[i].error ? 'no result' : c)),
    );
  }
  const rows = [head, ...r.points.map((_, i) => columns.map((c) => c[i]))];
  out.push(alignTable(rows, head.map(() => true)));
  const errors = new Map<string, number>();
  for (const p of r.points) if (p.error) errors.set(p.error, (errors.get(p.error) ?? 0) + 1);
  if (errors.size) {
    out.push('', 'Points without a result');
    for (const [m, n] of errors) out.push(`  ${n} point${n === 1 ? '' : 's'}: ${m}`);
  }
  if (r.warnings.length) {
    const count = r.warnings.map(() => 0);
    for (const p of r.points) for (const i of p.warnings ?? []) count[i]++;
    out.push('', 'Warnings');
    r.warnings.forEach((w, i) => out.push(`  - ${w}${count[i] ? ` (at ${count[i]} of ${r.points.length} points)` : ''}`));
  }
  out.push('', 'counts ± σ: each detector\'s counts in its dwell with the Poisson σ = √N (background included).');
  return `${out.join('\n')}\n`;
}

export function cmdScanWith(file: string, text: string, options: Record<string, unknown>, lists: Record<string, string[]>): CliOutput {
  const params = lists.param ?? [];
  if (params.length > 2) return err(`--param is given ${params.length} times; a scan takes one or two parameters`);
  const c = compile(text);
  if (!c.ok) return problemsOut(file, c.problems);
  const plan = c.plan;
  if (params.length === 1 && params[0] === 'list') {
    const rows = [['parameter', 'value', 'as written', 'JSON path']];
    for (const s of plan.parameters) rows.push([s.name, `${formatNumber(s.value / DISPLAY_UNITS[s.dimension].factor, 6)}${s.unit ? ` ${s.unit}` : ''}`, s.written === undefined ? '(default)' : String(s.written), s.path]);
    return ok(`${alignTable(rows, [false, true, false, false])}\n`);
  }
  const stored = plan.line.scans ?? [];
  if (!params.length) {
    if (!stored.length) return err('missing --param, the set-point to scan (e.g. --param M2.axis.roll); "spinyard scan FILE --param list" lists them, and a scan kept in the document runs without one');
    const which = options.stored;
    const k = typeof which === 'string' ? Number(which) : stored.length === 1 ? 1 : NaN;
    if (!Number.isInteger(k) || k < 1 || k > stored.length) {
      const list = stored.map((s, i) => `  ${i + 1}: ${s.title || s.axes.map((a) => a.name).join(' × ')}`);
      return bad(`spinyard scan: ${typeof which === 'string' ? `--stored ${which}: ` : ''}${file} keeps ${stored.length} scans; choose one with --stored N:`, ...list);
    }
    return scanOutput(plan, stored[k - 1].axes, file, options, text);
  }
  if (options.stored !== undefined) return err('--stored and --param: a stored scan has its own parameters; give one or the other');
  const n = params.length;
  for (const k of ['from', 'to', 'points'] as const) {
    const got = lists[k]?.length ?? 0;
    if (got !== n) return err(`--${k} is given ${got} time${got === 1 ? '' : 's'} for ${n} --param; give one per --param, in the same order`);
  }
  const logs = lists.log ?? [];
  const axes: ScanAxis[] = [];
  try {
    for (let k = 0; k < n; k++) {
      const slot = parameter(plan, params[k]);
      const pts = Number(lists.points[k]);
      if (!/^\s*\d+\s*$/.test(lists.points[k]) || !Number.isInteger(pts) || pts < 1) return err(`--points: a whole number of points ≥ 1, got "${lists.points[k]}"`);
      axes.push({ name: slot.name, from: parameterValue(slot, lists.from[k], '--from'), to: parameterValue(slot, lists.to[k], '--to'), points: pts, spacing: logs.includes(params[k]) ? 'log' : 'linear' });
    }
    for (const l of logs) if (!params.includes(l)) return err(`--log ${l}: not one of the scanned parameters (${params.join(', ')})`);
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  return scanOutput(plan, axes, file, options, text);
}

function scanOutput(plan: Plan, axes: readonly ScanAxis[], file: string, options: Record<string, unknown>, text?: string): CliOutput {
  if (options.json && options.csv) return err('--json and --csv: choose one');
  const gate = costGate(file, plan, options['accept-cost'] === true);
  if (gate) return gate;
  const total = axes.reduce((n, a) => n * a.points, 1);
  const workers = workersOption(options.workers, total >= PARALLEL_FROM_POINTS ? availableParallelism() : 1);
  if (typeof workers === 'string') return err(workers);
  // a scan whose rows are formed as a batch runs whole in one thread: its points do not come out of a run each, so
  // dealt out one by one to workers they would differ in the last digits from the scan's own (engine/batch.ts)
  if (workers > 1 && text !== undefined && !scanBatches(plan, axes)) {
    return { code: 0, stdout: '', stderr: '', job: async () => {
      try {
        // by default the workers start only where the scan is long enough to be worth them (workers.ts)
        return deliverScan(await scanParallel(text, axes, workers, progressOf('scan'), options.workers === undefined ? THREADS_WORTH_MS : undefined), file, options);
      } catch (e) {
        if (e instanceof RunError) return err(e.message);
        throw e;
      }
    } };
  }
  let r: ScanResult;
  try {
    r = scan(plan, axes, { onProgress: progressOf('scan'), acceptCost: true });
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  return deliverScan(r, file, options);
}

function deliverScan(r: ScanResult, file: string, options: Record<string, unknown>): CliOutput {
  const body = options.json ? `${JSON.stringify(r, null, 2)}\n` : options.csv ? scanCsv(r) : scanText(r, file);
  const output = options.output;
  if (typeof output === 'string') {
    const outBad = outputProblem(file, output, 'a scan');
    if (outBad) return err(outBad);
    return { code: 0, stdout: '', stderr: '', file: { path: output, format: 'text', html: body, input: file, what: `scan (${options.json ? 'JSON' : options.csv ? 'CSV' : 'text'})`, command: 'scan' } };
  }
  return ok(body);
}
