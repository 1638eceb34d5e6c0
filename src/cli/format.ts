/** Text form of a run for the terminal: aligned tables of leaves and detectors, then the notes of the run. */
import type { DetectorResult, LeafResult, RunResult } from '../engine/index.ts';
import { durationIn } from '../sheet/index.ts';

/** A number to `sig` significant digits, trailing zeros dropped, exponent form outside [1e-4, 1e6). */
export function formatNumber(x: number, sig = 6): string {
  if (x === 0) return '0';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : x < 0 ? '-∞' : 'NaN';
  const a = Math.abs(x);
  if (a >= 1e-4 && a < 1e6) return String(Number(x.toPrecision(sig)));
  const [m, e] = x.toExponential(sig - 1).split('e');
  return `${m.includes('.') ? m.replace(/\.?0+$/, '') : m}e${Number(e)}`;
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
const mm = (m: number | undefined) => (m === undefined ? '-' : formatNumber(Math.abs(m) < 1e-12 ? 0 : m * 1e3, 4));

function leafTable(leaves: readonly LeafResult[]): string {
  const geo = leaves.some((l) => l.displacement);
  const head = ['path', 'target', 'yield', 'rate (/s)'];
  if (geo) head.push('x (mm)', 'z (mm)', 'rms x (mm)', 'rms z (mm)', 'captured');
  const rows = [head];
  for (const l of leaves) {
    const r = [l.path.join(' '), l.target, formatNumber(l.yield), formatNumber(l.rate, 4)];
    if (geo) {
      r.push(mm(l.displacement?.x), mm(l.displacement?.z), mm(l.spread?.x), mm(l.spread?.z));
      r.push(l.captured === undefined ? '-' : formatNumber(l.captured, 4));
    }
    rows.push(r);
  }
  return alignTable(rows, head.map((_, c) => c >= 2));
}

function detectorTable(detectors: readonly DetectorResult[]): string {
  const eps = detectors[0]?.timeToPrecision.epsilon ?? 0.01;
  const head = ['detector', 'yield', 'rate (/s)', 'counts ± σ', 'S/B', `time to ${formatNumber(eps * 100)} %`];
  const rows = [head];
  for (const d of detectors) {
    rows.push([
      d.id,
      formatNumber(d.yield),
      formatNumber(d.rate, 4),
      `${formatNumber(d.counts, 4)} ± ${formatNumber(d.sigma, 3)} in ${formatDuration(d.dwell)}`,
      d.signalToBackground === undefined ? '∞ (no background)' : formatNumber(d.signalToBackground, 3),
      d.timeToPrecision.seconds === undefined ? 'no signal' : formatDuration(d.timeToPrecision.seconds),
    ]);
  }
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
  const out = [heading, '', 'Leaves', leafTable(result.leaves)];
  if (result.detectors.length) out.push('', 'Detectors', detectorTable(result.detectors));
  const notes = planeNotes(result.detectors);
  if (notes.length) out.push('', 'Detector plane', ...notes);
  out.push('', `lost: ${formatNumber(result.lost)} of the oven flux (${formatNumber(result.flux, 4)} /s)`);
  for (const w of collapse(result.warnings)) out.push(`warning: ${w}`);
  const q = result.quadrature;
  if (q) out.push(`quadrature: ${q.method}, ${q.nodes} nodes, estimated error ${formatNumber(q.error, 2)}`);
  return `${out.join('\n')}\n`;
}
