/**
 * Pure edits of the raw document for the editor. None mutates its input: each returns a new document
 * (sharing the parts it did not touch) or says why it cannot.
 *
 * Routing in these edits, for an element E between upstream U and downstream D:
 *
 *     U ──port──▶ E ──to──▶ D        deleteElement(E):  U ──port──▶ D   (E has one output)
 *                                                       U ──port──▶ stop (E is a magnet or detector)
 *     U ──port──▶ D                  addElementOnPort(U, port, kind):  U ──port──▶ N ──to──▶ D
 *                                    (N a magnet: all its ports "*" → stop; N a detector: a leaf)
 */
import { namesElement } from './studies.ts';
import { KINDS, KIND_NAMES, isKind } from './elements/registry.ts';
import { RESERVED_IDS } from './check.ts';
import { type Group, type LabelSpecies, isHyperfine, portLabels } from './labels.ts';
import { type SpeciesResolver, readSpin } from './speciesDoc.ts';
import { librarySpecies } from './validate.ts';
import { parseQuantity } from './units.ts';
import type { AxisDoc, BeamlineDoc, ElementDoc, ElementKind, OvenStateDoc, QuantityDoc, SpeciesDoc } from './types.ts';

export type EditResult = { ok: true; doc: BeamlineDoc; id?: string } | { ok: false; message: string };

type Seg = string | number;

/** Split a JSON path as Problems write it ("elements[2].axis.roll", 'ports["F=2,mF=+1"]') into segments. */
export function parsePath(path: string): Seg[] | undefined {
  const out: Seg[] = [];
  let i = 0;
  while (i < path.length) {
    if (path[i] === '.') {
      i++;
      continue;
    }
    if (path[i] === '[') {
      const close = path.indexOf(']', i);
      if (close < 0) return undefined;
      const inner = path.slice(i + 1, close);
      if (/^\d+$/.test(inner)) out.push(Number(inner));
      else if (inner.startsWith('"')) {
        // a quoted key may contain "]": find the closing quote first
        let j = i + 2;
        while (j < path.length && !(path[j] === '"' && path[j - 1] !== '\\')) j++;
        if (path[j + 1] !== ']') return undefined;
        try {
          out.push(JSON.parse(path.slice(i + 1, j + 1)) as string);
        } catch {
          return undefined;
        }
        i = j + 2;
        continue;
      } else return undefined;
      i = close + 1;
      continue;
    }
    const m = /^[A-Za-z_$][A-Za-z0-9_$]*/.exec(path.slice(i));
    if (!m) return undefined;
    out.push(m[0]);
    i += m[0].length;
  }
  return out;
}

function setIn(node: unknown, segs: readonly Seg[], value: unknown): unknown {
  if (segs.length === 0) return value;
  const [s, ...rest] = segs;
  if (typeof s === 'number') {
    const arr = Array.isArray(node) ? [...node] : [];
    if (rest.length === 0 && value === undefined) arr.splice(s, 1);
    else arr[s] = setIn(arr[s], rest, value);
    return arr;
  }
  const obj: Record<string, unknown> = node && typeof node === 'object' && !Array.isArray(node) ? { ...(node as Record<string, unknown>) } : {};
  if (rest.length === 0 && value === undefined) delete obj[s];
  else obj[s] = setIn(obj[s], rest, value);
  return obj;
}

/**
 * Set the value at a JSON path (string as in Problems, or segments); `undefined` removes the key (or the
 * list item). Missing objects on the way are created.
 */
export function setAt(doc: BeamlineDoc, path: string | readonly Seg[], value: unknown): EditResult {
  const segs = typeof path === 'string' ? parsePath(path) : path;
  if (!segs || segs.length === 0) return { ok: false, message: `cannot read the path ${JSON.stringify(path)}` };
  return { ok: true, doc: setIn(doc, segs, value) as BeamlineDoc };
}

/** The first id `prefix1`, `prefix2`, … not used in the document (and not reserved). */
export function freshId(doc: BeamlineDoc, prefix: string): string {
  const used = new Set(doc.elements.map((e) => e.id));
  for (let n = 1; ; n++) {
    const id = `${prefix}${n}`;
    if (!used.has(id) && !(RESERVED_IDS as readonly string[]).includes(id)) return id;
  }
}

/** Id prefixes of new elements, each its kind module's (M1 magnet, R1 rotator, F1 field, T1 twist, RF1, C1 recombiner, S1 slit, D1 detector). */
export const ID_PREFIX: Readonly<Record<ElementKind, string>> = Object.fromEntries(KIND_NAMES.map((k) => [k, KINDS[k].idPrefix])) as Record<ElementKind, string>;

function indexOfId(doc: BeamlineDoc, id: string): number {
  return doc.elements.findIndex((e) => e.id === id);
}

/** Where `fromId`'s output `port` (null: the single output) goes now, or why it has none. */
function currentTarget(doc: BeamlineDoc, fromId: string, port: string | null): string | { error: string } {
  if (fromId === 'oven') {
    if (port !== null) return { error: 'the oven has one output: pass port null' };
    return doc.oven.to;
  }
  const el = doc.elements[indexOfId(doc, fromId)];
  if (!el) return { error: `no element "${fromId}"` };
  if (el.kind === 'detector') return { error: `${fromId} is a detector: a leaf has no output` };
  if (el.kind === 'magnet') {
    if (port === null) return { error: `${fromId} is a magnet: name the port` };
    return el.ports[port] ?? el.ports['*'] ?? 'stop';
  }
  if (port !== null) return { error: `${fromId} has one output: pass port null` };
  return el.to;
}

/** Route `fromId`'s output `port` (null: the single output, or the oven's) to `target`. */
export function reroute(doc: BeamlineDoc, fromId: string, port: string | null, target: string): EditResult {
  const cur = currentTarget(doc, fromId, port);
  if (typeof cur !== 'string') return { ok: false, message: cur.error };
  if (target !== 'stop' && indexOfId(doc, target) < 0) return { ok: false, message: `no element "${target}" to route to` };
  if (fromId === 'oven') return { ok: true, doc: { ...doc, oven: { ...doc.oven, to: target } } };
  const i = indexOfId(doc, fromId);
  const el = doc.elements[i];
  const next = el.kind === 'magnet' ? { ...el, ports: { ...el.ports, [port as string]: target } } : { ...el, to: target };
  const elements = [...doc.elements];
  elements[i] = next as ElementDoc;
  return { ok: true, doc: { ...doc, elements } };
}

/**
 * Insert a new element of `kind` on `fromId`'s output `port` (null: the single output), with the kind's
 * defaults. A one-output kind passes the beam on to the old target; a magnet routes all its ports ("*")
 * to "stop"; a detector ends the path. `portLabels` fills a new recombiner's `open`.
 */
export function addElementOnPort(doc: BeamlineDoc, fromId: string, port: string | null, kind: ElementKind, newId?: string,
  portLabels: readonly string[] = []): EditResult {
  if (!isKind(kind)) return { ok: false, message: `unknown element kind ${JSON.stringify(kind)}` };
  const cur = currentTarget(doc, fromId, port);
  if (typeof cur !== 'string') return { ok: false, message: cur.error };
  const id = newId ?? freshId(doc, KINDS[kind].idPrefix);
  const bad = idProblem(doc, id);
  if (bad) return { ok: false, message: bad };
  const mod = KINDS[kind];
  const el: Record<string, unknown> = { id, kind, gap: '0 m', ...mod.defaults(portLabels) };
  if (mod.output === 'to') el.to = cur;
  if (mod.output === 'ports') el.ports = { '*': 'stop' };
  const at = fromId === 'oven' ? 0 : indexOfId(doc, fromId) + 1;
  const elements = [...doc.elements];
  elements.splice(at, 0, el as unknown as ElementDoc);
  const r = reroute({ ...doc, elements }, fromId, port, id);
  return r.ok ? { ok: true, doc: r.doc, id } : r;
}

function idProblem(doc: BeamlineDoc, id: string): string | undefined {
  if (typeof id !== 'string' || id.trim() === '' || id !== id.trim()) return `an id is a non-empty string without surrounding spaces, got ${JSON.stringify(id)}`;
  if ((RESERVED_IDS as readonly string[]).includes(id)) return `"${id}" is reserved`;
  if (id.includes(':')) return 'an id must not contain ":"';
  if (indexOfId(doc, id) >= 0) return `the id "${id}" is taken`;
  return undefined;
}

/** Replace every reference to `from` (oven.to, every element's to and ports) by `to`. */
function retarget(doc: BeamlineDoc, from: string, to: string): BeamlineDoc {
  const elements = doc.elements.map((e) => {
    if (e.kind === 'magnet') {
      if (!Object.values(e.ports).includes(from)) return e;
      return { ...e, ports: Object.fromEntries(Object.entries(e.ports).map(([k, v]) => [k, v === from ? to : v])) };
    }
    if (e.kind !== 'detector' && e.to === from) return { ...e, to };
    return e;
  }) as ElementDoc[];
  const oven = doc.oven.to === from ? { ...doc.oven, to } : doc.oven;
  return { ...doc, oven, elements };
}

/**
 * Remove element `id`. Whatever routed to it now routes to its downstream when it has one output,
 * else (a magnet or a detector) to "stop".
 */
export function deleteElement(doc: BeamlineDoc, id: string): EditResult {
  const i = indexOfId(doc, id);
  if (i < 0) return { ok: false, message: `no element "${id}"` };
  const el = doc.elements[i];
  let down = el.kind === 'magnet' || el.kind === 'detector' ? 'stop' : el.to;
  if (down === id) down = 'stop';
  const without = studiesWithout({ ...doc, elements: doc.elements.filter((_, k) => k !== i) }, id);
  return { ok: true, doc: retarget(without, id, down) };
}

/**
 * Copy element `id` under a new id, placed after it in the list with the same settings and outputs;
 * nothing routes to the copy yet (reroute a port to it).
 */
export function duplicateElement(doc: BeamlineDoc, id: string, newId?: string): EditResult {
  const i = indexOfId(doc, id);
  if (i < 0) return { ok: false, message: `no element "${id}"` };
  const el = doc.elements[i];
  const nid = newId ?? freshId(doc, isKind(el.kind) ? KINDS[el.kind].idPrefix : id);
  const bad = idProblem(doc, nid);
  if (bad) return { ok: false, message: bad };
  const copy = { ...(structuredCloneJson(el) as ElementDoc), id: nid };
  const elements = [...doc.elements];
  elements.splice(i + 1, 0, copy);
  return { ok: true, doc: { ...doc, elements }, id: nid };
}

function structuredCloneJson(v: unknown): unknown {
  return JSON.parse(JSON.stringify(v));
}

/** Rename element `oldId` to `newId` and every reference to it. */
export function renameElement(doc: BeamlineDoc, oldId: string, newId: string): EditResult {
  const i = indexOfId(doc, oldId);
  if (i < 0) return { ok: false, message: `no element "${oldId}"` };
  if (oldId === newId) return { ok: true, doc, id: newId };
  const bad = idProblem(doc, newId);
  if (bad) return { ok: false, message: bad };
  const elements = [...doc.elements];
  elements[i] = { ...elements[i], id: newId };
  return { ok: true, doc: retarget(studiesRenamed({ ...doc, elements }, oldId, newId), oldId, newId), id: newId };
}

/** The stored scans and tolerances with the parameters of element `oldId` named after `newId`. */
function studiesRenamed(doc: BeamlineDoc, oldId: string, newId: string): BeamlineDoc {
  const rename = (p: string) => (typeof p === 'string' && namesElement(p, oldId) ? newId + p.slice(oldId.length) : p);
  const out = { ...doc };
  if (Array.isArray(doc.scans)) out.scans = doc.scans.map((s) => (s && Array.isArray(s.parameters) ? { ...s, parameters: s.parameters.map((a) => ({ ...a, parameter: rename(a.parameter) })) } : s));
  if (Array.isArray(doc.tolerances)) out.tolerances = doc.tolerances.map((t) => (t ? { ...t, parameter: rename(t.parameter) } : t));
  if (Array.isArray(doc.fits)) out.fits = doc.fits.map((f) => (f && Array.isArray(f.free) ? { ...f, free: f.free.map((x) => ({ ...x, parameter: rename(x.parameter) })) } : f));
  return out;
}

/** The stored scans and tolerances without those that name a parameter of the deleted element `id`. */
function studiesWithout(doc: BeamlineDoc, id: string): BeamlineDoc {
  const names = (p: unknown) => typeof p === 'string' && namesElement(p, id);
  const out = { ...doc };
  if (Array.isArray(doc.scans)) out.scans = doc.scans.filter((s) => !(s && Array.isArray(s.parameters) && s.parameters.some((a) => names(a?.parameter))));
  if (Array.isArray(doc.tolerances)) out.tolerances = doc.tolerances.filter((t) => !names(t?.parameter));
  if (Array.isArray(doc.fits)) out.fits = doc.fits.filter((f) => !(f && Array.isArray(f.free) && f.free.some((x) => names(x?.parameter))));
  if (out.scans?.length === 0) delete out.scans;
  if (out.fits?.length === 0) delete out.fits;
  if (out.tolerances?.length === 0) delete out.tolerances;
  return out;
}

// ---------------------------------------------------------------- outputs of the document

/** One output of the line as written: the oven's, a magnet's port (the key as written, "*" included), or
 *  an element's single output (port null). */
export interface DocOutput {
  fromId: string;
  port: string | null;
  target: string;
}

function outputsOfElementDoc(e: ElementDoc): DocOutput[] {
  const out = isKind(e.kind) ? KINDS[e.kind].output : 'none';
  if (out === 'ports') {
    const ports = (e as { ports?: unknown }).ports;
    if (!ports || typeof ports !== 'object' || Array.isArray(ports)) return [];
    return Object.entries(ports as Record<string, unknown>).map(([port, target]) => ({ fromId: e.id, port, target: String(target) }));
  }
  if (out === 'to') return [{ fromId: e.id, port: null, target: String((e as { to?: unknown }).to ?? 'stop') }];
  return [];
}

/** Every output of the line in document order: the oven's first, then each element's (a magnet's ports in
 *  the order written; a detector has none). */
export function documentOutputs(doc: BeamlineDoc): DocOutput[] {
  return [{ fromId: 'oven', port: null, target: doc.oven.to }, ...doc.elements.flatMap(outputsOfElementDoc)];
}

/** The outputs of one element ("oven" for the oven's), or undefined when the line has no such element. */
export function elementOutputs(doc: BeamlineDoc, id: string): DocOutput[] | undefined {
  if (id === 'oven') return [{ fromId: 'oven', port: null, target: doc.oven.to }];
  const i = indexOfId(doc, id);
  return i < 0 ? undefined : outputsOfElementDoc(doc.elements[i]);
}

// ---------------------------------------------------------------- the species

/** A species as a document writes it (a library name, or a bare spin {spin, g, mass}) as the label
 *  functions take it; undefined when it names no known species or its spin cannot be read. */
function labelSpeciesOf(species: unknown, resolver: SpeciesResolver): LabelSpecies | undefined {
  if (typeof species === 'string') return resolver.lookup(species);
  if (species && typeof species === 'object' && !Array.isArray(species) && 'spin' in species) {
    const j2 = readSpin((species as { spin: unknown }).spin, 'species.spin');
    return typeof j2 === 'number' ? { kind: 'bare', j2 } : undefined;
  }
  return undefined;
}

/** Port labels of a magnet for `species` as a document writes it (docs/design.md, "Port labels"), with
 *  `group` where the species has hyperfine structure; undefined when the species is not known. */
export function speciesPortLabels(species: unknown, group?: Group, resolver: SpeciesResolver = librarySpecies): string[] | undefined {
  const sp = labelSpeciesOf(species, resolver);
  return sp ? portLabels(sp, group) : undefined;
}

/** True when `species` (as written) has hyperfine structure: some isotope has a nuclear spin, so its
 *  magnets sort |F, m_F⟩ states at their field and `group` and `entry` apply. False for an unknown one. */
export function speciesIsHyperfine(species: unknown, resolver: SpeciesResolver = librarySpecies): boolean {
  const sp = labelSpeciesOf(species, resolver);
  return sp ? isHyperfine(sp) : false;
}

/**
 * The field size a magnet without one gets when the line changes to a hyperfine species, which sorts by
 * the eigenstates at the magnet's field and so needs its size. A demo set-point, announced to the user
 * (changeSpecies returns the magnets it set), never a value to keep.
 */
export const DEFAULT_HYPERFINE_FIELD = '0.5 T';

export type SpeciesChange =
  | { ok: true; doc: BeamlineDoc; /** Magnets that were given DEFAULT_HYPERFINE_FIELD. */ fieldSet: string[] }
  | { ok: false; message: string };

type Sorted = ElementDoc & { ports?: Record<string, string>; open?: unknown; phases?: unknown; group?: Group; field?: unknown };

/**
 * The line with `species` in place of its species, carried over as far as the states correspond:
 * - each magnet's port keys (and a recombiner's `open` labels and `phases` keys) are renamed by position
 *   in the two species' label lists ("+1/2" → "mJ=+1/2": the same state under the new species' names)
 *   when both lists have the same length; "*" and keys that do not map stay, for the reader to name;
 * - without hyperfine structure in the new species, the keys that apply to hyperfine species only
 *   (`group`, `entry`, a recombiner's `field`) are dropped;
 * - with it, magnets without a field get DEFAULT_HYPERFINE_FIELD (listed in `fieldSet`).
 * An unknown species name is set as written (validation names it). The input is not changed.
 */
export function changeSpecies(doc: BeamlineDoc, species: SpeciesDoc, resolver: SpeciesResolver = librarySpecies): SpeciesChange {
  const isObject = species !== null && typeof species === 'object' && !Array.isArray(species);
  if (typeof species !== 'string' && !isObject) {
    return { ok: false, message: `a species is a library name such as "Rb-87" or a bare spin {"spin", "g", "mass"}, got ${JSON.stringify(species)}` };
  }
  const from = labelSpeciesOf(doc.species, resolver);
  const to = labelSpeciesOf(species, resolver);
  const fromHf = from ? isHyperfine(from) : false;
  const toHf = to ? isHyperfine(to) : false;
  const fieldSet: string[] = [];
  const elements = doc.elements.map((e0) => {
    if (!isKind(e0.kind)) return e0;
    const e = e0 as Sorted;
    let next: Sorted = e;
    const edit = (): Sorted => (next === e ? (next = { ...e }) : next);
    if (from && to && (e.kind === 'magnet' || e.kind === 'recombiner')) {
      const a = portLabels(from, fromHf ? e.group : undefined);
      const b = portLabels(to, toHf ? e.group : undefined);
      if (a.length === b.length && a.some((l, i) => l !== b[i])) {
        const map = new Map(a.map((l, i) => [l, b[i]]));
        const rename = (k: string) => map.get(k) ?? k;
        const renameKeys = (o: unknown) => (o && typeof o === 'object' && !Array.isArray(o)
          ? Object.fromEntries(Object.entries(o).map(([k, v]) => [rename(k), v])) : o);
        if (e.ports && typeof e.ports === 'object') edit().ports = renameKeys(e.ports) as Record<string, string>;
        if (Array.isArray(e.open)) edit().open = e.open.map((k) => (typeof k === 'string' ? rename(k) : k));
        if (e.phases !== undefined) edit().phases = renameKeys(e.phases);
      }
    }
    if (to && !toHf) {
      for (const k of KINDS[e.kind].hyperfineOnly) if (k in e) delete (edit() as unknown as Record<string, unknown>)[k];
    }
    if (toHf && e.kind === 'magnet' && e.field === undefined) {
      edit().field = DEFAULT_HYPERFINE_FIELD;
      fieldSet.push(e.id);
    }
    return next as ElementDoc;
  });
  return { ok: true, doc: { ...doc, species, elements }, fieldSet };
}

// ---------------------------------------------------------------- the oven's state, the velocity table, positions

/** The axis an oven state gets when it had none (unpolarised before): along the lab's z, the beam's vertical. */
const STATE_AXIS: AxisDoc = { theta: '0 deg', phi: '0 deg' };

/** x to 12 significant figures (what the engine's round-off supports), so a computed entry carries no float noise. */
function clean12(x: number): number {
  return Number(x.toPrecision(12));
}

/**
 * The oven's state changed to `kind`, carried over from `current` where the kinds correspond (docs/design.md,
 * `oven.state`): the axis is kept; pure → populations puts all of it in the pure state; populations → pure takes
 * the most populated state; unpolarised → populations gives every zero-field state of `labels` the same share
 * (1/n to 12 figures, so the reader needs no normalisation warning). `labels` are the species' zero-field state
 * labels (portLabels with group "each"); the same kind returns `current` unchanged.
 */
export function ovenStateOfKind(current: OvenStateDoc, kind: 'unpolarized' | 'pure' | 'populations', labels: readonly string[]): OvenStateDoc {
  if (current.kind === kind) return current;
  if (kind === 'unpolarized') return { kind };
  const axis = 'axis' in current && current.axis ? current.axis : STATE_AXIS;
  if (kind === 'pure') {
    let m = labels[0] ?? '';
    if (current.kind === 'populations') {
      const best = Object.entries(current.p).map(([l, v]) => [l, Number(v)] as const).filter(([, v]) => Number.isFinite(v)).sort((a, b) => b[1] - a[1])[0];
      if (best && best[1] > 0) m = best[0];
    }
    return { kind: 'pure', axis, m };
  }
  if (current.kind === 'pure') return { kind: 'populations', axis, p: { [current.m]: 1 } };
  const share = labels.length > 0 ? clean12(1 / labels.length) : 1;
  return { kind: 'populations', axis, p: Object.fromEntries(labels.map((l) => [l, share])) };
}

/** The document with the oven's state set to `state` (a new value; nothing else changes). */
export function setOvenState(doc: BeamlineDoc, state: OvenStateDoc): EditResult {
  return { ok: true, doc: { ...doc, oven: { ...doc.oven, state } } };
}

/**
 * The document with the oven's velocity distribution a table of `points` ([speed, weight], speeds as quantity
 * strings with units, weights plain numbers). At least one point; the reader checks the rest (speeds positive
 * and strictly increasing, weights ≥ 0 with a positive sum).
 */
export function setVelocityTable(doc: BeamlineDoc, points: readonly (readonly [QuantityDoc, QuantityDoc])[]): EditResult {
  if (points.length === 0) return { ok: false, message: 'a velocity table needs at least one speed' };
  return { ok: true, doc: { ...doc, oven: { ...doc.oven, velocity: { kind: 'table', points: points.map(([s, w]) => [s, w]) } } } };
}

/** The unit a speed of the table is written in ("m/s" of "450 m/s"), or m/s for an expression. */
function unitOfText(text: string): string | undefined {
  const m = /^\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?\s*([A-Za-zµμ/]+(?:\/[A-Za-z]+)?)\s*$/i.exec(String(text));
  return m ? m[1] : undefined;
}

/**
 * A velocity table's rows edited: `insert` adds a row after row `index` (at the mean speed of it and the next,
 * or one step past the last, in the unit of that row, with weight 0); `remove` takes row `index` out (the last
 * row cannot be removed). A table with a speed that cannot be read says which.
 */
export function editVelocityRows(doc: BeamlineDoc, op: { insert: number } | { remove: number }): EditResult {
  const v = doc.oven.velocity;
  if (v.kind !== 'table') return { ok: false, message: 'the oven\'s velocity distribution is not a table' };
  const pts = v.points;
  if ('remove' in op) {
    if (op.remove < 0 || op.remove >= pts.length) return { ok: false, message: `the table has no row ${op.remove + 1}` };
    if (pts.length === 1) return { ok: false, message: 'a velocity table needs at least one speed: choose another distribution instead' };
    return setVelocityTable(doc, pts.filter((_, i) => i !== op.remove));
  }
  const i = op.insert;
  if (i < 0 || i >= pts.length) return { ok: false, message: `the table has no row ${i + 1}` };
  const speed = (k: number): number | undefined => {
    const r = parseQuantity(pts[k][0], 'speed', `oven.velocity.points[${k}][0]`);
    return typeof r === 'number' ? r : undefined;
  };
  const a = speed(i);
  if (a === undefined) return { ok: false, message: `row ${i + 1}: its speed ${JSON.stringify(pts[i][0])} cannot be read` };
  let next: number;
  if (i + 1 < pts.length) {
    const b = speed(i + 1);
    if (b === undefined) return { ok: false, message: `row ${i + 2}: its speed ${JSON.stringify(pts[i + 1][0])} cannot be read` };
    next = (a + b) / 2;
  } else {
    const prev = i > 0 ? speed(i - 1) : undefined;
    next = prev !== undefined && a > prev ? a + (a - prev) : a * 1.1;
  }
  const unit = unitOfText(String(pts[i][0])) ?? 'm/s';
  const factor = parseQuantity(`1 ${unit}`, 'speed', 'unit');
  const f = typeof factor === 'number' && factor > 0 ? factor : 1;
  const row: [QuantityDoc, QuantityDoc] = [`${clean12(next / f)} ${typeof factor === 'number' ? unit : 'm/s'}`, 0];
  return setVelocityTable(doc, [...pts.slice(0, i + 1), row, ...pts.slice(i + 1)]);
}

/**
 * The element `id` placed at `position` from the oven aperture (a length as typed, "45 cm") by setting its gap
 * to position − `upstreamExit` (m: where the element it follows ends, from the oven aperture). The document
 * keeps gaps: the gap is written in the unit typed (mm for an expression), to 12 figures. A position upstream
 * of that exit is refused with both distances named.
 */
export function setPositionFromOven(doc: BeamlineDoc, id: string, position: string, upstreamExit: number, upstreamName = 'the element before it'): EditResult {
  const i = indexOfId(doc, id);
  if (i < 0) return { ok: false, message: `no element "${id}"` };
  const pos = parseQuantity(position.trim(), 'length', `elements[${i}].position`);
  if (typeof pos !== 'number') return { ok: false, message: pos.message };
  if (!Number.isFinite(upstreamExit) || upstreamExit < 0) return { ok: false, message: `the exit of ${upstreamName} is not known` };
  const unit = unitOfText(position);
  const factor = unit === undefined ? undefined : parseQuantity(`1 ${unit}`, 'length', 'unit');
  const [u, f] = typeof factor === 'number' && factor > 0 ? [unit!, factor] : ['mm', 1e-3];
  const gap = clean12((pos - upstreamExit) / f);
  if (gap < 0 && upstreamExit === 0) {
    return { ok: false, message: `${id} cannot start at ${clean12(pos / f)} ${u}: positions are measured downstream from the oven aperture, from 0 on` };
  }
  if (gap < 0) {
    const exit = clean12(upstreamExit / f);
    return { ok: false, message: `${id} cannot start at ${clean12(pos / f)} ${u} from the oven aperture: ${upstreamName} ends at ${exit} ${u}, so its gap would be negative (move ${upstreamName} first)` };
  }
  return setAt(doc, ['elements', i, 'gap'], `${gap} ${u}`);
}
