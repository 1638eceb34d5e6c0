// The scan panel's figures, as plain plotly data (pure, tested in Node): per detector a curve of its yield or its
// counts in the dwell against the scanned parameter (1-D), or a map over the grid of two (2-D), in the units the
// parameters are shown in, with the document's set-point marked. A point the reader refused is a gap (null, never
// NaN or 0) and carries its reason on hover.
import type { ScanResult } from './core-adapter.ts';
import { AXIS_NUMBERS, fmt } from './format.ts';

export type ScanQuantity = 'yield' | 'counts';

const AXIS_TITLE: Record<ScanQuantity, string> = { yield: 'yield (of the oven flux)', counts: 'counts in dwell (incl. bg)' };

/** Colours of the detectors' curves (readable on the light and the dark paper). */
export const SCAN_COLORS = ['#1f6fb2', '#c2571a', '#2e8b57', '#8e44ad', '#b8860b', '#d6336c', '#17a2b8', '#6c757d'];

function label(p: ScanResult['parameters'][number]): string {
  return p.unit ? `${p.name} (${p.unit})` : p.name;
}

function shown(v: number, p: ScanResult['parameters'][number]): number {
  return Number((v / p.factor).toPrecision(12));
}

/** One detector's values at every point of the scan: the number, or null where the point has none. */
export function detectorValues(r: ScanResult, id: string, q: ScanQuantity): { y: (number | null)[]; sigma: (number | null)[] } {
  const y: (number | null)[] = [];
  const sigma: (number | null)[] = [];
  for (const p of r.points) {
    const d = p.detectors?.find((x) => x.id === id);
    const v = d ? (q === 'yield' ? d.yield : d.counts) : undefined;
    y.push(v !== undefined && Number.isFinite(v) ? v : null);
    sigma.push(d && q === 'counts' && Number.isFinite(d.sigma) ? d.sigma : null);
  }
  return { y, sigma };
}

/** The points without numbers, with why. */
export function refusedPoints(r: ScanResult): { index: number[]; values: number[]; reason: string }[] {
  return r.points.filter((p) => p.error !== undefined || !p.detectors).map((p) => ({ index: p.index, values: p.values, reason: p.error ?? 'no numbers for this point' }));
}

export interface Figure {
  data: unknown[];
  layout: Record<string, unknown>;
}

type Theme = { font: { color: string }; xaxis: Record<string, unknown>; yaxis: Record<string, unknown> } & Record<string, unknown>;

/** The 1-D figure: a curve per detector, gaps at refused points (their reasons on hover), the set-point dashed. */
export function scanCurves(r: ScanResult, q: ScanQuantity, theme: Theme): Figure {
  const p = r.parameters[0];
  const x = p.values.map((v) => shown(v, p));
  const data: unknown[] = r.detectors.map((id, i) => {
    const { y, sigma } = detectorValues(r, id, q);
    return {
      type: 'scatter', mode: x.length > 60 ? 'lines' : 'lines+markers', name: id, x, y, connectgaps: false,
      line: { color: SCAN_COLORS[i % SCAN_COLORS.length], width: 1.6 }, marker: { size: 5 },
      ...(q === 'counts' ? { error_y: { type: 'data', array: sigma, visible: true, thickness: 1, width: 2 } } : {}),
      hovertemplate: `${id}: %{y:.6g}${q === 'counts' ? ' ± %{error_y.array:.3g}' : ''}<br>${p.name} = %{x:.6g} ${p.unit}<extra></extra>`,
    };
  });
  const refused = refusedPoints(r);
  if (refused.length > 0) {
    data.push({
      type: 'scatter', mode: 'markers', name: 'refused', yaxis: 'y2', x: refused.map((f) => shown(f.values[0], p)), y: refused.map(() => 0.5),
      marker: { symbol: 'line-ns-open', size: 16, color: '#b00020', line: { width: 2, color: '#b00020' } },
      text: refused.map((f) => f.reason), hovertemplate: `${p.name} = %{x:.6g} ${p.unit}: not evaluated<br>%{text}<extra></extra>`,
    });
  }
  const present = shown(p.present, p);
  const layout = {
    ...theme, margin: { ...(theme.margin as object), t: 24 }, showlegend: true, legend: { orientation: 'h', y: -0.22 }, hovermode: 'closest',
    xaxis: { ...theme.xaxis, title: { text: label(p) }, type: p.spacing === 'log' ? 'log' : 'linear', ...AXIS_NUMBERS },
    yaxis: { ...theme.yaxis, title: { text: AXIS_TITLE[q] }, rangemode: 'tozero', ...AXIS_NUMBERS },
    yaxis2: { overlaying: 'y', range: [0, 1], visible: false, fixedrange: true },
    shapes: [{ type: 'line', xref: 'x', yref: 'paper', x0: present, x1: present, y0: 0, y1: 1, line: { color: theme.font.color, width: 1.2, dash: 'dash' } }],
    annotations: [{ xref: 'x', yref: 'paper', x: present, y: 1, yanchor: 'bottom', showarrow: false, text: `set-point ${fmt(present, 6)}${p.unit ? ` ${p.unit}` : ''}`, font: { size: 11, color: theme.font.color } }],
  };
  return { data, layout };
}

/** The 2-D figures: a map per detector over the grid (first parameter up, second across), gaps where refused. */
export function scanMaps(r: ScanResult, q: ScanQuantity, theme: Theme, dark: boolean): { id: string; figure: Figure }[] {
  const [a, b] = r.parameters;
  const ys = a.values.map((v) => shown(v, a));
  const xs = b.values.map((v) => shown(v, b));
  return r.detectors.map((id) => {
    const { y } = detectorValues(r, id, q);
    const z: (number | null)[][] = ys.map(() => xs.map(() => null));
    const text: string[][] = ys.map(() => xs.map(() => ''));
    r.points.forEach((pt, k) => {
      const [i, j] = pt.index;
      z[i][j] = y[k];
      text[i][j] = y[k] === null ? `not evaluated: ${pt.error ?? 'no numbers'}` : `${id}: ${fmt(y[k]!, 6)}`;
    });
    const data = [
      {
        type: 'heatmap', x: xs, y: ys, z, text, hoverongaps: true, colorscale: dark ? 'Cividis' : 'Viridis',
        colorbar: { title: { text: q === 'yield' ? 'yield' : 'counts', side: 'right' }, thickness: 12, ...AXIS_NUMBERS },
        hovertemplate: `${b.name} = %{x:.6g} ${b.unit}<br>${a.name} = %{y:.6g} ${a.unit}<br>%{text}<extra></extra>`,
      },
      {
        type: 'scatter', mode: 'markers', name: 'set-point', x: [shown(b.present, b)], y: [shown(a.present, a)], showlegend: false,
        marker: { symbol: 'x-thin-open', size: 14, color: '#ff4d4d', line: { width: 2.5, color: '#ff4d4d' } },
        hovertemplate: `set-point<br>${b.name} = %{x:.6g} ${b.unit}<br>${a.name} = %{y:.6g} ${a.unit}<extra></extra>`,
      },
    ];
    const layout = {
      ...theme, showlegend: false,
      xaxis: { ...theme.xaxis, title: { text: label(b) }, type: b.spacing === 'log' ? 'log' : 'linear', ...AXIS_NUMBERS },
      yaxis: { ...theme.yaxis, title: { text: label(a) }, type: a.spacing === 'log' ? 'log' : 'linear', ...AXIS_NUMBERS },
    };
    return { id, figure: { data, layout } };
  });
}
