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
}

type Drawing<K extends ElementKind> = (e: Extract<Element, { kind: K }>, g: GlyphPlace) => ReactNode;

/** The magnet's roll: n̂ = (sin α, 0, cos α), the angle of the axis from z toward x in the x–z plane. */
function rollOf(e: Extract<Element, { kind: 'magnet' }>): number {
  return Math.atan2(e.axis.x, e.axis.z);
}

/** A field element (field region, twist, RF flipper, recombiner): a dashed box over its length. */
const fieldBox = (_e: Element, { cy, x0, w }: GlyphPlace): ReactNode => <rect x={x0} y={cy - 24} width={w} height={48} className="field-el" strokeDasharray="4 2" />;

export const DRAWINGS: { readonly [K in ElementKind]: Drawing<K> } = {
  magnet: (e, { which, cy, x0, w, T }) => {
    const ap = e.aperture ? (which === 'side' ? e.aperture.height : e.aperture.width) : undefined;
    const half = ap !== undefined ? Math.max(T(ap / 2), 2) : 8;
    const roll = rollOf(e);
    return (
      <>
        {which === 'side' ? (
          <>
            <rect x={x0} y={cy - half - 18} width={w} height={18} className="pole" />
            <rect x={x0} y={cy + half} width={w} height={18} className="pole" />
          </>
        ) : (
          // seen from above: the upper pole over the gap, its width the pole-gap width
          <rect x={x0} y={cy - half} width={w} height={2 * half} className="pole pole-top" />
        )}
        {which === 'side' && (
          <g transform={`translate(${x0 + w / 2}, ${cy - 62})`} className="endview">
            <circle r={11} />
            <line x1={-9 * Math.sin(roll)} y1={9 * Math.cos(roll)} x2={9 * Math.sin(roll)} y2={-9 * Math.cos(roll)} markerEnd="url(#arrow)" />
            <text x={14} y={4} className="pos-label">{Math.round((roll * 180) / Math.PI)}°</text>
          </g>
        )}
        {which === 'top' && e.gradient !== undefined && (
          <text x={x0 + w / 2} y={cy + half + 32} textAnchor="middle" className="pos-label">{`${Math.round(e.gradient)} T/m`}</text>
        )}
      </>
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
  detector: (e, { which, cy, x0, T }) => {
    const win = e.window;
    const c = win ? (which === 'side' ? win.z : win.x) : 0;
    const size = win ? (which === 'side' ? win.height : win.width) : undefined;
    const reach = win ? Math.max(Math.abs(T(c)) + T(size! / 2) + 6, 40) : 40;
    return (
      <>
        <rect x={x0} y={cy - reach} width={6} height={2 * reach} className="plate" />
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
