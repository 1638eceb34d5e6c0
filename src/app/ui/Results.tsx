// Results, live: the ports table, detectors, warnings and the plots of the latest engine run.
import { useId, useMemo } from 'react';
import type { Beamline } from '../core-adapter.ts';
import { timeToPrecision } from '../core-adapter.ts';
import { detectorCells, dwellById, lostCell, portCells, portRows, type RunResultView } from '../results.ts';
import { AXIS_NUMBERS, fmt, fmtLength, fmtTime } from '../format.ts';
import { detectorPlanes } from '../plane-view.ts';
import { Plot, PLOT_PALETTE } from './Plot.tsx';
import { LEAF_COLORS } from './Schematic.tsx';
import type { EngineStatus } from '../engine-client.ts';

interface Props {
  line: Beamline;
  result?: RunResultView;
  resultSeq: number;
  docSeq: number;
  error?: string;
  /** The run was refused by the engine's cost estimate and the user chose not to run it: the question, shown instead of
   *  results, with "Run anyway". */
  notRun?: string;
  onRunAnyway?(): void;
  ms?: number;
  status: EngineStatus;
  epsText: string;
  eps: number | undefined;
  onEps(text: string): void;
  onCancel(): void;
  onCsv(): void;
  dark: boolean;
}

export function plotTheme(dark: boolean) {
  const pal = dark ? PLOT_PALETTE.dark : PLOT_PALETTE.light;
  const fg = pal.fg;
  const grid = pal.grid;
  return {
    // opaque; an export is drawn on the light palette whatever the theme (Plot.tsx, lightFigure)
    paper_bgcolor: pal.paper,
    plot_bgcolor: pal.paper,
    font: { family: 'system-ui, sans-serif', size: 12, color: fg },
    margin: { l: 64, r: 16, t: 12, b: 48 },
    // numbers on every axis with SI prefixes, units in the axis titles (AXIS_NUMBERS)
    xaxis: { gridcolor: grid, zerolinecolor: grid, linecolor: fg, ...AXIS_NUMBERS },
    yaxis: { gridcolor: grid, zerolinecolor: grid, linecolor: fg, ...AXIS_NUMBERS },
  };
}

export function Results(p: Props) {
  const { result, line, eps } = p;
  const epsId = useId();
  const dwell = useMemo(() => dwellById(line.elements as unknown as { id: string; kind: string; dwell?: number }[]), [line]);
  const rows = useMemo(() => (result ? portRows(result, dwell, eps ?? 0.01) : []), [result, dwell, eps]);
  // the numbers as the one rule writes them (src/beamline/numbers.ts): round-off as 0, figures per column, one notation per column
  const cells = useMemo(() => portCells(rows), [rows]);
  const detCells = useMemo(() => (result ? detectorCells(result) : []), [result]);
  const theme = useMemo(() => plotTheme(p.dark), [p.dark]);
  const seq = p.resultSeq;

  const counts = useMemo(() => {
    if (!result) return undefined;
    const det = rows.map((r, i) => ({ r, i })).filter((x) => x.r.counts !== undefined);
    const data = [{
      type: 'bar',
      x: det.map((x) => `${x.r.target}<br>${result.leaves[x.i].path.join('<br>')}`),
      y: det.map((x) => x.r.counts),
      error_y: { type: 'data', array: det.map((x) => x.r.sigma), visible: true, color: theme.font.color },
      marker: { color: det.map((x) => LEAF_COLORS[x.i % LEAF_COLORS.length]) },
      hovertemplate: 'N = %{y:.4g} ± %{error_y.array:.3g}<extra></extra>',
    }];
    // fixed margins (automargin makes plotly lay the figure out repeatedly): one line per tick-label row
    const rowsOfLabel = Math.max(1, ...det.map((x) => result.leaves[x.i].path.length + 1));
    const layout = {
      ...theme, margin: { ...theme.margin, b: 14 + 15 * rowsOfLabel },
      yaxis: { ...theme.yaxis, title: { text: 'signal counts in the dwell' }, rangemode: 'tozero' }, xaxis: { ...theme.xaxis, tickangle: 0, showgrid: false },
    };
    return { data, layout };
  }, [result, rows, theme]);

  // one plot and one scale per detector plane (plane-view.ts): each sub-beam as the band holding 90 % of its flux
  // along its profile's axis (± rms across it), the windows dotted; and the profiles themselves, filled
  const planes = useMemo(() => {
    if (!result) return [];
    const mm = 1e3;
    const fill = (c: string, a: number) => {
      const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(c);
      return m ? `rgba(${parseInt(m[1], 16)},${parseInt(m[2], 16)},${parseInt(m[3], 16)},${a})` : c;
    };
    return detectorPlanes(result, line.elements).flatMap((g) => {
      if (g.beams.length === 0 && g.windows.length === 0) return [];
      const name = g.detectors.join(', ');
      const windows = g.windows.map((w) => ({ type: 'rect', x0: w.x0 * mm, x1: w.x1 * mm, y0: w.z0 * mm, y1: w.z1 * mm,
        line: { color: theme.font.color, width: 1.2, dash: 'dot' }, fillcolor: 'rgba(0,0,0,0)' }));
      const bands = g.beams.map((b) => {
        const c = LEAF_COLORS[b.leaf % LEAF_COLORS.length];
        return { type: 'rect', x0: b.band.x0 * mm, x1: b.band.x1 * mm, y0: b.band.z0 * mm, y1: b.band.z1 * mm, line: { color: c, width: 1 }, fillcolor: fill(c, 0.3), layer: 'below' };
      });
      const labels = g.windows.map((w) => ({ x: ((w.x0 + w.x1) / 2) * mm, y: w.z1 * mm, text: w.id, showarrow: false, yanchor: 'bottom', font: { size: 11, color: theme.font.color } }));
      const across = g.axis === 'z' ? 'x' : 'z';
      // one invisible point per sub-beam at its mean carries the legend entry and the hover (the band is a shape)
      const data = g.beams.map((b) => ({
        type: 'scatter', mode: 'markers', name: b.name, x: [b.mean.x * mm], y: [b.mean.z * mm],
        marker: { color: LEAF_COLORS[b.leaf % LEAF_COLORS.length], size: 6, symbol: 'line-ew-open' },
        hovertemplate: `${b.name} → ${b.target}<br>mean x %{x:.3f} mm, z %{y:.3f} mm<br>90 % of the flux in ${g.axis} ${fmt(b.band[`${g.axis}0`] * mm, 3)} … ${fmt(b.band[`${g.axis}1`] * mm, 3)} mm`
          + `${b.spread ? `<br>rms ${across} ${fmt(b.spread[across] * mm, 3)} mm` : ''}${b.captured !== undefined ? `<br>captured ${fmt(b.captured, 3)}` : ''}<extra></extra>`,
      }));
      const layout = {
        ...theme, shapes: [...bands, ...windows], annotations: labels, showlegend: true, legend: { orientation: 'h', y: -0.25 },
        xaxis: { ...theme.xaxis, title: { text: 'x (mm)' }, zeroline: true },
        yaxis: { ...theme.yaxis, title: { text: 'z (mm)' }, zeroline: true, scaleanchor: 'x' },
      };
      const verdicts = g.verdicts.map((n) => `${n.a} / ${n.b}: ${n.verdict} along ${n.axis} (separation ${fmt(n.separation * mm, 3)} mm, overlap ${fmt(n.overlap, 2)})`);
      const note = g.beams.length === 0 ? 'the engine reports no sub-beam positions for this line' : verdicts.join(' · ') || undefined;
      const profiled = g.beams.filter((b) => b.profile && b.profile.axis === g.axis);
      const edges = g.windows.map((w) => ({ type: 'rect', xref: 'x', yref: 'paper', x0: (g.axis === 'x' ? w.x0 : w.z0) * mm, x1: (g.axis === 'x' ? w.x1 : w.z1) * mm, y0: 0, y1: 1,
        line: { color: theme.font.color, width: 1, dash: 'dot' }, fillcolor: 'rgba(120,140,160,0.10)', layer: 'below' }));
      const edgeLabels = g.windows.map((w) => ({ x: ((g.axis === 'x' ? w.x0 + w.x1 : w.z0 + w.z1) / 2) * mm, yref: 'paper', y: 1, text: w.id, showarrow: false, yanchor: 'bottom', font: { size: 11, color: theme.font.color } }));
      const profile = profiled.length > 0
        ? {
            data: profiled.map((b) => {
              const c = LEAF_COLORS[b.leaf % LEAF_COLORS.length];
              return { type: 'scatter', mode: 'lines', name: b.name, line: { color: c, width: 1.5, shape: 'hv' }, fill: 'tozeroy', fillcolor: fill(c, 0.25),
                x: b.profile!.positions.map((v) => v * mm), y: b.profile!.density.map((dd) => dd / mm),
                hovertemplate: `${b.name}<br>%{x:.3f} mm: %{y:.4g} per mm<extra></extra>` };
            }),
            layout: {
              ...theme, shapes: edges, annotations: edgeLabels, showlegend: true, legend: { orientation: 'h', y: -0.3 }, margin: { ...theme.margin, t: 22 },
              xaxis: { ...theme.xaxis, title: { text: `${g.axis} (mm)` } },
              yaxis: { ...theme.yaxis, title: { text: 'fraction of the oven flux per mm (/mm)' }, rangemode: 'tozero' },
            },
          }
        : undefined;
      const key = g.detectors[0];
      const where = g.plane !== undefined ? ` at ${fmtLength(g.plane)}` : '';
      return [{ key, name, where, axis: g.axis, data, layout, note, profile }];
    });
  }, [result, line, theme]);

  const velocity = useMemo(() => {
    const v = result?.velocity;
    if (!v || v.speeds.length === 0) return undefined;
    // a table is a set of discrete speeds with flux weights: drawn as stems, not as a density curve
    const discrete = v.kind === 'table' || v.kind === 'fixed';
    const data = discrete
      ? [{ type: 'scatter', mode: 'lines+markers', x: v.speeds.flatMap((x) => [x, x, null]), y: v.density.flatMap((y) => [0, y, null]),
        line: { color: '#1f6fb2' }, marker: { size: 5 }, connectgaps: false, hovertemplate: '%{x:.4g} m/s: weight %{y:.4g}<extra></extra>' }]
      : [{ type: 'scatter', mode: v.speeds.length > 40 ? 'lines' : 'lines+markers', x: v.speeds, y: v.density, line: { color: '#1f6fb2' },
        hovertemplate: '%{x:.4g} m/s: %{y:.4g}<extra></extra>' }];
    const layout = { ...theme, xaxis: { ...theme.xaxis, title: { text: 'speed (m/s)' } },
      yaxis: { ...theme.yaxis, title: { text: discrete ? 'flux weight of each speed' : 'flux-weighted density (s/m)' }, rangemode: 'tozero' } };
    return { data, layout };
  }, [result, theme]);

  const stale = result !== undefined && seq !== p.docSeq;
  return (
    <section className="results" aria-label="Results" data-seq={seq} data-stale={stale ? 'true' : 'false'}>
      <div className="results-head">
        <h2>Results</h2>
        {p.status.running && p.status.slow && (
          <div className="run-progress">
            <progress max={1} value={p.status.progress > 0 ? p.status.progress : undefined} aria-label="Engine progress" />
            <button type="button" onClick={p.onCancel}>Cancel</button>
          </div>
        )}
        {p.status.running && !p.status.slow && <span className="run-note">computing…</span>}
        {p.status.cancelled && <span className="run-note">cancelled: the table shows the last finished run</span>}
        <span className="eps">
          <label htmlFor={epsId}>precision ε</label>
          <input id={epsId} type="text" value={p.epsText} onChange={(e) => p.onEps(e.target.value)} size={6} aria-invalid={eps === undefined}
            aria-describedby={eps === undefined ? `${epsId}-err` : undefined} />
          {eps === undefined && <span id={`${epsId}-err`} className="field-error">write a relative precision such as "1 %" or 0.01</span>}
        </span>
        <button type="button" onClick={p.onCsv} disabled={!result}>Export table as CSV</button>
      </div>
      {p.notRun !== undefined ? (
        <div className="run-error not-run" role="alert" data-not-run>
          <p>Not run: {p.notRun}</p>
          <button type="button" onClick={p.onRunAnyway}>Run anyway</button>
        </div>
      ) : p.error && <p className="run-error" role="alert">The engine could not run this line: {p.error}</p>}
      {stale && !p.status.running && p.notRun === undefined && <p className="note">The tables and plots show the last run that finished (run {seq}).</p>}
      {!result && !p.error && <p className="note">Waiting for the first run…</p>}
      {result && p.notRun === undefined && (
        <>
          <table className="ports" data-seq={seq} aria-label="Ports table">
            <thead>
              <tr>
                <th scope="col">path</th><th scope="col">target</th><th scope="col">yield</th><th scope="col">signal rate (/s)</th>
                <th scope="col">counts ± σ</th><th scope="col">detector rate (/s)</th><th scope="col">time to {eps !== undefined ? `${fmt(eps * 100, 3)} %` : 'ε'}</th>
                {rows.some((r) => r.captured !== undefined) && <th scope="col">captured</th>}
              </tr>
            </thead>
            <tbody>
              {rows.map((r, i) => (
                <tr key={i} data-target={r.target} data-path={r.path}>
                  <td><span className="swatch" style={{ background: LEAF_COLORS[i % LEAF_COLORS.length] }} aria-hidden="true" />{r.path}</td>
                  <td>{r.target}</td>
                  <td className="num" data-yield={r.yield}>{cells[i].yield}</td>
                  <td className="num">{cells[i].rate}</td>
                  <td className="num">{cells[i].counts}</td>
                  <td className="num">{cells[i].detectorRate}</td>
                  <td className="num">{r.time !== undefined ? (detCells.find((d) => d.id === r.target)?.noSignal ? 'no signal' : fmtTime(r.time)) : '—'}</td>
                  {rows.some((x) => x.captured !== undefined) && <td className="num">{cells[i].captured}</td>}
                </tr>
              ))}
            </tbody>
            <tfoot>
              <tr><td colSpan={2}>lost</td><td className="num">{lostCell(result)}</td><td colSpan={5} /></tr>
            </tfoot>
          </table>
          <table className="detectors" aria-label="Detectors">
            <thead>
              <tr><th scope="col">detector</th><th scope="col">yield</th><th scope="col">rate incl. background (/s)</th><th scope="col">counts ± σ</th>
                <th scope="col">background (/s)</th><th scope="col">signal / background</th>
                <th scope="col">signal to {eps !== undefined ? `${fmt(eps * 100, 3)} %` : 'ε'}, background known</th></tr>
            </thead>
            <tbody>
              {result.detectors.map((d, i) => (
                <tr key={d.id}>
                  <td>{d.id}</td><td className="num">{detCells[i].yield}</td><td className="num">{detCells[i].rate}</td>
                  <td className="num">{detCells[i].counts}</td><td className="num">{detCells[i].background}</td>
                  <td className="num">{detCells[i].signalToBackground}</td>
                  <td className="num">{eps === undefined ? '—' : detCells[i].noSignal ? 'no signal' : fmtTime(timeToPrecision(d.signal, d.background, eps))}</td>
                </tr>
              ))}
            </tbody>
          </table>
          {result.warnings.length > 0 && (
            <div className="warnings" role="note" aria-label="Engine warnings">
              <h3>Warnings</h3>
              <ul>{result.warnings.map((w, i) => <li key={i}>{w}</li>)}</ul>
            </div>
          )}
          <div className="plots">
            {counts && <Plot id="counts" title="Expected counts per leaf (±√N)" data={counts.data} layout={counts.layout} seq={seq} fileName="counts-per-leaf" height={300} />}
            {planes.map((pl) => (
              <div key={pl.key}>
                <Plot id={`plane-${pl.key}`} title={`Detector plane${pl.where} (${pl.name}): each sub-beam\u2019s central 90 % along ${pl.axis}, windows dotted`} data={pl.data} layout={pl.layout} seq={seq}
                  fileName={`detector-plane-${pl.key}`} height={300} delayMs={40} />
                {pl.note && <p className="note">{pl.note}</p>}
              </div>
            ))}
            {planes.filter((pl) => pl.profile).map((pl) => (
              <Plot key={`profile-${pl.key}`} id={`profile-${pl.key}`} title={`Profiles${pl.where} along ${pl.axis} (${pl.name}), windows shaded`}
                data={pl.profile!.data} layout={pl.profile!.layout} seq={seq} fileName={`profiles-${pl.key}`} delayMs={80} />
            ))}
            {velocity ? (
              <Plot id="velocity" title="Velocity distribution of the oven" data={velocity.data} layout={velocity.layout} seq={seq} fileName="velocity-distribution" delayMs={120} />
            ) : (
              <p className="note">The engine reported no velocity distribution for this run.</p>
            )}
          </div>
        </>
      )}
    </section>
  );
}
