// To-scale geometry of the line for the schematic: positions along the beam (+y) from the cumulative
// gaps and lengths, the routes of the leaves, the transverse offsets of the sub-beams and a scale bar.
// Lengths in m. Pure functions of the normalized line (all numbers SI).

import { type Beamline, type Element, lengthOf, outputsOf } from './core-adapter.ts';

export interface Placed {
  id: string;
  kind: Element['kind'];
  /** Entrance and exit along the beam, m from the oven aperture. */
  y0: number;
  y1: number;
  element: Element;
}

/** Length of an element along the beam (0 for ideal elements: rotators, slits, detectors, ideal magnets): its kind module's. */
export function elementLength(e: Element): number {
  return lengthOf(e);
}

/** The targets an element routes to (the one routing rule of the kind modules). "stop" is not an element. */
export function targetsOf(e: Element): string[] {
  return outputsOf(e).map((o) => o.target);
}

/**
 * Positions along the beam: an element's entrance is its predecessor's exit plus its own `gap`
 * (docs/design.md, "Axes and angles": the gap runs from the previous exit, or the oven's orifice). Where several
 * paths reach one element (a shared detector), the farthest entrance is taken. Elements the oven does
 * not reach are left out.
 */
export function placeElements(line: Beamline): { placed: Map<string, Placed>; end: number } {
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const entrance = new Map<string, number>();
  // Longest-path relaxation on the routing graph (acyclic: the document layer refuses cycles; the
  // iteration bound only guards against a line that slipped past it).
  const queue: [string, number][] = [[line.oven.to, 0]];
  let steps = 0;
  const bound = 10_000 + line.elements.length * line.elements.length * 4;
  while (queue.length > 0 && steps++ < bound) {
    const [id, from] = queue.shift()!;
    const e = byId.get(id);
    if (!e) continue;
    const y0 = from + (e.gap ?? 0);
    if ((entrance.get(id) ?? -Infinity) >= y0) continue;
    entrance.set(id, y0);
    const y1 = y0 + elementLength(e);
    for (const t of targetsOf(e)) if (t !== 'stop') queue.push([t, y1]);
  }
  const placed = new Map<string, Placed>();
  let end = 0;
  for (const [id, y0] of entrance) {
    const e = byId.get(id)!;
    const y1 = y0 + elementLength(e);
    placed.set(id, { id, kind: e.kind, y0, y1, element: e });
    end = Math.max(end, y1);
  }
  return { placed, end };
}

/**
 * A line without distances (every gap and length zero: an idealised line) drawn in routing order:
 * each element one unit after the farthest element before it, magnets and field elements 0.4 units
 * long. The drawing then says it is not to scale.
 */
export function placeInOrder(line: Beamline): { placed: Map<string, Placed>; end: number } {
  const drawn = (e: Element) => (e.kind === 'magnet' || e.kind === 'field' || e.kind === 'twist' || e.kind === 'rf' ? 0.4 : 0);
  const unit = { ...line, elements: line.elements.map((e) => ({ ...e, gap: 1 })) } as Beamline;
  const { placed } = placeElements(unit);
  // lengths: re-place with the drawn lengths so downstream elements clear them
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const out = new Map<string, Placed>();
  const order = [...placed.values()].sort((a, b) => a.y0 - b.y0);
  let end = 0;
  for (const p of order) {
    const e = byId.get(p.id)!;
    const y0 = p.y0 * 1.4;
    out.set(p.id, { ...p, y0, y1: y0 + drawn(e), element: e });
    end = Math.max(end, y0 + drawn(e));
  }
  return { placed: out, end };
}

/**
 * The element ids a leaf passes, in order, from its `path` of result format v1 ("M1:+1/2" for every
 * magnet passed): non-magnets follow `to`, a magnet the named port (or its "*" entry).
 */
export function leafRoute(line: Beamline, path: readonly string[]): string[] {
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  const ports = new Map<string, string>();
  for (const p of path) {
    const i = p.indexOf(':');
    if (i > 0) ports.set(p.slice(0, i), p.slice(i + 1));
  }
  const out: string[] = [];
  let id: string | undefined = line.oven.to;
  const seen = new Set<string>();
  while (id && id !== 'stop' && !seen.has(id)) {
    seen.add(id);
    const e = byId.get(id);
    if (!e) break;
    out.push(id);
    // the one routing rule: the named port of a magnet (or its "*" entry), else the single output
    const outs = outputsOf(e);
    const port = ports.get(id);
    const next = outs.length === 1 && outs[0].port === null ? outs[0]
      : outs.find((o) => o.port === port) ?? outs.find((o) => o.port === '*');
    id = port === undefined && !(outs.length === 1 && outs[0].port === null) ? undefined : next?.target;
  }
  return out;
}

export interface BeamTrace {
  /** Points (y along the beam, transverse offset) in m; offsets along x (top view) and z (side view). */
  points: { y: number; x: number; z: number }[];
  endsInStop: boolean;
  /** True when the offsets come from the engine's displacement; false: drawn on the axis. */
  fromEngine: boolean;
}

/**
 * The drawn trace of one sub-beam: on the beam axis up to the entrance of the first magnet on its path,
 * then straight to the engine's displacement at its detector plane (the drawing joins the engine's end
 * point; the curve inside the magnets is not drawn). A leaf that ends in a stop ends at the exit of its
 * last magnet.
 */
export function beamTrace(
  line: Beamline,
  placed: ReadonlyMap<string, Placed>,
  leaf: { path: readonly string[]; target: string; displacement?: { x: number; z: number } },
): BeamTrace {
  const route = leafRoute(line, leaf.path).filter((id) => placed.has(id));
  const pts: { y: number; x: number; z: number }[] = [{ y: 0, x: 0, z: 0 }];
  const endsInStop = leaf.target === 'stop';
  const last = route.length > 0 ? placed.get(route[route.length - 1])! : undefined;
  const firstMagnet = route.map((id) => placed.get(id)!).find((p) => p.kind === 'magnet');
  const d = leaf.displacement;
  if (!last) return { points: pts, endsInStop, fromEngine: false };
  const yEnd = endsInStop ? last.y1 : last.y0;
  if (firstMagnet && d && !endsInStop) {
    if (firstMagnet.y0 > 0) pts.push({ y: firstMagnet.y0, x: 0, z: 0 });
    pts.push({ y: yEnd, x: d.x, z: d.z });
    return { points: pts, endsInStop, fromEngine: true };
  }
  pts.push({ y: yEnd, x: 0, z: 0 });
  return { points: pts, endsInStop, fromEngine: false };
}

/** The scale bar for a drawing `span` m wide: the largest 1, 2 or 5 × 10ⁿ m not above a fifth of it. */
export function scaleBar(span: number): { length: number; label: string } {
  const target = span > 0 ? span / 5 : 0.01;
  const p = Math.pow(10, Math.floor(Math.log10(target)));
  const length = [5, 2, 1].map((k) => k * p).find((v) => v <= target * 1.0000001) ?? p;
  return { length, label: lengthLabel(length) };
}

/** "10 cm", "2 mm", "1 m", "500 µm" for a round length in m. */
export function lengthLabel(m: number): string {
  const r = (v: number) => Number(v.toPrecision(3)).toString();
  if (m >= 1) return `${r(m)} m`;
  if (m >= 0.01) return `${r(m * 100)} cm`;
  if (m >= 0.001) return `${r(m * 1000)} mm`;
  return `${r(m * 1e6)} µm`;
}

/**
 * Transverse magnification of the drawing: the largest transverse extent (apertures, windows,
 * sub-beam offsets, m) drawn at `halfHeightPx`, with a longitudinal scale `pxPerM`. Returns the factor
 * by which the transverse scale exceeds the longitudinal one (≥ 1), rounded to 1, 2 or 5 × 10ⁿ.
 */
export function transverseExaggeration(maxTransverse: number, halfHeightPx: number, pxPerM: number): number {
  if (!(maxTransverse > 0) || !(pxPerM > 0)) return 1;
  const raw = halfHeightPx / (maxTransverse * pxPerM);
  if (raw <= 1) return 1;
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  return [5, 2, 1].map((k) => k * p).find((v) => v <= raw) ?? p;
}

/** The largest transverse half-extent in the line (m): aperture halves, window edges, offsets. */
export function maxTransverse(line: Beamline, offsets: readonly { x: number; z: number }[]): number {
  let m = 0;
  const rect = (r?: { width: number; height: number; x: number; z: number }) => {
    if (r) m = Math.max(m, Math.abs(r.x) + r.width / 2, Math.abs(r.z) + r.height / 2);
  };
  rect(line.oven.aperture);
  for (const e of line.elements) {
    if (e.kind === 'magnet') rect(e.aperture);
    if (e.kind === 'slit') rect(e);
    if (e.kind === 'detector') rect(e.window);
  }
  for (const o of offsets) m = Math.max(m, Math.abs(o.x), Math.abs(o.z));
  return m;
}
