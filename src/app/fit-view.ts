// The fit and simulated-run panels' figures and rows, as plain data (pure, tested in Node): the Pearson residual
// of every reading, grouped by detector, against the data's first set-point column (in its shown unit) or, where
// the file has none, against the reading's line in the file; the profile interval of a fitted value, marked when
// it is asymmetric; and a simulated detector's signal beside the engine's with the difference in σ of the sampling,
// and its hit map as a heat map over its window (mm). A missing number is a gap or a dash, never NaN. The tables'
// cells follow the one number rule per column (src/beamline/numbers.ts): one notation and one count of figures down
// each column, a fitted value no finer than its σ, a simulated signal no finer than the σ of its sampling.
import type { FitResult, FittedParameter, SimulationResult } from './core-adapter.ts';
import type { EngineSignal, FitData } from './engine-protocol.ts';
import { SCAN_COLORS, type Figure } from './plan-view.ts';
import { fmt } from './format.ts';
import { formatByUnit, formatColumn, valueSigmaColumns, type NumberSpec } from '../beamline/numbers.ts';

type Theme = { font: { color: string }; xaxis: Record<string, unknown>; yaxis: Record<string, unknown> } & Record<string, unknown>;

const shown = (v: number, factor: number) => Number((v / factor).toPrecision(12));

/** The x of the residuals plot: the first set-point column, or the line in the file. */
export function residualAxis(data: FitData): { title: string; column?: number } {
  if (data.columns.length === 0) return { title: 'line in the data file' };
  const c = data.columns[0];
  return { title: c.unit ? `${c.name} (${c.unit})` : c.name, column: 0 };
}

/** Per detector (in the order of the first reading of each) the residuals' x, Pearson residual and hover text. */
export function residualGroups(f: FitResult, data: FitData): { detector: string; x: number[]; y: number[]; text: string[] }[] {
  const axis = residualAxis(data);
  const byLine = new Map(data.readings.map((r) => [r.line, r]));
  const groups = new Map<string, { detector: string; x: number[]; y: number[]; text: string[] }>();
  for (const r of f.residuals) {
    if (!Number.isFinite(r.pearson)) continue;
    const reading = byLine.get(r.line);
    let x: number;
    if (axis.column === undefined) x = r.line;
    else {
      const v = reading?.values[axis.column];
      if (v === undefined || !Number.isFinite(v)) continue;
      x = shown(v, data.columns[axis.column].factor);
    }
    let g = groups.get(r.detector);
    if (!g) groups.set(r.detector, (g = { detector: r.detector, x: [], y: [], text: [] }));
    g.x.push(x);
    g.y.push(r.pearson);
    g.text.push(`line ${r.line}: ${r.counts} counts, expected ${r.expected.toPrecision(7)}`);
  }
  return [...groups.values()];
}

/** The residuals plot: a marker per reading, a colour per detector, the zero line solid and ±2 dashed. */
export function residualsFigure(f: FitResult, data: FitData, theme: Theme): Figure {
  const axis = residualAxis(data);
  const groups = residualGroups(f, data);
  const data_: unknown[] = groups.map((g, i) => ({
    type: 'scatter', mode: 'markers', name: g.detector, x: g.x, y: g.y, text: g.text,
    marker: { size: 7, color: SCAN_COLORS[i % SCAN_COLORS.length] },
    hovertemplate: `${g.detector}: %{y:.3g}<br>${axis.title} = %{x:.6g}<br>%{text}<extra></extra>`,
  }));
  const line = (y: number, dash: string) => ({ type: 'line', xref: 'paper', yref: 'y', x0: 0, x1: 1, y0: y, y1: y, line: { color: theme.font.color, width: y === 0 ? 1.2 : 1, dash } });
  const extreme = Math.max(3, ...groups.flatMap((g) => g.y.map((v) => Math.abs(v))));
  const layout = {
    ...theme, margin: { ...(theme.margin as object), t: 16 }, showlegend: true, legend: { orientation: 'h', y: -0.25 }, hovermode: 'closest',
    xaxis: { ...theme.xaxis, title: { text: axis.title } },
    yaxis: { ...theme.yaxis, title: { text: 'Pearson residual (n − μ)/√μ' }, range: [-1.1 * extreme, 1.1 * extreme], zeroline: false },
    shapes: [line(0, 'solid'), line(2, 'dot'), line(-2, 'dot')],
  };
  return { data: data_, layout };
}

/** A fitted value's profile interval in its shown unit, and whether it is marked asymmetric. */
export function profileText(p: FittedParameter, digits = 6): { text: string; asymmetric: boolean } | undefined {
  if (!p.profile) return undefined;
  const end = (v: number | undefined) => (v !== undefined && Number.isFinite(v) ? fmt(v / p.factor, digits).replace(/\.?0+e/, 'e') : '…');
  return { text: `${end(p.profile.lower)} to ${end(p.profile.upper)}${p.unit ? ` ${p.unit}` : ''}`, asymmetric: p.profile.asymmetric };
}

/** Per detector: the simulated signal ± σ, the engine's, and the difference in σ of the sampling (absent without a σ). */
export function simulatedRows(s: SimulationResult, engine: readonly EngineSignal[]): {
  id: string; hits: number; signal: number; sigma: number; engine?: number; difference?: number; counts: number; dwell: number;
}[] {
  return s.detectors.map((d) => {
    const e = engine.find((x) => x.id === d.id)?.signal;
    const difference = e !== undefined && Number.isFinite(e) && d.signalSigma > 0 ? (d.signal - e) / d.signalSigma : undefined;
    return { id: d.id, hits: d.hits, signal: d.signal, sigma: d.signalSigma, ...(e !== undefined && Number.isFinite(e) ? { engine: e } : {}), ...(difference !== undefined ? { difference } : {}), counts: d.counts, dwell: d.dwell };
  });
}

/** A detector's hit map as a plotly heat map over its window (mm): z rows, x columns, atoms per bin. */
export function hitMapFigure(d: SimulationResult['detectors'][number], theme: Theme, dark: boolean): Figure | undefined {
  const m = d.map;
  if (!m || m.x.length < 2 || m.z.length < 2) return undefined;
  const centres = (e: number[]) => e.slice(1).map((v, i) => Number((((v + e[i]) / 2) * 1e3).toPrecision(9)));
  const xs = centres(m.x);
  const zs = centres(m.z);
  // counts[i][j] is x bin i, z bin j; plotly's z is rows (y) of columns (x)
  const z = zs.map((_, j) => xs.map((_, i) => m.counts[i]?.[j] ?? 0));
  const data = [{
    type: 'heatmap', x: xs, y: zs, z, colorscale: dark ? 'Cividis' : 'Viridis', zmin: 0,
    colorbar: { title: { text: 'atoms', side: 'right' }, thickness: 12 },
    hovertemplate: `${d.id}<br>x = %{x:.4g} mm<br>z = %{y:.4g} mm<br>%{z} atoms<extra></extra>`,
  }];
  const layout = {
    ...theme, showlegend: false, margin: { ...(theme.margin as object), t: 16 },
    xaxis: { ...theme.xaxis, title: { text: 'x at the detector plane (mm)' }, range: [m.x[0] * 1e3, m.x[m.x.length - 1] * 1e3] },
    yaxis: { ...theme.yaxis, title: { text: 'z (mm)' }, range: [m.z[0] * 1e3, m.z[m.z.length - 1] * 1e3] },
  };
  return { data, layout };
}

/** The density of a sampled profile at `v` (linear between its points, 0 outside them). */
function densityAt(p: { positions: number[]; density: number[] }, v: number): number {
  const xs = p.positions;
  const n = xs.length;
  if (n === 0 || v < xs[0] || v > xs[n - 1]) return 0;
  let k = 0;
  while (k < n - 2 && xs[k + 1] < v) k++;
  const span = xs[k + 1] - xs[k];
  const t = span > 0 ? (v - xs[k]) / span : 0;
  const d = p.density[k] + t * ((p.density[k + 1] ?? p.density[k]) - p.density[k]);
  return Number.isFinite(d) ? d : 0;
}

/**
 * The shape of a detector's hits along the engine's profile axis against the engine's profile of the sub-beams
 * that end on it, each normalised to 1 over the window (per mm): the window also clips across the other axis,
 * which the profile does not, so the shapes are compared, not the heights. The hits carry their Poisson error.
 */
export function profileComparison(d: SimulationResult['detectors'][number], engine: EngineSignal | undefined, theme: Theme): Figure | undefined {
  const m = d.map;
  const profiles = engine?.profiles ?? [];
  if (!m || profiles.length === 0 || !(d.hits > 0)) return undefined;
  const axis = profiles[0].axis;
  const same = profiles.filter((p) => p.axis === axis);
  const edges = axis === 'z' ? m.z : m.x;
  const nb = edges.length - 1;
  if (nb < 1) return undefined;
  const counts = Array.from({ length: nb }, (_, j) => (axis === 'z' ? m.counts.reduce((a, row) => a + (row[j] ?? 0), 0) : (m.counts[j] ?? []).reduce((a, b) => a + b, 0)));
  const total = counts.reduce((a, b) => a + b, 0);
  const centres = edges.slice(1).map((v, j) => (v + edges[j]) / 2);
  const widths = edges.slice(1).map((v, j) => v - edges[j]);
  // the engine's density averaged over each bin (Simpson's rule on the bin's ends and centre), as the hits are
  const at = (v: number) => same.reduce((a, p) => a + densityAt(p, v), 0);
  const analytic = centres.map((c, j) => (at(edges[j]) + 4 * at(c) + at(edges[j + 1])) / 6);
  const norm = analytic.reduce((a, v, j) => a + v * widths[j], 0);
  if (!(total > 0) || !(norm > 0)) return undefined;
  const mm = centres.map((c) => Number((c * 1e3).toPrecision(9)));
  const perMm = (v: number) => v * 1e-3;
  const data = [
    {
      type: 'scatter', mode: 'markers', name: 'hits', x: mm, y: counts.map((n, j) => perMm(n / (total * widths[j]))),
      error_y: { type: 'data', array: counts.map((n, j) => perMm(Math.sqrt(n) / (total * widths[j]))), visible: true, thickness: 1, width: 0 },
      marker: { size: 5, color: SCAN_COLORS[0] }, hovertemplate: `${axis} = %{x:.4g} mm<br>hits: %{y:.4g} /mm<extra></extra>`,
    },
    {
      type: 'scatter', mode: 'lines', name: 'engine profile', x: mm, y: analytic.map((v) => perMm(v / norm)),
      line: { color: SCAN_COLORS[1], width: 2 }, hovertemplate: `${axis} = %{x:.4g} mm<br>engine: %{y:.4g} /mm<extra></extra>`,
    },
  ];
  const layout = {
    ...theme, showlegend: true, legend: { orientation: 'h', y: -0.3 }, margin: { ...(theme.margin as object), t: 16 },
    xaxis: { ...theme.xaxis, title: { text: `${axis} at the detector plane (mm)` }, range: [edges[0] * 1e3, edges[nb] * 1e3] },
    yaxis: { ...theme.yaxis, title: { text: 'share per mm' }, rangemode: 'tozero' },
  };
  return { data, layout };
}

const DASH = '—';
const withUnit = (v: string, unit: string) => (v === DASH || !unit ? v : `${v} ${unit}`);
const finite = (v: number | undefined): number | undefined => (v !== undefined && Number.isFinite(v) ? v : undefined);

/** The fitted values table's cells, column by column, each value in its parameter's shown unit. */
export interface FitValueCells {
  value: string;
  /** σ, "at its bound" or a dash. */
  sigma: string;
  /** The profile interval ("a to b unit"), undefined without one. */
  profile?: { text: string; asymmetric: boolean };
  start: string;
}

export function fitValueCells(f: FitResult): FitValueCells[] {
  const ps = f.parameters;
  const err = (q: FittedParameter): NumberSpec => ({ figures: 7, ...(finite(q.sigma) !== undefined && q.sigma! > 0 ? { error: q.sigma! / q.factor } : {}) });
  const units = ps.map((q) => q.unit);
  const { value, sigma } = valueSigmaColumns(ps.map((q) => finite(q.value) !== undefined ? q.value / q.factor : undefined),
    ps.map((q) => finite(q.sigma) !== undefined ? q.sigma! / q.factor : undefined), 7, units, { blank: DASH });
  const start = formatByUnit(ps.map((q) => finite(q.start) !== undefined ? q.start / q.factor : undefined), { figures: 6 }, units, { blank: DASH });
  // the interval's ends, lower and upper of every parameter in one column, no finer than the parameter's σ
  const ends = formatByUnit(ps.flatMap((q) => [q.profile?.lower, q.profile?.upper].map((v) => finite(v) !== undefined ? v! / q.factor : undefined)),
    ps.flatMap((q) => [err(q), err(q)]), ps.flatMap((q) => [q.unit, q.unit]), { blank: '…' });
  return ps.map((q, i) => ({
    value: withUnit(value[i], q.unit),
    sigma: sigma[i] !== DASH ? withUnit(sigma[i], q.unit) : q.atBound ? 'at its bound' : DASH,
    ...(q.profile ? { profile: { text: `${ends[2 * i]} to ${ends[2 * i + 1]}${q.unit ? ` ${q.unit}` : ''}`, asymmetric: q.profile.asymmetric } } : {}),
    start: withUnit(start[i], q.unit),
  }));
}

/** The fitted oven state's populations (no finer than their σ) and σ, one column each. */
export function fitStateCells(state: NonNullable<FitResult['state']>): { population: string; sigma: string }[] {
  const sig = state.sigma.map((s) => (s === null ? undefined : finite(s)));
  const { value: population, sigma } = valueSigmaColumns(state.populations.map(finite), sig, 5, undefined, { blank: DASH });
  return state.populations.map((_, i) => ({ population: population[i], sigma: sigma[i] }));
}

/**
 * A fitted density matrix as a table: row a, column b gives Re ρ_ab ± σ and, off the diagonal, Im ρ_ab ± σ, each no
 * finer than its σ (one notation over the matrix); "—" for a σ the readings do not determine. With the purity and
 * ⟨J⟩/j as one line.
 */
export function fitDensityCells(dm: NonNullable<FitResult['density']>): { cells: string[][]; summary: string } {
  const d = dm.basis.length;
  const flat = <T,>(m: T[][]) => m.flatMap((r) => r);
  const re = valueSigmaColumns(flat(dm.re).map(finite), flat(dm.sigmaRe).map((s) => (s === null ? undefined : finite(s))), 4, undefined, { blank: DASH });
  const im = valueSigmaColumns(flat(dm.im).map(finite), flat(dm.sigmaIm).map((s) => (s === null ? undefined : finite(s))), 4, undefined, { blank: DASH });
  const cells = Array.from({ length: d }, (_, a) => Array.from({ length: d }, (_, b) => {
    const k = a * d + b;
    const real = `${re.value[k]} ± ${re.sigma[k]}`;
    return a === b ? real : `${real}, i: ${im.value[k]} ± ${im.sigma[k]}`;
  }));
  const pol = formatColumn([dm.polarization.x, dm.polarization.y, dm.polarization.z].map(finite), { figures: 3 }, { blank: DASH });
  const purity = formatColumn([finite(dm.purity)], { figures: 4 }, { blank: DASH })[0];
  const summary = `purity ${purity}${dm.puritySigma === null ? '' : ` ± ${formatColumn([finite(dm.puritySigma)], { figures: 2 }, { blank: DASH })[0]}`}; ⟨J⟩/j = (${pol.join(', ')}); the readings determine ${dm.determined} of the ${dm.parameters} parameters of ρ`;
  return { cells, summary };
}

/** The simulated run's table: signal ± σ (no finer than σ), the engine's signal, the difference in σ, the dwell. */
export function simulatedCells(rows: ReturnType<typeof simulatedRows>): { signal: string; sigma: string; engine: string; difference: string; dwell: string }[] {
  const { value: signal, sigma } = valueSigmaColumns(rows.map((r) => finite(r.signal)), rows.map((r) => finite(r.sigma)), 4, undefined, { blank: DASH });
  const engine = formatColumn(rows.map((r) => finite(r.engine)), { figures: 4 }, { blank: DASH });
  const difference = formatColumn(rows.map((r) => (finite(r.difference) !== undefined ? Math.abs(r.difference!) : undefined)), { figures: 2 }, { blank: DASH });
  const dwell = formatColumn(rows.map((r) => finite(r.dwell)), { figures: 3 }, { blank: DASH });
  return rows.map((r, i) => ({
    signal: signal[i], sigma: sigma[i], engine: engine[i],
    difference: difference[i] === DASH ? DASH : `${r.difference! >= 0 ? '+' : '−'}${difference[i]}`,
    dwell: dwell[i],
  }));
}
