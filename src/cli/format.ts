/** Text form of a run for the terminal: aligned tables of leaves and detectors, then the notes of the run. */
import type { DetectorResult, LeafResult, RunResult } from '../engine/index.ts';
import { durationIn } from '../sheet/index.ts';
import { FIGURES, ROUND_OFF, formatColumn, formatCountsColumn, formatValue, isRoundOff } from '../beamline/numbers.ts';

/** A number by the one rule of src/beamline/numbers.ts: `sig` significant figures, exponent form outside [1e-4, 1e6). */
export function formatNumber(x: number, sig = 6): string {
  return formatValue(x, sig);
}

/** A duration in the unit a person would read it in (µs … days); "never" when it does not end. */
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds >= 1e300) return 'never';
  return durationIn(seconds, formatNumber);
}

/** Rows as aligned columns: `right[c]` right-aligns column c (numbers), the rest are left-aligned. */
export function alignTable(rows: readonly (readonly string[])[], right: readonly boolean[]): string {
  const w = rows[0].map((_, c) => Math.max(...rows.map((r) => [...r[c]].length)));
  const pad = (s: string, n: number, r: boolean) => (r ? ' '.repeat(n - [...s].length) + s : s + ' '.repeat(n - [...s].length));
  return rows.map((r) => r.map((x, c) => pad(x, w[c], right[c])).join('  ').trimEnd()).join('\n');
}

/** Metres as millimetres; below 1 pm (rounding noise of a centred beam) as 0. */
const mm = (m: number | undefined) => (m === undefined ? '-' : formatNumber(Math.abs(m) < 1e-12 ? 0 : m * 1e3, FIGURES.length));

/** The stated absolute error of the yields (the quadrature's estimate), or undefined where there is none. */
function yieldError(result: RunResult): number | undefined {
  const e = result.quadrature?.error;
  return e !== undefined && e > 0 && Number.isFinite(e) ? e : undefined;
}

/** An error on the yield carried to a quantity proportional to it (a rate, counts): error × quantity / yield. */
function carried(error: number | undefined, quantity: number, yieldValue: number): number | undefined {
  return error === undefined || !(yieldValue > 0) ? undefined : (error * quantity) / yieldValue;
}

/** The leaves' table by the one rule: yields to 6 figures, rates to 4, round-off as 0, one notation per column. */
export function leafTable(leaves: readonly LeafResult[], flux: number, error?: number): string {
  const geo = leaves.some((l) => l.displacement);
  const head = ['path', 'target', 'yield', 'rate (/s)'];
  if (geo) head.push('x (mm)', 'z (mm)', 'rms x (mm)', 'rms z (mm)', 'captured');
  const yields = formatColumn(leaves.map((l) => l.yield), { figures: FIGURES.yield, floor: ROUND_OFF, error });
  const rates = formatColumn(leaves.map((l) => l.rate), leaves.map((l) => ({ figures: FIGURES.rate, floor: ROUND_OFF * flux, error: carried(error, l.rate, l.yield) })));
  const lengths = (f: (l: LeafResult) => number | undefined) =>
    formatColumn(leaves.map((l) => { const v = f(l); return v === undefined ? undefined : Math.abs(v) < 1e-12 ? 0 : v * 1e3; }), { figures: FIGURES.length }, { blank: '-' });
  const cols = geo
    ? [lengths((l) => l.displacement?.x), lengths((l) => l.displacement?.z), lengths((l) => l.spread?.x), lengths((l) => l.spread?.z),
        formatColumn(leaves.map((l) => l.captured), { figures: FIGURES.ratio }, { blank: '-' })]
    : [];
  const rows = [head];
  leaves.forEach((l, i) => rows.push([l.path.join(' '), l.target, yields[i], rates[i], ...cols.map((c) => c[i])]));
  return alignTable(rows, head.map((_, c) => c >= 2));
}

/** The detectors' table by the one rule; a signal of round-off has S/B 0 and no time to precision. */
export function detectorTable(detectors: readonly DetectorResult[], flux: number, error?: number): string {
  const eps = detectors[0]?.timeToPrecision.epsilon ?? 0.01;
  const head = ['detector', 'yield', 'rate (/s)', 'counts ± σ', 'S/B', `time to ${formatNumber(eps * 100)} %`];
  const noise = detectors.map((d) => d.signal === 0 || isRoundOff(d.signal, flux));
  const yields = formatColumn(detectors.map((d) => d.yield), { figures: FIGURES.yield, floor: ROUND_OFF, error });
  const rates = formatColumn(detectors.map((d) => d.rate), detectors.map((d) => ({ figures: FIGURES.rate, floor: ROUND_OFF * flux, error: carried(error, d.signal, d.yield) })));
  const counts = formatCountsColumn(detectors.map((d) => ({
    counts: d.counts, sigma: d.sigma, floor: ROUND_OFF * flux * d.dwell, error: carried(error, d.signal * d.dwell, d.yield),
  })));
  const sb = formatColumn(detectors.map((d, i) => (d.signalToBackground === undefined ? undefined : noise[i] ? 0 : d.signalToBackground)),
    { figures: FIGURES.ratio }, { blank: '∞ (no background)' });
  const rows = [head];
  detectors.forEach((d, i) => {
    rows.push([
      d.id, yields[i], rates[i], `${counts[i]} in ${formatDuration(d.dwell)}`, sb[i],
      noise[i] || d.timeToPrecision.seconds === undefined ? 'no signal' : formatDuration(d.timeToPrecision.seconds),
    ]);
  });
  return alignTable(rows, head.map((_, c) => c >= 1 && c !== 3));
}

/** Notes on the detector plane: crosstalk into each window and the verdict on neighbouring sub-beams. */
function planeNotes(detectors: readonly DetectorResult[]): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  for (const d of detectors) {
    for (const c of d.crosstalk ?? []) {
      if (c.fraction > 0) out.push(`${d.id}: crosstalk from ${c.path.join(' ')} → ${c.target}: ${formatNumber(c.fraction, 3)} of its flux, ${formatNumber(c.rate, 3)} /s`);
    }
    for (const n of d.neighbours ?? []) {
      const key = `${n.a}|${n.b}`;
      if (seen.has(key)) continue;
      seen.add(key);
      out.push(`${n.a} | ${n.b}: ${n.verdict} along ${n.axis} (separation ${mm(n.separation)} mm, overlap ${formatNumber(n.overlap, 3)})`);
    }
  }
  return out;
}

/** Identical lines once, with their count. */
function collapse(lines: readonly string[]): string[] {
  const counts = new Map<string, number>();
  for (const l of lines) counts.set(l, (counts.get(l) ?? 0) + 1);
  return [...counts].map(([l, n]) => (n > 1 ? `${l} (×${n})` : l));
}

/** The report `spinyard run FILE` prints. */
export function formatRun(result: RunResult, heading: string): string {
  const error = yieldError(result);
  const out = [heading, '', 'Leaves', leafTable(result.leaves, result.flux, error)];
  if (result.detectors.length) out.push('', 'Detectors', detectorTable(result.detectors, result.flux, error));
  const notes = planeNotes(result.detectors);
  if (notes.length) out.push('', 'Detector plane', ...notes);
  out.push('', `lost: ${formatValue(result.lost, { figures: FIGURES.yield, floor: ROUND_OFF, error })} of the oven flux (${formatNumber(result.flux, 4)} /s)`);
  for (const w of collapse(result.warnings)) out.push(`warning: ${w}`);
  const q = result.quadrature;
  if (q) out.push(`quadrature: ${q.method}, ${q.nodes} nodes, estimated error ${formatNumber(q.error, 2)}`);
  return `${out.join('\n')}\n`;
}
