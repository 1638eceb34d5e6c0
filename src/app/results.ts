// The renderer's reading of result format v1 (docs/design.md, "Result format v1"): the ports table rows,
// counting times and the CSV export. Pure functions of a result and the normalized line.

import { type RunResult, countSigma, countsIn, timeToPrecision } from './core-adapter.ts';
import { FIGURES, ROUND_OFF, csvValue, formatColumn, formatCountsColumn, isRoundOff } from '../beamline/numbers.ts';

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
  /** The sub-beam's flux-weighted mean position and rms width on its plane (m), where the engine reports them. */
  displacement?: { x: number; z: number };
  spread?: { x: number; z: number };
  /** The oven flux (atoms/s) and the dwell (s): the scales of the round-off of rates and counts. */
  flux?: number;
  dwell?: number;
  /** The run's stated absolute error of the yields (its quadrature), where above 0, and carried to the detector's rate. */
  yieldError?: number;
  detectorRateError?: number;
}

/** The run's stated absolute error of the yields (the quadrature's estimate), or undefined where there is none. */
export function yieldErrorOf(result: RunResultView): number | undefined {
  const e = result.quadrature?.error;
  return e !== undefined && e > 0 && Number.isFinite(e) ? e : undefined;
}

/** An error of a yield carried to a quantity proportional to it (a rate, counts): error × quantity / yield. */
function carried(error: number | undefined, quantity: number | undefined, yieldValue: number): number | undefined {
  return error === undefined || quantity === undefined || !(yieldValue > 0) ? undefined : (error * quantity) / yieldValue;
}

/** The ports table: one row per leaf of the result, in the engine's order. */
export function portRows(result: RunResultView, dwell: ReadonlyMap<string, number>, eps: number): PortRow[] {
  const det = new Map(result.detectors.map((d) => [d.id, d]));
  return result.leaves.map((l) => {
    const row: PortRow = { path: l.path.join(' → ') || '(oven)', target: l.target, yield: l.yield, rate: l.rate, flux: result.flux };
    const error = yieldErrorOf(result);
    if (error !== undefined) row.yieldError = error;
    const d = det.get(l.target);
    const t = dwell.get(l.target);
    if (l.target !== 'stop' && t !== undefined) {
      row.dwell = t;
      row.counts = countsIn(l.rate, t);
      row.sigma = countSigma(row.counts);
    }
    if (d) {
      row.detectorRate = d.rate;
      const de = carried(error, d.signal, d.yield);
      if (de !== undefined) row.detectorRateError = de;
      row.time = timeToPrecision(d.signal, d.background, eps);
    }
    if (l.captured !== undefined) row.captured = l.captured;
    if (l.displacement) row.displacement = { x: l.displacement.x, z: l.displacement.z };
    if (l.spread) row.spread = { x: l.spread.x, z: l.spread.z };
    return row;
  });
}

/** One CSV field (RFC 4180): quoted when it holds a comma, a quote, or a line break. */
export function csvField(v: string | number | undefined): string {
  if (v === undefined) return '';
  const s = typeof v === 'number' ? csvValue(v) : v;
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function toCsv(header: readonly string[], rows: readonly (readonly (string | number | undefined)[])[]): string {
  return [header, ...rows].map((r) => r.map(csvField).join(',')).join('\r\n') + '\r\n';
}

/** The ports CSV's columns, each with its unit ("1" for a fraction of the oven flux or of a sub-beam). Columns are added at the end, never renamed. */
export const PORT_CSV_HEADER = [
  'path', 'target', 'yield (fraction of the oven flux)', 'signal rate (1/s)', 'counts (in the dwell)', 'sigma (counts)', 'detector rate (1/s)',
  'time to precision (s)', 'captured (fraction of the sub-beam in the window)',
  'displacement x (mm)', 'displacement z (mm)', 'spread x (mm)', 'spread z (mm)', 'document', 'document sha256',
] as const;

/** The document a table was computed from: its file name and the SHA-256 of its text as Save writes it. */
export interface CsvSource {
  name: string;
  sha256: string;
}

/** A length on the detector plane in mm for the CSV: 12 figures of the value in m, so no float noise from the scaling. */
function mmValue(m: number | undefined): string {
  return m === undefined ? '' : csvValue(Number(csvValue(m)) * 1e3);
}

/**
 * The ports table as CSV by the one number rule at full precision (src/beamline/numbers.ts): 12 significant
 * figures, yields, rates and counts of round-off (below 1e-12 of the oven flux) as 0; the precision ε is
 * written in the time column's header; every column names its unit; each row names the document and its hash
 * (the same SHA-256 as the setup sheet's), so a table read later, or rows of several runs put together, say
 * which line they came from.
 */
export function portRowsCsv(rows: readonly PortRow[], eps: number, source?: CsvSource): string {
  const header: string[] = [...PORT_CSV_HEADER];
  header[7] = `time to ${csvValue(eps * 100)}% (s)`;
  return toCsv(header, rows.map((r) => {
    const flux = r.flux ?? 0;
    const rateFloor = ROUND_OFF * flux;
    const noise = r.counts !== undefined && r.dwell !== undefined && isRoundOff(r.counts, flux * r.dwell);
    return [r.path, r.target, csvValue(r.yield, ROUND_OFF), csvValue(r.rate, rateFloor), csvValue(r.counts, rateFloor * (r.dwell ?? 0)),
      noise ? '0' : csvValue(r.sigma), csvValue(r.detectorRate), csvValue(r.time), csvValue(r.captured),
      mmValue(r.displacement?.x), mmValue(r.displacement?.z), mmValue(r.spread?.x), mmValue(r.spread?.z),
      source?.name ?? 'unsaved', source?.sha256 ?? ''];
  }));
}

/** The ports table's cells as the app shows them, by the one number rule: one string per column of each row. */
export interface PortCells {
  yield: string;
  rate: string;
  counts: string;
  detectorRate: string;
  captured: string;
}

/** The ports table's cells by the rule: yields to 6 figures, rates to 4, counts ± σ, round-off as 0, one notation per column. */
export function portCells(rows: readonly PortRow[]): PortCells[] {
  const spec = (r: PortRow, figures: number, floor: number | undefined, quantity: number | undefined) =>
    ({ figures, floor, error: carried(r.yieldError, quantity, r.yield) });
  const yields = formatColumn(rows.map((r) => r.yield), rows.map((r) => ({ figures: FIGURES.yield, floor: ROUND_OFF, error: r.yieldError })));
  const rates = formatColumn(rows.map((r) => r.rate), rows.map((r) => spec(r, FIGURES.rate, ROUND_OFF * (r.flux ?? 0), r.rate)));
  const counts = formatCountsColumn(rows.map((r) => (r.counts === undefined || r.sigma === undefined ? undefined : {
    counts: r.counts, sigma: r.sigma, floor: ROUND_OFF * (r.flux ?? 0) * (r.dwell ?? 0), error: carried(r.yieldError, r.counts, r.yield),
  })), { blank: '—' });
  const detectorRates = formatColumn(rows.map((r) => r.detectorRate), rows.map((r) => ({ figures: FIGURES.rate, floor: ROUND_OFF * (r.flux ?? 0), error: r.detectorRateError })), { blank: '—' });
  const captured = formatColumn(rows.map((r) => r.captured), { figures: FIGURES.ratio }, { blank: '—' });
  return rows.map((_, i) => ({ yield: yields[i], rate: rates[i], counts: counts[i], detectorRate: detectorRates[i], captured: captured[i] }));
}

/** The detectors table's cells as the app shows them, by the one number rule. */
export interface DetectorCells {
  id: string;
  yield: string;
  rate: string;
  counts: string;
  background: string;
  /** S/B: "∞ (no background)" without background, 0 for a signal of round-off. */
  signalToBackground: string;
  /** The signal is round-off (or 0): no time to precision. */
  noSignal: boolean;
}

export function detectorCells(result: RunResultView): DetectorCells[] {
  const ds = result.detectors;
  const flux = result.flux;
  const error = yieldErrorOf(result);
  const none = ds.map((d) => d.signal === 0 || isRoundOff(d.signal, flux));
  const yields = formatColumn(ds.map((d) => d.yield), { figures: FIGURES.yield, floor: ROUND_OFF, error });
  const rates = formatColumn(ds.map((d) => d.rate), ds.map((d) => ({ figures: FIGURES.rate, floor: ROUND_OFF * flux, error: carried(error, d.signal, d.yield) })));
  const counts = formatCountsColumn(ds.map((d) => ({ counts: d.counts, sigma: d.sigma, floor: ROUND_OFF * flux * d.dwell, error: carried(error, d.signal * d.dwell, d.yield) })));
  const backgrounds = formatColumn(ds.map((d) => d.background), { figures: FIGURES.rate });
  const sbs = formatColumn(ds.map((d, i) => (d.background === 0 ? undefined : none[i] ? 0 : d.signalToBackground)), { figures: FIGURES.ratio }, { blank: '∞ (no background)' });
  return ds.map((d, i) => ({
    id: d.id, yield: yields[i], rate: rates[i], counts: counts[i], background: backgrounds[i],
    signalToBackground: d.background === 0 && d.signal > 0 ? '∞ (no background)' : d.background === 0 ? '0' : sbs[i], noSignal: none[i],
  }));
}

/** The lost fraction as the app shows it: round-off as 0, 6 figures, no finer than a stated error. */
export function lostCell(result: RunResultView): string {
  return formatColumn([result.lost], { figures: FIGURES.yield, floor: ROUND_OFF, error: yieldErrorOf(result) })[0];
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
