// The line drawn to scale: a side view (z up) and a top view (x across) along the beam (+y to the
// right), with positions from the cumulative gaps and lengths, apertures and windows, magnets with an
// end-view of their roll, and the sub-beams to the engine's displacements at the detector planes.
import { drawElement } from './drawings.tsx';
import { useMemo } from 'react';
import type { Beamline } from '../core-adapter.ts';
import { beamTrace, maxTransverse, placeElements, placeInOrder, scaleBar, transverseExaggeration, lengthLabel, type Placed } from '../layout.ts';
import type { RunResultView } from '../results.ts';
import { fmtLength } from '../format.ts';

const W = 960;
const VIEW_H = 175;
const LEFT = 56;
const RIGHT = 30;

export const LEAF_COLORS = ['#c0392b', '#1f6fb2', '#2e8b57', '#b8860b', '#7d3c98', '#d35400', '#117a8b', '#6d4c41'];

interface Props {
  line: Beamline;
  result?: RunResultView;
  selected?: string;
  onSelect(id: string): void;
  warned: ReadonlySet<string>;
}

export function Schematic({ line, result, selected, onSelect, warned }: Props) {
  const geo = useMemo(() => {
    const real = placeElements(line);
    const toScale = real.end > 0;
    const { placed, end } = toScale ? real : placeInOrder(line);
    const leaves = result?.leaves ?? [];
    const traces = leaves.map((l) => beamTrace(line, placed, l));
    const offsets = traces.flatMap((t) => t.points.map((p) => ({ x: p.x, z: p.z })));
    const span = Math.max(end * 1.08, 0.05);
    const pxPerM = (W - LEFT - RIGHT) / span;
    const maxT = Math.max(maxTransverse(line, offsets), 1e-4);
    const k = transverseExaggeration(maxT, VIEW_H / 2 - 22, pxPerM);
    return { placed, end, traces, span, pxPerM, k, maxT, toScale };
  }, [line, result]);

  const { placed, traces, pxPerM, k, span } = geo;
  const X = (y: number) => LEFT + y * pxPerM;
  const T = (t: number) => t * pxPerM * k; // transverse m → px
  const bar = scaleBar(span);
  const tBar = scaleBar(geo.maxT * 2.5);
  const items = [...placed.values()].sort((a, b) => a.y0 - b.y0);
  // elements drawn within 24 px of each other stack their labels (row 0 above the beam, the rest below)
  const rows = new Map<string, number>();
  let lastX = -Infinity;
  let row = 0;
  for (const p of items) {
    row = X(p.y0) - lastX < 24 ? row + 1 : 0;
    if (row === 0) lastX = X(p.y0);
    rows.set(p.id, row);
  }

  const view = (which: 'side' | 'top', top: number) => {
    const cy = top + VIEW_H / 2;
    const tr = (p: { x: number; z: number }) => (which === 'side' ? p.z : p.x);
    return (
      <g key={which}>
        <text x={8} y={top + VIEW_H - 8} className="view-label">{which === 'side' ? 'side view (z up)' : 'top view (x across)'}</text>
        <line x1={LEFT - 30} x2={W - RIGHT + 10} y1={cy} y2={cy} className="axis-line" />
        <g className="oven">
          <rect x={LEFT - 34} y={cy - 16} width={30} height={32} rx={3} />
          <line x1={LEFT - 4} x2={LEFT} y1={cy} y2={cy} />
          {line.oven.aperture && (() => {
            // the aperture as a slot in the oven's front plate
            const ap = line.oven.aperture;
            const half = Math.min(Math.max(T((which === 'side' ? ap.height : ap.width) / 2), 0.75), 36);
            const c = cy - T(which === 'side' ? ap.z : ap.x);
            return (
              <>
                <line className="front" x1={LEFT - 2} x2={LEFT - 2} y1={cy - 40} y2={c - half} />
                <line className="front" x1={LEFT - 2} x2={LEFT - 2} y1={c + half} y2={cy + 40} />
              </>
            );
          })()}
          <text x={LEFT - 19} y={cy + 30} textAnchor="middle" className="el-label">oven</text>
        </g>
        {traces.map((t, i) => {
          const pts = t.points.map((p) => `${X(p.y).toFixed(1)},${(cy - T(tr(p))).toFixed(1)}`).join(' ');
          const last = t.points[t.points.length - 1];
          return (
            <g key={i} className="beam" stroke={LEAF_COLORS[i % LEAF_COLORS.length]}>
              <polyline points={pts} fill="none" strokeDasharray={t.fromEngine ? undefined : '4 3'} />
              {t.endsInStop && <line x1={X(last.y) + 4} x2={X(last.y) + 4} y1={cy - T(tr(last)) - 5} y2={cy - T(tr(last)) + 5} strokeWidth={2} />}
            </g>
          );
        })}
        {items.map((p) => (
          <ElementGlyph key={p.id} p={p} which={which} cy={cy} X={X} T={T} row={rows.get(p.id) ?? 0}
            selected={selected === p.id} warned={warned.has(p.id)} onSelect={onSelect} part="body" />
        ))}
        {/* the labels after every glyph: a detector plate at the same place as a magnet would cover its name */}
        {which === 'side' && items.map((p) => (
          <ElementGlyph key={`${p.id}-label`} p={p} which={which} cy={cy} X={X} T={T} row={rows.get(p.id) ?? 0}
            selected={selected === p.id} warned={warned.has(p.id)} onSelect={onSelect} part="label" />
        ))}
      </g>
    );
  };

  const axisY = 2 * VIEW_H + 18;
  return (
    <svg className="schematic" viewBox={`0 0 ${W} ${2 * VIEW_H + 76}`} role="img"
      aria-label={geo.toScale ? `Schematic of ${line.title || 'the line'}: ${items.length} elements over ${fmtLength(geo.end)}` : `Schematic of ${line.title || 'the line'} in routing order (no distances given)`}>
      <defs>
        <marker id="arrow" viewBox="0 0 10 10" refX="8" refY="5" markerWidth="5" markerHeight="5" orient="auto-start-reverse">
          <path d="M 0 0 L 10 5 L 0 10 z" className="arrowhead" />
        </marker>
      </defs>
      {view('side', 0)}
      {view('top', VIEW_H)}
      <g className="scale">
        <line x1={LEFT} x2={W - RIGHT} y1={axisY} y2={axisY} />
        {!geo.toScale && (
          <text x={LEFT} y={axisY + 16} className="pos-label">
            not to scale: this line gives no distances (every gap and length is zero), so the elements are drawn in routing order
          </text>
        )}
        {geo.toScale && items.map((p) => (
          <g key={p.id}>
            <line x1={X(p.y0)} x2={X(p.y0)} y1={axisY - 4} y2={axisY + 4} />
            {(rows.get(p.id) ?? 0) === 0 || Math.abs(p.y0 - (items[items.indexOf(p) - 1]?.y0 ?? -1)) > 1e-9 ? (
              <text x={X(p.y0)} y={axisY + 14 + ((rows.get(p.id) ?? 0) % 2) * 10} textAnchor="middle" className="pos-label">{fmtLength(p.y0)}</text>
            ) : null}
          </g>
        ))}
        {geo.toScale && (
          <>
            <line x1={LEFT} x2={LEFT + bar.length * pxPerM} y1={axisY + 30} y2={axisY + 30} className="bar" />
            <text x={LEFT} y={axisY + 42} className="pos-label">{bar.label} along the beam</text>
          </>
        )}
        <line x1={W / 2} x2={W / 2 + T(tBar.length)} y1={axisY + 30} y2={axisY + 30} className="bar" />
        <text x={W / 2} y={axisY + 42} className="pos-label">
          {tBar.label} across the beam (transverse drawn ×{k.toLocaleString('en')})
        </text>
        {!traces.some((t) => t.fromEngine) && traces.length > 0 && (
          <text x={W / 2} y={axisY + 54} className="pos-label">sub-beams drawn on the axis: the engine reports no displacements for this line</text>
        )}
      </g>
      <title>{`Positions from the oven aperture; sub-beams drawn straight from the first magnet to the engine's mean displacement at each detector plane (${lengthLabel(bar.length)} scale bar).`}</title>
    </svg>
  );
}

function ElementGlyph({ p, which, cy, X, T, row, selected, warned, onSelect, part }: {
  p: Placed; which: 'side' | 'top'; cy: number; row: number; X(y: number): number; T(t: number): number;
  selected: boolean; warned: boolean; onSelect(id: string): void; part: 'body' | 'label';
}) {
  const e = p.element;
  const x0 = X(p.y0);
  const w = Math.max(X(p.y1) - x0, 4);
  const cls = `el el-${e.kind}${selected ? ' selected' : ''}${warned ? ' warned' : ''}`;
  const label = (
    // the first label of a cluster above the beam; the others below it (above, the magnets' roll dials sit)
    <text x={x0 + w / 2} y={row === 0 ? cy - 36 : cy + 52 + (row - 1) * 11} textAnchor="middle" className="el-label">
      {e.id}
      {warned ? ' ⚠' : ''}
    </text>
  );
  const body = drawElement(e, { which, cy, x0, w, T });
  if (part === 'label') {
    return (
      <g className={cls} onClick={() => onSelect(e.id)}>
        {label}
      </g>
    );
  }
  return (
    <g className={cls} onClick={() => onSelect(e.id)} data-element={e.id}>
      <title>{`${e.id} (${e.kind}) at ${fmtLength(p.y0)}${p.y1 > p.y0 ? `–${fmtLength(p.y1)}` : ''}`}</title>
      {body}
    </g>
  );
}
