// The Breit–Rabi levels panel: the line's species' levels against the field (0 to past the strongest magnet),
// each magnet's field marked, and per magnet a table of its levels at its field with the port each level is
// sorted into and where that port goes (levels-view.ts; the numbers are the engine's levels listing).
import { useMemo } from 'react';
import type { Beamline } from '../core-adapter.ts';
import { breitRabiCurves, levelsView } from '../levels-view.ts';
import { formatColumn } from '../../beamline/numbers.ts';
import { Plot } from './Plot.tsx';
import { plotTheme } from './Results.tsx';

interface Props {
  line: Beamline;
  /** Show this magnet only (its inspector); all magnets when absent (the oven and species). */
  only?: string;
  dark: boolean;
  seq: number;
}

/** The curve of a level: its low-field label, with the isotope in a mixture (breitRabiCurves names them so). */
const curveKey = (r: { isotope?: string; lowField: string }) => (r.isotope ? `${r.isotope} ${r.lowField}` : r.lowField);

const CURVE = ['#1f6fb2', '#c2410c', '#15803d', '#7c3aed', '#b91c1c', '#0e7490', '#a16207', '#be185d'];

export function LevelsPanel({ line, only, dark, seq }: Props) {
  const view = useMemo(() => levelsView(line), [line]);
  const theme = useMemo(() => plotTheme(dark), [dark]);
  const magnets = useMemo(() => (view.ok ? view.magnets.filter((m) => only === undefined || m.id === only) : []), [view, only]);
  const species = view.ok ? view.species : '';
  const maxField = Math.max(0, ...magnets.map((m) => m.field));
  /** One colour per level (its low-field label, and isotope in a mixture), in the order of the first magnet's rows. */
  const colours = useMemo(() => {
    const m = new Map<string, string>();
    for (const g of magnets) for (const r of g.rows) {
      const k = curveKey(r);
      if (!m.has(k)) m.set(k, CURVE[m.size % CURVE.length]);
    }
    return m;
  }, [magnets]);
  const top = maxField > 0 ? maxField * 1.25 : 0.1;
  // the diagram depends on the species and the field range only: an edit of any other set-point does not redo it
  // (a Cs-133 diagram is about a hundred eigen-solutions of a 16 × 16 Hamiltonian)
  const curves = useMemo(() => (species ? breitRabiCurves(species, top) : undefined), [species, top]);
  const chart = useMemo(() => {
    if (!view.ok || magnets.length === 0 || !curves) return undefined;
    const c = curves;
    const data: unknown[] = c.curves.map((k) => ({
      type: 'scatter', mode: 'lines', name: k.name, x: c.fields, y: k.energy.map((e) => e / 1e9),
      line: { color: colours.get(k.name) ?? CURVE[0], width: 1.4 }, hovertemplate: `${k.name}<br>%{x:.4g} T: %{y:.6g} GHz<extra></extra>`,
    }));
    // each magnet's levels at its field: filled where the port goes on, open where it is stopped
    for (const m of magnets) {
      for (const stopped of [false, true]) {
        const rows = m.rows.filter((r) => (r.target === 'stop') === stopped);
        if (rows.length === 0) continue;
        data.push({
          type: 'scatter', mode: 'markers', name: `${m.id} ${stopped ? 'stopped' : 'routed'}`, showlegend: false,
          x: rows.map(() => m.field), y: rows.map((r) => r.energy / 1e9),
          marker: { size: 9, symbol: stopped ? 'circle-open' : 'circle', color: theme.font.color, line: { width: 1.5, color: theme.font.color } },
          text: rows.map((r) => `${m.id} ${r.port} → ${r.target}`), hovertemplate: '%{text}<extra></extra>',
        });
      }
    }
    const shapes = magnets.map((m) => ({ type: 'line', x0: m.field, x1: m.field, yref: 'paper', y0: 0, y1: 1, line: { color: theme.font.color, width: 1, dash: 'dot' } }));
    const annotations = magnets.map((m, i) => ({ x: m.field, yref: 'paper', y: 1 - 0.07 * (i % 3), text: m.id, showarrow: false, xanchor: 'left', font: { size: 11, color: theme.font.color } }));
    const layout = {
      // no legend in the narrow inspector: each curve's colour is the swatch of its level in the tables below
      ...theme, shapes, annotations, showlegend: false,
      margin: { l: 48, r: 10, t: 16, b: 44 },
      xaxis: { ...theme.xaxis, title: { text: 'field B (T)' }, range: [0, top] },
      yaxis: { ...theme.yaxis, title: { text: 'E/h (GHz)' } },
    };
    return { data, layout };
  }, [view, magnets, curves, top, theme, colours]);

  if (!view.ok) return <p className="note">Levels: {view.message}.</p>;
  if (magnets.length === 0) {
    return <p className="note">Levels: {view.noField.length > 0 ? `${view.noField.join(', ')} ha${view.noField.length === 1 ? 's' : 've'} no field size` : 'the line has no magnet'}.</p>;
  }
  return (
    <section className="levels-panel" aria-label={`Levels of ${species}`}>
      <h3>Levels of {species}{only ? ` in ${only}` : ' at the magnets\u2019 fields'}</h3>
      {chart && <Plot id={`levels-${only ?? 'line'}`} title={`Breit–Rabi levels of ${species}; ● routed on, ○ stopped`} data={chart.data} layout={chart.layout}
        seq={seq} fileName={`levels-${species}`} height={300} />}
      {magnets.map((m) => {
        const energies = formatColumn(m.rows.map((r) => r.energy / 1e6), { figures: 9 });
        const moments = formatColumn(m.rows.map((r) => r.moment), { figures: 6 });
        return (
          // a narrow pane scrolls the table sideways instead of cutting off its last column
          <div key={m.id} className="levels-scroll" tabIndex={0} role="group" aria-label={`Levels in ${m.id} (scrolls sideways in a narrow pane)`} style={{ overflowX: 'auto' }}>
          <table className="levels" aria-label={`Levels in ${m.id}`} data-magnet={m.id} style={{ fontSize: 11, borderCollapse: 'collapse', width: '100%', margin: '6px 0' }}>
            <caption style={{ textAlign: 'left', fontWeight: 600 }}>{m.id} at {formatColumn([m.field], { figures: 6 })[0]} T, sorted by {m.group === 'mJ' ? 'm_J' : 'eigenstate'}</caption>
            <thead><tr><th scope="col">level</th><th scope="col">E/h (MHz)</th><th scope="col">μ_eff (μB)</th><th scope="col">{m.group === 'mJ' ? 'port → ' : ''}target</th></tr></thead>
            <tbody>
              {m.rows.map((r, i) => (
                <tr key={i} data-level={r.lowField} data-target={r.target} className={r.target === 'stop' ? 'stopped' : 'routed'}
                  style={r.target === 'stop' ? { color: 'var(--ink-soft, #667)' } : undefined}>
                  <td title={`high field: ${r.highField}`} style={{ whiteSpace: 'nowrap' }}>
                    <span className="swatch" style={{ background: colours.get(curveKey(r)) }} aria-hidden="true" />
                    {r.isotope ? `${r.isotope} ` : ''}{r.lowField}
                  </td>
                  <td className="num">{energies[i]}</td><td className="num">{moments[i]}</td>
                  <td>{m.group === 'mJ' ? `${r.port} → ` : ''}{r.target === 'stop' ? 'stop' : <strong>{r.target}</strong>}</td>
                </tr>
              ))}
            </tbody>
          </table>
          </div>
        );
      })}
      {view.noField.length > 0 && <p className="note">No levels for {view.noField.join(', ')}: no field size given.</p>}
      <p className="note">Hover a level for its high-field label. E/h of H as written (traceless), μ_eff = −∂E/∂B, as <code>spinyard levels</code> lists them.</p>
    </section>
  );
}
