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
import { KINDS, isKind } from './elements/registry.ts';
import { RESERVED_IDS } from './check.ts';
import { type Group, type LabelSpecies, isHyperfine, portLabels } from './labels.ts';
import { type SpeciesResolver, readSpin } from './speciesDoc.ts';
import { librarySpecies } from './validate.ts';
import type { BeamlineDoc, ElementDoc, ElementKind, SpeciesDoc } from './types.ts';

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

/** Id prefixes of new elements: M1 magnet, R1 rotator, F1 field, T1 twist, RF1, C1 recombiner, S1 slit, D1 detector. */
export const ID_PREFIX: Readonly<Record<ElementKind, string>> = {
  magnet: 'M', rotator: 'R', field: 'F', twist: 'T', rf: 'RF', recombiner: 'C', slit: 'S', detector: 'D',
};

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
  const id = newId ?? freshId(doc, ID_PREFIX[kind]);
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
  const nid = newId ?? freshId(doc, ID_PREFIX[el.kind] ?? id);
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
