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
import { KINDS, isKind } from './elements/registry.ts';
import { RESERVED_IDS } from './check.ts';
import type { BeamlineDoc, ElementDoc, ElementKind } from './types.ts';

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
  const without = { ...doc, elements: doc.elements.filter((_, k) => k !== i) };
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
  return { ok: true, doc: retarget({ ...doc, elements }, oldId, newId), id: newId };
}
