// The renderer's reading of result format v1 (docs/design.md, "Result format v1"): the ports table rows,
// counting times and the CSV export. Pure functions of a result and the normalized line.

import { type RunResult, countSigma, countsIn, timeToPrecision } from './core-adapter.ts';

/** The engine's result (result format v1 with its additions), read through the core adapter. */
export type RunResultView = RunResult;

/** The dwell time (s) of each detector of the line, by id. */
export function dwellById(elements: readonly { id: string; kind: string; dwell?: number }[]): Map<string, number> {
  const m = new Map<string, number>();
  for (const e of elements) if (e.kind === 'detector' && typeof e.dwell === 'number') m.set(e.id, e.dwell);
  return m;
}

export interface PortRow {
  /** "M1:+1/2 → M2:-1/2" */
  path: string;
  target: string;
  yield: number;
  /** Signal this leaf brings (flux × yield × efficiency), counts/s. */
  rate: number;
  /** Signal counts of this leaf in its detector's dwell, N = rate·dwell, and σ = √N; undefined at a stop. */
  counts?: number;
  sigma?: number;
  /** The detector's total rate (all its leaves plus background) and the time to ε on its signal (src/engine/counting.ts). */
  detectorRate?: number;
  time?: number;
  captured?: number;
}

/** The ports table: one row per leaf of the result, in the engine's order. */
export function portRows(result: RunResultView, dwell: ReadonlyMap<string, number>, eps: number): PortRow[] {
  const det = new Map(result.detectors.map((d) => [d.id, d]));
  return result.leaves.map((l) => {
    const row: PortRow = { path: l.path.join(' → ') || '(oven)', target: l.target, yield: l.yield, rate: l.rate };
    const d = det.get(l.target);
    const t = dwell.get(l.target);
    if (l.target !== 'stop' && t !== undefined) {
      row.counts = countsIn(l.rate, t);
      row.sigma = countSigma(row.counts);
    }
    if (d) {
      row.detectorRate = d.rate;
      row.time = timeToPrecision(d.signal, d.background, eps);
    }
    if (l.captured !== undefined) row.captured = l.captured;
    return row;
  });
}

/** One CSV field (RFC 4180): quoted when it holds a comma, a quote, or a line break. */
export function csvField(v: string | number | undefined): string {
  if (v === undefined) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : v > 0 ? 'inf' : v < 0 ? '-inf' : 'nan') : v;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function toCsv(header: readonly string[], rows: readonly (readonly (string | number | undefined)[])[]): string {
  return [header, ...rows].map((r) => r.map(csvField).join(',')).join('\r\n') + '\r\n';
}

export const PORT_CSV_HEADER = [
  'path', 'target', 'yield', 'signal rate (1/s)', 'counts', 'sigma', 'detector rate (1/s)', 'time to precision (s)', 'captured',
] as const;

/** The ports table as CSV, numbers at full precision; the precision ε is written in the time column's header. */
export function portRowsCsv(rows: readonly PortRow[], eps: number): string {
  const header: string[] = [...PORT_CSV_HEADER];
  header[7] = `time to ${eps * 100}% (s)`;
  return toCsv(header, rows.map((r) => [r.path, r.target, r.yield, r.rate, r.counts, r.sigma, r.detectorRate, r.time, r.captured]));
}

/** Engine warnings are "path: message"; the JSON path's element index gives the element it names. */
export function warningsByElement(warnings: readonly string[], ids: readonly string[]): Map<string, string[]> {
  const out = new Map<string, string[]>();
  for (const w of warnings) {
    const m = /^elements\[(\d+)\]/.exec(w);
    let key = 'line';
    if (m && ids[Number(m[1])] !== undefined) key = ids[Number(m[1])];
    else if (w.startsWith('oven')) key = 'oven';
    out.set(key, [...(out.get(key) ?? []), w]);
  }
  return out;
}
