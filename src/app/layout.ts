// To-scale geometry of the line for the schematic: positions along the beam (+y) from the cumulative
// gaps and lengths, the routes of the leaves, the transverse offsets of the sub-beams and a scale bar.
// Lengths in m. Pure functions of the normalized line (all numbers SI).

import { type Beamline, type Element, lengthOf, outputsOf } from './core-adapter.ts';
import { branchLayout } from '../sheet/layout-rule.ts';

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
  /**
   * The sub-beam's centre line (m): y along the beam, x and z across. Vertices at y = 0, at the entrance and exit of
   * every element of its route and at every point of the engine's centre line between them.
   */
  points: { y: number; x: number; z: number }[];
  /** The route element each vertex is drawn with (its branch row and slot): one per point. Where a route passes from
   *  one element to the next the exit appears twice, once with each, so a branch change draws a connector there. */
  at: string[];
  /** The element ids the leaf passes, in order (its target last where it ends on a detector). */
  route: string[];
  endsInStop: boolean;
  /** True when the offsets are the engine's centre line; false: drawn on the axis (no geometry). */
  fromEngine: boolean;
}

/** A centre line {y, x, z}[] at plane y: linear between its points (it is straight between them), its ends held outside. */
export function centreLineAt(points: readonly { y: number; x: number; z: number }[], y: number): { x: number; z: number } {
  if (points.length === 0) return { x: 0, z: 0 };
  if (y <= points[0].y) return { x: points[0].x, z: points[0].z };
  for (let i = 1; i < points.length; i++) {
    const a = points[i - 1], b = points[i];
    if (y <= b.y) {
      const t = b.y > a.y ? (y - a.y) / (b.y - a.y) : 1;
      return { x: a.x + t * (b.x - a.x), z: a.z + t * (b.z - a.z) };
    }
  }
  const l = points[points.length - 1];
  return { x: l.x, z: l.z };
}

/**
 * The drawn trace of one sub-beam: its route from the oven through the placed elements, and across the beam the
 * engine's centre line (`centreLine` of result format v1: the flux-weighted mean position of the atoms that reach its
 * plane), bending where each magnet deflects it. A leaf without a centre line (no geometry, or a line drawn in
 * routing order) is drawn on the axis. A leaf that ends in a stop ends at the exit of its last element.
 */
export function beamTrace(
  line: Beamline,
  placed: ReadonlyMap<string, Placed>,
  leaf: { path: readonly string[]; target: string; plane?: number; centreLine?: readonly { y: number; x: number; z: number }[] },
  toScale = true,
): BeamTrace {
  const route = leafRoute(line, leaf.path).filter((id) => placed.has(id));
  const endsInStop = leaf.target === 'stop';
  const cl = toScale && leaf.centreLine && leaf.centreLine.length > 0 ? leaf.centreLine : undefined;
  const points: BeamTrace['points'] = [];
  const at: string[] = [];
  const push = (y: number, id: string) => {
    const c = cl ? centreLineAt(cl, y) : { x: 0, z: 0 };
    points.push({ y, x: c.x, z: c.z });
    at.push(id);
  };
  let start = 0;
  route.forEach((id, i) => {
    const p = placed.get(id)!;
    const last = i === route.length - 1;
    // the route ends on a detector at its plane (the leaf's own where the engine gives it), otherwise at an exit
    const end = last && !endsInStop ? (cl ? leaf.plane ?? p.y0 : p.y0) : Math.max(p.y1, start);
    push(start, id);
    const inner = new Set<number>();
    if (p.y0 > start && p.y0 < end) inner.add(p.y0);
    if (cl) for (const q of cl) if (q.y > start && q.y < end) inner.add(q.y);
    for (const y of [...inner].sort((a, b) => a - b)) push(y, id);
    if (end > start || last) push(end, id);
    start = end;
  });
  if (route.length === 0) push(0, '');
  return { points, at, route, endsInStop, fromEngine: !!cl };
}

/** The rows (branches) and marks of the shared layout rule (src/sheet/layout-rule.ts), on the placed elements. */
export function schematicRows(line: Beamline, placed: ReadonlyMap<string, Placed>): ReturnType<typeof branchLayout> {
  const order = new Map(line.elements.map((e, i) => [e.id, i]));
  const els = [...placed.values()]
    .sort((a, b) => a.y0 - b.y0 || (order.get(a.id) ?? 0) - (order.get(b.id) ?? 0))
    .map((p) => ({ id: p.id, kind: p.kind, entrance: p.y0, length: p.y1 - p.y0, routes: outputsOf(p.element).map((o) => ({ port: o.port ?? '', target: o.target })) }));
  // 1e-8 m: the sheet's 1e-6 cm
  return branchLayout(els, line.oven.to, 1e-8);
}

/**
 * Offsets (px) that move intervals [centre − half, centre + half] apart until no two overlap (with `gap` between),
 * keeping their order by centre (ties in the order given) and their mean place: members of one mark (elements at one
 * place on one branch) drawn side by side. Intervals that do not overlap keep offset 0.
 */
export function packSlots(items: readonly { centre: number; half: number }[], gap: number): number[] {
  const n = items.length;
  const out = new Array<number>(n).fill(0);
  if (n < 2) return out;
  const idx = items.map((_, i) => i).sort((a, b) => items[a].centre - items[b].centre || a - b);
  // clusters of overlapping intervals, each packed tight around its own mean centre; merged while they overlap
  type Cluster = { members: number[]; lo: number; size: number };
  const clusters: Cluster[] = [];
  const place = (c: Cluster) => {
    const mean = c.members.reduce((s, i) => s + items[i].centre, 0) / c.members.length;
    const sizes = c.members.map((i) => 2 * items[i].half);
    c.size = sizes.reduce((s, v) => s + v, 0) + gap * (c.members.length - 1);
    // the packed members' mean centre at the members' mean centre
    let acc = 0;
    const rel = sizes.map((w) => { const r = acc + w / 2; acc += w + gap; return r; });
    const relMean = rel.reduce((s, v) => s + v, 0) / rel.length;
    c.lo = mean - relMean;
  };
  for (const i of idx) {
    const c: Cluster = { members: [i], lo: 0, size: 0 };
    place(c);
    clusters.push(c);
    while (clusters.length > 1) {
      const b = clusters[clusters.length - 1], a = clusters[clusters.length - 2];
      if (a.lo + a.size + gap <= b.lo + 1e-9) break;
      clusters.pop();
      a.members.push(...b.members);
      place(a);
    }
  }
  for (const c of clusters) {
    if (c.members.length === 1) continue;
    let y = c.lo;
    for (const i of c.members) {
      out[i] = y + items[i].half - items[i].centre;
      y += 2 * items[i].half + gap;
    }
  }
  return out;
}

/**
 * Tiers for labels along one line: each label (its wanted left edge and width, px) goes into the first tier where it
 * clears the last label by `gap`, in order of x; a new tier otherwise. Returns the tier of each label.
 */
export function labelTiers(items: readonly { left: number; width: number }[], gap: number): number[] {
  const idx = items.map((_, i) => i).sort((a, b) => items[a].left - items[b].left || a - b);
  const ends: number[] = [];
  const tier = new Array<number>(items.length).fill(0);
  for (const i of idx) {
    const { left, width } = items[i];
    let t = ends.findIndex((e) => e + gap <= left);
    if (t < 0) t = ends.push(left + width) - 1;
    else ends[t] = left + width;
    tier[i] = t;
  }
  return tier;
}

/**
 * A magnet's axis as its end view shows it (looking along the beam, z up, x right): the roll of its projection across
 * the beam (deg, from z toward x), the length of that projection (1 for a transverse axis), and the angle out of the
 * transverse plane toward +y (deg; 0 for a transverse axis).
 */
export function axisDial(n: { x: number; y: number; z: number }): { roll: number; across: number; tilt: number } {
  const across = Math.hypot(n.x, n.z);
  const roll = across > 1e-12 ? (Math.atan2(n.x, n.z) * 180) / Math.PI : 0;
  const tilt = (Math.atan2(n.y, across) * 180) / Math.PI;
  return { roll, across, tilt };
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
