// How each element kind is drawn on the schematic: one drawing per kind, held by a registry typed by the kinds
// (a kind without a drawing fails the type check). A drawing gets the normalized element and where it stands
// (which view, the beam's height, its entrance and drawn width, the transverse scale).

import type { ReactNode } from 'react';
import type { Element, ElementKind } from '../core-adapter.ts';

export interface GlyphPlace {
  which: 'side' | 'top';
  /** The beam's height in the view (px). */
  cy: number;
  /** Entrance (px) and drawn width (px, at least 4). */
  x0: number;
  w: number;
  /** Transverse metres to px. */
  T(t: number): number;
  /** A detector drawn beside others on its plane: the half-height (px) of its plate, centred on its own axis. */
  reach?: number;
  /** A magnet without a pole gap given: the gap it is drawn with around the sub-beams drawn through it (centre, px up
   *  from cy, and half-gap, px). */
  clear?: { c: number; half: number };
}

type Drawing<K extends ElementKind> = (e: Extract<Element, { kind: K }>, g: GlyphPlace) => ReactNode;

/**
 * A magnet's axis in an end view (looking along the beam: z up, x right): an arrow along its projection across the
 * beam, as long as that projection (a full radius for a transverse axis), and for an axis with a part along the beam
 * (an oblique axis) a ⊗ (toward +y, into the view) or ⊙ (toward −y) mark at the centre. `r` is the dial's radius.
 */
export function AxisDial({ roll, across, tilt, r }: { roll: number; across: number; tilt: number; r: number }): ReactNode {
  const a = (roll * Math.PI) / 180;
  const len = (r - 2) * across;
  const oblique = Math.abs(tilt) > 0.05;
  return (
    <g className="endview">
      <circle r={r} strokeDasharray={oblique ? '2 1.5' : undefined} />
      {len > 1.5 && <line x1={-len * Math.sin(a)} y1={len * Math.cos(a)} x2={len * Math.sin(a)} y2={-len * Math.cos(a)} markerEnd="url(#arrow)" />}
      {oblique && (tilt > 0
        ? <path d="M -2.6 -2.6 L 2.6 2.6 M -2.6 2.6 L 2.6 -2.6" className="oblique" style={{ stroke: 'var(--sel)', strokeWidth: 1.3 }} />
        : <circle r={1.6} className="oblique" style={{ fill: 'var(--sel)', stroke: 'none' }} />)}
    </g>
  );
}

/** A field element (field region, twist, RF flipper, recombiner): a dashed box over its length. */
const fieldBox = (_e: Element, { cy, x0, w }: GlyphPlace): ReactNode => <rect x={x0} y={cy - 24} width={w} height={48} className="field-el" strokeDasharray="4 2" />;

export const DRAWINGS: { readonly [K in ElementKind]: Drawing<K> } = {
  magnet: (e, { which, cy, x0, w, T, clear }) => {
    const ap = e.aperture;
    // the pole gap as given (its centre and size across the beam), or, where none is given, drawn clear of the beams
    const half = ap ? Math.max(T((which === 'side' ? ap.height : ap.width) / 2), 2) : Math.max(clear?.half ?? 8, 8);
    const c = ap ? cy - T(which === 'side' ? ap.z : ap.x) : cy - (clear?.c ?? 0);
    return which === 'side' ? (
      <>
        <rect x={x0} y={c - half - 18} width={w} height={18} className="pole" />
        <rect x={x0} y={c + half} width={w} height={18} className="pole" />
      </>
    ) : (
      // seen from above: the upper pole over the gap, its width the pole-gap width
      <rect x={x0} y={c - half} width={w} height={2 * half} className="pole pole-top" />
    );
  },
  slit: (e, { which, cy, x0, T }) => {
    const open = which === 'side' ? e.height : e.width;
    const off = which === 'side' ? e.z : e.x;
    return (
      <>
        <rect x={x0 - 2} y={cy - T(off) - T(open / 2) - 26} width={5} height={26} className="jaw" />
        <rect x={x0 - 2} y={cy - T(off) + T(open / 2)} width={5} height={26} className="jaw" />
      </>
    );
  },
  detector: (e, { which, cy, x0, T, reach: own }) => {
    const win = e.window;
    const c = win ? (which === 'side' ? win.z : win.x) : 0;
    const size = win ? (which === 'side' ? win.height : win.width) : undefined;
    // alone on its plane: a plate across the drawing; beside others: its own part of the plane, around its window
    const mid = own !== undefined && win ? cy - T(c) : cy;
    const reach = own ?? (win ? Math.max(Math.abs(T(c)) + T(size! / 2) + 6, 40) : 40);
    return (
      <>
        <rect x={x0} y={mid - reach} width={6} height={2 * reach} className="plate" />
        {size !== undefined && <rect x={x0 - 2} y={cy - T(c) - T(size / 2)} width={10} height={Math.max(T(size), 1.5)} className="window" />}
      </>
    );
  },
  rotator: (_e, { cy, x0 }) => <path d={`M ${x0} ${cy - 10} L ${x0 + 7} ${cy} L ${x0} ${cy + 10} L ${x0 - 7} ${cy} Z`} className="field-el" />,
  field: fieldBox,
  twist: fieldBox,
  rf: fieldBox,
  recombiner: fieldBox,
};

/** The drawing of an element by its kind. */
export function drawElement(e: Element, g: GlyphPlace): ReactNode {
  return (DRAWINGS[e.kind] as Drawing<ElementKind>)(e as never, g);
}
