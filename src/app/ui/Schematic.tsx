// The line drawn to scale: a side view (z up) and a top view (x across) along the beam (+y to the right), with
// positions from the cumulative gaps and lengths, apertures and windows, magnets with an end view of their axis, and
// each sub-beam as the engine's centre line (the flux-weighted mean position of the atoms that reach its plane),
// bending where each magnet deflects it. Branches are laid out in rows of their own by the setup sheet's rule
// (src/sheet/layout-rule.ts); elements at one place on one branch are drawn side by side; labels are placed in tiers
// so that none covers another.
import { AxisDial, drawElement } from './drawings.tsx';
import { useMemo, type ReactNode } from 'react';
import type { Beamline, Element } from '../core-adapter.ts';
import {
  axisDial, beamTrace, centreLineAt, labelTiers, lengthLabel, maxTransverse, packSlots, placeElements, placeInOrder,
  scaleBar, schematicRows, transverseExaggeration, type BeamTrace, type Placed,
} from '../layout.ts';
import type { RunResultView } from '../results.ts';
import { fmtLength } from '../format.ts';
import { ROUND_OFF } from '../../beamline/numbers.ts';

const W = 960;
const LEFT = 56;
const RIGHT = 40;
/** Half-height (px) of a branch row's beam region, before it grows for elements drawn side by side. */
const HALF = 58;
/** The transverse scale fits the largest offset into this many px. */
const FIT = 46;
const LABEL_H = 14;
const CHAR_W = 7; // 11 px monospace labels, a generous width per character
const SMALL_W = 6.2; // 10 px monospace
const DIAL_R = 8;
const HEADER = 18;
/** The length (px) over which a sub-beam moves to an element drawn beside others at its place. */
const RAMP = 24;

export const LEAF_COLORS = ['#c0392b', '#1f6fb2', '#2e8b57', '#b8860b', '#7d3c98', '#d35400', '#117a8b', '#6d4c41'];

interface Props {
  line: Beamline;
  result?: RunResultView;
  selected?: string;
  onSelect(id: string): void;
  warned: ReadonlySet<string>;
}

type Which = 'side' | 'top';

/** Where one branch row stands in a view (px). */
interface Lane {
  top: number;
  cy: number;
  half: number;
  bottom: number;
}

/** A label of one element: its text, the dial of a magnet (side view), and where it goes. */
interface LabelSpot {
  id: string;
  text: string;
  dial?: ReturnType<typeof axisDial>;
  /** In the row's label strip (tier) or beside its glyph (inline, for elements drawn side by side). */
  tier?: number;
  inline?: { x: number; y: number };
  width: number;
  x: number;
}

interface ViewGeo {
  which: Which;
  top: number;
  height: number;
  lanes: Lane[];
  /** Offset (px, up) of an element's drawing from its row's axis: elements at one place drawn side by side. */
  slot: Map<string, number>;
  /** The part of that offset that the drawing adds (the sub-beams through the element are moved by it too). */
  shift: Map<string, number>;
  /** A detector's own plate half-height where it shares its plane; a magnet's drawn half-gap where none is given. */
  reach: Map<string, number>;
  clear: Map<string, { c: number; half: number }>;
  labels: LabelSpot[];
  /** Per leaf: the drawn points (px) and, per point, its offset from the axis (px) and the base it is drawn from. */
  beams: { pts: { X: number; Y: number; y: number; t: number; base: number }[] }[];
}

const sideOf = (which: Which, p: { x: number; z: number }) => (which === 'side' ? p.z : p.x);

/** Across-the-beam centre and half-extent (m) of what an element shows in a view, before any slot. */
function ownExtent(e: Element, which: Which): { c: number; half: number } | undefined {
  if (e.kind === 'detector' && e.window) {
    return { c: which === 'side' ? e.window.z : e.window.x, half: (which === 'side' ? e.window.height : e.window.width) / 2 };
  }
  if (e.kind === 'magnet' && e.aperture) return { c: which === 'side' ? e.aperture.z : e.aperture.x, half: (which === 'side' ? e.aperture.height : e.aperture.width) / 2 };
  return undefined;
}

function dialText(d: ReturnType<typeof axisDial>): string {
  const roll = `${Math.round(d.roll)}°`;
  return Math.abs(d.tilt) > 0.05 ? `${roll}, ${Math.round(Math.abs(d.tilt))}° ${d.tilt > 0 ? '⊗' : '⊙'}` : roll;
}

function dialTitle(e: Element, d: ReturnType<typeof axisDial>): string {
  const n = (e as { axis: { x: number; y: number; z: number } }).axis;
  const v = `n̂ = (${n.x.toFixed(3)}, ${n.y.toFixed(3)}, ${n.z.toFixed(3)})`;
  return Math.abs(d.tilt) > 0.05
    ? `${e.id} axis ${v}: oblique, ${Math.abs(d.tilt).toFixed(1)}° out of the plane across the beam toward ${d.tilt > 0 ? '+y (⊗, into the view)' : '−y (⊙, out of the view)'}; the arrow is its part across the beam (roll ${d.roll.toFixed(1)}°, length ${d.across.toFixed(2)})`
    : `${e.id} axis ${v}: roll ${d.roll.toFixed(1)}° from z toward x, seen along the beam`;
}

export function Schematic({ line, result, selected, onSelect, warned }: Props) {
  const geo = useMemo(() => {
    const real = placeElements(line);
    const toScale = real.end > 0;
    const { placed, end } = toScale ? real : placeInOrder(line);
    const { rowOf, rows, marks } = schematicRows(line, placed);
    const leaves = result?.leaves ?? [];
    const traces = leaves.map((l) => beamTrace(line, placed, l, toScale));
    const span = Math.max(end * 1.08, 0.05);
    const pxPerM = (W - LEFT - RIGHT) / span;
    const across = maxTransverse(line, traces.flatMap((t) => t.points));
    const maxT = Math.max(across, 1e-4);
    const k = transverseExaggeration(maxT, FIT, pxPerM);
    const T = (t: number) => t * pxPerM * k;
    const X = (y: number) => LEFT + y * pxPerM;
    const views: ViewGeo[] = [];
    let top = 0;
    for (const which of ['side', 'top'] as const) {
      const v = layoutView(which, top, { line, placed, rowOf, rows, marks, traces, T, X });
      views.push(v);
      top += v.height;
    }
    return { placed, end, traces, span, pxPerM, k, maxT, across, toScale, rows, rowOf, marks, views, height: top, X, T };
  }, [line, result]);

  const { placed, pxPerM, k, span, views, X, T } = geo;
  const bar = scaleBar(span);
  const tBar = scaleBar(geo.maxT * 2.5);
  const items = [...placed.values()].sort((a, b) => a.y0 - b.y0);
  const axisY = geo.height + 18;
  // the positions along the beam under the drawing: one per place, in two tiers, left out where they would collide
  const places: { y: number; ids: string[] }[] = [];
  for (const p of items) {
    const same = places.find((q) => Math.abs(q.y - p.y0) < 1e-9);
    if (same) same.ids.push(p.id);
    else places.push({ y: p.y0, ids: [p.id] });
  }
  const tickText = places.map((q) => fmtLength(q.y));
  const tickTiers = labelTiers(places.map((q, i) => ({ left: X(q.y) - (tickText[i].length * SMALL_W) / 2, width: tickText[i].length * SMALL_W })), 6);

  const view = (v: ViewGeo) => {
    const lane0 = v.lanes[0];
    return (
      <g key={v.which} data-view={v.which}>
        <text x={8} y={v.top + 13} className="view-label">{v.which === 'side' ? 'side view (z up)' : 'top view (x across)'}</text>
        {geo.rows.map((r, i) => {
          const ln = v.lanes[i];
          if (i === 0) return <line key={i} x1={LEFT - 30} x2={W - RIGHT + 10} y1={ln.cy} y2={ln.cy} className="axis-line" />;
          const from = X(r.from);
          return (
            <g key={i}>
              <line x1={from} x2={Math.max(X(r.to), from) + 24} y1={ln.cy} y2={ln.cy} className="axis-line" />
              {r.parent >= 0 && <line x1={from} x2={from} y1={v.lanes[r.parent].cy} y2={ln.cy} className="axis-line" />}
              {r.origin && (
                <text x={from + 4} y={ln.cy + ln.half - 4} className="pos-label branch-label">
                  {`branch: ${originText(r.origin)}`}
                </text>
              )}
            </g>
          );
        })}
        <g className="oven">
          <rect x={LEFT - 34} y={lane0.cy - 16} width={30} height={32} rx={3} />
          <line x1={LEFT - 4} x2={LEFT} y1={lane0.cy} y2={lane0.cy} />
          {line.oven.aperture && (() => {
            // the aperture as a slot in the oven's front plate
            const ap = line.oven.aperture;
            const half = Math.min(Math.max(T((v.which === 'side' ? ap.height : ap.width) / 2), 0.75), 36);
            const c = lane0.cy - T(v.which === 'side' ? ap.z : ap.x);
            return (
              <>
                <line className="front" x1={LEFT - 2} x2={LEFT - 2} y1={lane0.cy - 40} y2={c - half} />
                <line className="front" x1={LEFT - 2} x2={LEFT - 2} y1={c + half} y2={lane0.cy + 40} />
              </>
            );
          })()}
          <text x={LEFT - 19} y={lane0.cy + 30} textAnchor="middle" className="el-label">oven</text>
        </g>
        {v.beams.map((b, i) => {
          const t = geo.traces[i];
          const last = b.pts[b.pts.length - 1];
          // a sub-beam that carries nothing (its yield 0 or below the engine's round-off) is not drawn
          if (!last || !(Math.abs(result!.leaves[i].yield) >= ROUND_OFF)) return null;
          return (
            <g key={i} className="beam" stroke={LEAF_COLORS[i % LEAF_COLORS.length]} pointerEvents="none" data-leaf={i}>
              <polyline points={b.pts.map((p) => `${p.X.toFixed(2)},${p.Y.toFixed(2)}`).join(' ')} fill="none" strokeDasharray={t.fromEngine ? undefined : '4 3'}
                data-trace={JSON.stringify({ y: b.pts.map((p) => p.y), t: b.pts.map((p) => p.t), base: b.pts.map((p) => p.base) })} />
              {t.endsInStop && <line x1={last.X + 4} x2={last.X + 4} y1={last.Y - 5} y2={last.Y + 5} strokeWidth={2} />}
            </g>
          );
        })}
        {items.map((p) => {
          const ln = v.lanes[geo.rowOf.get(p.id) ?? 0];
          return (
            <ElementGlyph key={p.id} p={p} which={v.which} cy={ln.cy - (v.slot.get(p.id) ?? 0)} X={X} T={T}
              reach={v.reach.get(p.id)} clear={v.clear.get(p.id)}
              selected={selected === p.id} warned={warned.has(p.id)} onSelect={onSelect} />
          );
        })}
        {/* the labels after every glyph, so that none is covered */}
        {v.labels.map((l) => {
          const p = placed.get(l.id)!;
          const ln = v.lanes[geo.rowOf.get(l.id) ?? 0];
          const y = l.inline ? l.inline.y : ln.top + 11 + (l.tier ?? 0) * LABEL_H;
          const x0 = l.inline ? l.inline.x : l.x - l.width / 2;
          const textW = l.text.length * CHAR_W;
          const cls = `el${selected === l.id ? ' selected' : ''}${warned.has(l.id) ? ' warned' : ''}`;
          return (
            <g key={`${l.id}-label`} className={cls} onClick={() => onSelect(l.id)} data-label={l.id}>
              <text x={x0} y={y} className="el-label">{l.text}</text>
              {l.dial && (
                <g transform={`translate(${x0 + textW + 4 + DIAL_R}, ${y - 4})`} data-dial={l.id}>
                  <title>{dialTitle(p.element, l.dial)}</title>
                  <AxisDial roll={l.dial.roll} across={l.dial.across} tilt={l.dial.tilt} r={DIAL_R} />
                  <text x={DIAL_R + 3} y={4} className="pos-label">{dialText(l.dial)}</text>
                </g>
              )}
            </g>
          );
        })}
      </g>
    );
  };

  return (
    <svg className="schematic" viewBox={`0 0 ${W} ${axisY + 84}`} role="img" data-px-per-m={pxPerM} data-k={k}
      aria-label={geo.toScale ? `Schematic of ${line.title || 'the line'}: ${items.length} elements over ${fmtLength(geo.end)}` : `Schematic of ${line.title || 'the line'} in routing order (no distances given)`}>
      <defs>
        <marker id="arrow" viewBox="0 0 10 10" refX="8" refY="5" markerWidth="5" markerHeight="5" orient="auto-start-reverse">
          <path d="M 0 0 L 10 5 L 0 10 z" className="arrowhead" />
        </marker>
      </defs>
      {views.map(view)}
      <g className="scale">
        <line x1={LEFT} x2={W - RIGHT} y1={axisY} y2={axisY} />
        {!geo.toScale && (
          <text x={LEFT} y={axisY + 16} className="pos-label">
            not to scale: this line gives no distances (every gap and length is zero), so the elements are drawn in routing order
          </text>
        )}
        {geo.toScale && places.map((q, i) => (
          <g key={q.ids.join(',')}>
            <line x1={X(q.y)} x2={X(q.y)} y1={axisY - 4} y2={axisY + 4} />
            {tickTiers[i] < 2 && (
              <text x={X(q.y)} y={axisY + 14 + tickTiers[i] * 12} textAnchor="middle" className="pos-label tick-label">{tickText[i]}</text>
            )}
          </g>
        ))}
        {geo.toScale && (
          <>
            <line x1={LEFT} x2={LEFT + bar.length * pxPerM} y1={axisY + 38} y2={axisY + 38} className="bar" />
            <text x={LEFT} y={axisY + 50} className="pos-label">{bar.label} along the beam</text>
          </>
        )}
        {geo.across > 0 && (
          <>
            <line x1={W / 2 - 120} x2={W / 2 - 120 + T(tBar.length)} y1={axisY + 38} y2={axisY + 38} className="bar" />
            <text x={W / 2 - 120} y={axisY + 50} className="pos-label">
              {tBar.label} across the beam (drawn ×{k.toLocaleString('en')} the scale along it)
            </text>
          </>
        )}
        <text x={LEFT} y={axisY + 64} className="pos-label">
          {geo.traces.some((t) => t.fromEngine)
            ? 'sub-beams: the engine’s centre line (flux-weighted mean position); dashed, on the axis: into a stop, where the engine draws none'
            : geo.traces.length > 0 ? 'sub-beams drawn on the axis (dashed): this line has no geometry' : ''}
        </text>
        <text x={LEFT} y={axisY + 76} className="pos-label">
          branches in rows of their own (as on the setup sheet); elements at one place drawn side by side, the sub-beams fanned to them
        </text>
      </g>
      <title>{`Positions from the oven aperture (${lengthLabel(bar.length)} scale bar); across the beam ×${k}. Each sub-beam is the engine's centre line; a branch drawn in a row of its own is joined to its parent row at the element it leaves, and elements at one place on one branch are drawn apart (those offsets are the drawing's, not the beam's).`}</title>
    </svg>
  );
}

/** Where a row's beam comes from, in words: "port -1 of M1", "every other port of N1", "from S2" (as the sheet's legend). */
function originText(o: { id: string; ports: string[] }): string {
  const named = o.ports.filter((p) => p !== '*');
  const rest = o.ports.includes('*');
  if (!named.length && !rest) return `from ${o.id}`;
  const list = named.length ? `port${named.length > 1 ? 's' : ''} ${named.join(', ')}${rest ? ' and every other port' : ''}` : 'every other port';
  return `${list} of ${o.id}`;
}

interface LayoutInput {
  line: Beamline;
  placed: ReadonlyMap<string, Placed>;
  rowOf: ReadonlyMap<string, number>;
  rows: ReturnType<typeof schematicRows>['rows'];
  marks: ReturnType<typeof schematicRows>['marks'];
  traces: readonly BeamTrace[];
  T(t: number): number;
  X(y: number): number;
}

/** How far (px) from its row's axis a magnet drawn around its beams reaches, its poles (18 px) included, and a margin. */
function clearExtent(s: number, c: { c: number; half: number } | undefined): number {
  if (!c) return 0;
  return Math.max(Math.abs(s + c.c + c.half + 18), Math.abs(s + c.c - c.half - 18)) + 6;
}

/** Half-extent (px) of an element's glyph across the beam, around its own axis, before any slot. */
function glyphHalf(e: Element, which: Which, T: (t: number) => number): number {
  switch (e.kind) {
    case 'magnet': return (e.aperture ? Math.max(T((which === 'side' ? e.aperture.height : e.aperture.width) / 2), 2) : 8) + (which === 'side' ? 18 : 0);
    case 'slit': return T((which === 'side' ? e.height : e.width) / 2) + 26;
    case 'rotator': return 10;
    case 'detector': return 9;
    default: return 24;
  }
}

/** One view's rows, slots, labels and beams (px), from the placed line and the traces. */
function layoutView(which: Which, top: number, g: LayoutInput): ViewGeo {
  const { placed, rowOf, rows, marks, traces, T, X } = g;
  const pxPerM = X(1) - X(0);
  const slot = new Map<string, number>();
  const shift = new Map<string, number>();
  /** Glyph half-heights (px) of the elements of a mark of other kinds than detectors: their names go above them. */
  const halfOf = new Map<string, number>();
  const reach = new Map<string, number>();
  const clear = new Map<string, { c: number; half: number }>();
  // elements at one place on one branch: side by side, each at its own place across the beam where that is apart
  for (const mk of marks) {
    if (mk.ids.length < 2) continue;
    const spots = mk.ids.map((id) => {
      const e = placed.get(id)!.element;
      const own = ownExtent(e, which);
      if (e.kind === 'detector') {
        // a window: its own size (a plate just around it), so that windows apart on the bench stay where they are
        if (own) return { centre: T(own.c), half: Math.max(T(own.half), 1.5) + 0.5 };
        // a detector without a window: where its sub-beams arrive
        const ends = traces.filter((t) => t.route[t.route.length - 1] === id && !t.endsInStop).map((t) => t.points[t.points.length - 1]);
        const c = ends.length ? ends.reduce((s, p) => s + T(sideOf(which, p)), 0) / ends.length : 0;
        return { centre: c, half: 9 };
      }
      return { centre: own ? T(own.c) : 0, half: glyphHalf(e, which, T) };
    });
    // detectors: their names beside them; other kinds: a line for the name above each
    const detectorsOnly = mk.ids.every((id) => placed.get(id)!.element.kind === 'detector');
    const off = packSlots(spots, detectorsOnly ? 2 : LABEL_H + 6);
    if (!detectorsOnly) mk.ids.forEach((id, i) => halfOf.set(id, spots[i].half));
    mk.ids.forEach((id, i) => {
      const e = placed.get(id)!.element;
      shift.set(id, off[i]);
      // a detector without a window is drawn where its sub-beams arrive (its own centre), the others about the axis
      slot.set(id, e.kind === 'detector' && !e.window ? spots[i].centre + off[i] : off[i]);
      if (e.kind === 'detector') reach.set(id, spots[i].half);
    });
  }
  // each leaf's offset from its row's axis along its route: the slots of the elements it passes, changing over the
  // gap before an element (or over the element before it where there is no gap)
  const offsetFns = traces.map((t) => {
    const ctl: { y: number; v: number; row: number }[] = [{ y: 0, v: 0, row: 0 }];
    for (const id of t.route) {
      const p = placed.get(id)!;
      const row = rowOf.get(id) ?? 0, v = shift.get(id) ?? 0;
      const prev = ctl[ctl.length - 1];
      if (prev.row === row && prev.v !== v) {
        // the drawing's own offset changes over the last 24 px before the element (a short fan, not a deflection)
        const from = p.y0 - RAMP / pxPerM;
        while (ctl.length > 1 && ctl[ctl.length - 1].row === row && ctl[ctl.length - 1].y > from) ctl.pop();
        ctl.push({ y: Math.max(from, ctl[ctl.length - 1].y), v: prev.v, row });
      }
      ctl.push({ y: p.y0, v, row }, { y: p.y1, v, row });
    }
    const at = (y: number, row: number) => {
      const c = ctl.filter((q) => q.row === row);
      if (c.length === 0) return 0;
      return centreLineAt(c.map((q) => ({ y: q.y, x: q.v, z: q.v })), y).x;
    };
    return { at, ctl };
  });
  // the beams' offsets across the beam (px, up) with their slots, per row; a vertex where a fan begins or ends (the
  // centre line is straight between the trace's vertices, so a vertex added between two is on it)
  const drawn = traces.map((t, i) => {
    const out: { y: number; row: number; t: number; s: number; id: string }[] = [];
    const add = (y: number, q: { x: number; z: number }, id: string) => {
      const row = rowOf.get(id) ?? 0;
      out.push({ y, row, t: T(sideOf(which, q)), s: offsetFns[i].at(y, row), id });
    };
    t.points.forEach((p, j) => {
      if (j > 0) {
        const a = t.points[j - 1], row = rowOf.get(t.at[j]) ?? 0;
        const inner = offsetFns[i].ctl.filter((c) => c.row === row && c.y > a.y + 1e-12 && c.y < p.y - 1e-12).map((c) => c.y);
        for (const y of [...new Set(inner)].sort((u, v) => u - v)) {
          const f = (y - a.y) / (p.y - a.y);
          add(y, { x: a.x + f * (p.x - a.x), z: a.z + f * (p.z - a.z) }, t.at[j]);
        }
      }
      add(p.y, p, t.at[j]);
    });
    return out;
  });
  // a magnet without a pole gap given is drawn with its gap around the beams through it (centre and half, px, up)
  for (const p of placed.values()) {
    if (p.element.kind !== 'magnet' || p.element.aperture) continue;
    let lo = Infinity, hi = -Infinity;
    const own = shift.get(p.id) ?? 0;
    drawn.forEach((d) => d.forEach((q) => {
      if (q.id !== p.id || q.y < p.y0 - 1e-12 || q.y > p.y1 + 1e-12) return;
      lo = Math.min(lo, q.t + q.s - own);
      hi = Math.max(hi, q.t + q.s - own);
    }));
    if (hi >= lo && (hi > 3 || lo < -3)) clear.set(p.id, { c: (hi + lo) / 2, half: Math.max((hi - lo) / 2 + 6, 8) });
  }
  // labels: elements drawn side by side get theirs beside the glyph; the others go in tiers of the row's strip
  const labels: LabelSpot[] = [];
  const rowLabels = new Map<number, LabelSpot[]>();
  for (const p of [...placed.values()].sort((a, b) => a.y0 - b.y0)) {
    const e = p.element;
    const dial = which === 'side' && e.kind === 'magnet' ? axisDial(e.axis) : undefined;
    const gradient = which === 'top' && e.kind === 'magnet' && e.gradient !== undefined ? ` ${Math.round(e.gradient)} T/m` : '';
    const text = `${e.id}${gradient}`;
    const width = text.length * CHAR_W + (dial ? 4 + 2 * DIAL_R + 3 + dialText(dial).length * SMALL_W : 0);
    const x0 = X(p.y0), w = Math.max(X(p.y1) - x0, 4);
    const spot: LabelSpot = { id: p.id, text, dial, width, x: x0 + w / 2 };
    const sideBySide = marks.find((mk) => mk.ids.includes(p.id))!.ids.length > 1;
    if (sideBySide) spot.inline = { x: x0 + w + 8, y: 0 };
    labels.push(spot);
    if (!sideBySide) {
      const row = rowOf.get(p.id) ?? 0;
      const list = rowLabels.get(row) ?? [];
      list.push(spot);
      rowLabels.set(row, list);
    }
  }
  for (const list of rowLabels.values()) {
    const tiers = labelTiers(list.map((l) => ({ left: l.x - l.width / 2, width: l.width })), 8);
    list.forEach((l, i) => (l.tier = tiers[i]));
  }
  // rows stacked: a label strip, then the beam region, tall enough for what is drawn in it
  const lanes: Lane[] = [];
  let y = top + HEADER;
  rows.forEach((_, r) => {
    const strip = ((rowLabels.get(r) ?? []).reduce((m, l) => Math.max(m, (l.tier ?? 0) + 1), 0)) * LABEL_H + 6;
    let half = HALF;
    for (const p of placed.values()) {
      if ((rowOf.get(p.id) ?? 0) !== r) continue;
      const s = slot.get(p.id) ?? 0;
      const own = ownExtent(p.element, which);
      const h = reach.get(p.id) ?? (p.element.kind === 'detector' ? 40 : glyphHalf(p.element, which, T));
      const named = halfOf.has(p.id) ? LABEL_H : 0;
      half = Math.max(half, Math.abs(s) + h + (own ? Math.abs(T(own.c)) : 0) + 6 + named, clearExtent(s, clear.get(p.id)) + named);
    }
    for (const d of drawn) for (const q of d) if (q.row === r) half = Math.max(half, Math.abs(q.t + q.s) + 8);
    const laneTop = y;
    const cy = laneTop + strip + half;
    lanes.push({ top: laneTop, cy, half, bottom: cy + half });
    y = cy + half + 4;
  });
  // labels beside the glyphs of one mark: at their glyphs' heights, moved apart where those are closer than a line
  for (const mk of marks) {
    const own = labels.filter((l) => l.inline && mk.ids.includes(l.id));
    if (own.length === 0) continue;
    const ln = lanes[mk.row];
    const want = own.map((l) => {
      const ext = ownExtent(placed.get(l.id)!.element, which);
      return { centre: (slot.get(l.id) ?? 0) + (ext ? T(ext.c) : 0), half: LABEL_H / 2 };
    });
    const off = packSlots(want, 0);
    own.forEach((l, i) => {
      const above = halfOf.get(l.id);
      if (above === undefined) l.inline!.y = ln.cy - (want[i].centre + off[i]) + 4;
      else l.inline = { x: l.x - l.width / 2, y: ln.cy - (slot.get(l.id) ?? 0) - above - 4 };
    });
  }
  const beams = drawn.map((d) => ({
    pts: d.map((q) => {
      const base = lanes[q.row].cy - q.s;
      return { X: X(q.y), Y: base - q.t, y: q.y, t: q.t, base };
    }),
  }));
  return { which, top, height: y - top + 4, lanes, slot, shift, reach, clear, labels, beams };
}

function ElementGlyph({ p, which, cy, X, T, reach, clear, selected, warned, onSelect }: {
  p: Placed; which: Which; cy: number; X(y: number): number; T(t: number): number; reach?: number; clear?: { c: number; half: number };
  selected: boolean; warned: boolean; onSelect(id: string): void;
}): ReactNode {
  const e = p.element;
  const x0 = X(p.y0);
  const w = Math.max(X(p.y1) - x0, 4);
  const cls = `el el-${e.kind}${selected ? ' selected' : ''}${warned ? ' warned' : ''}`;
  const body = drawElement(e, { which, cy, x0, w, T, reach, clear });
  return (
    <g className={cls} onClick={() => onSelect(e.id)} data-element={e.id}>
      <title>{`${e.id} (${e.kind}) at ${fmtLength(p.y0)}${p.y1 > p.y0 ? `–${fmtLength(p.y1)}` : ''}${e.kind === 'magnet' && !e.aperture ? '; no pole gap given: drawn clear of the sub-beams' : ''}`}</title>
      {body}
    </g>
  );
}
