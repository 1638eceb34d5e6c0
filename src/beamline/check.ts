/**
 * Validation of a whole document against format v1 and the beam keys of docs/design.md, with the species
 * library passed in (validate.ts supplies src/species). Every problem is reported at once, each with its
 * JSON path: header, unknown keys (and keys that do not apply to the species), quantities and their
 * dimensions and bounds, ids, routing (dangling targets, unrouted ports, cycles), and the leaves.
 */
import { type LabelSpecies, isHyperfine } from './labels.ts';
import { KINDS, KIND_NAMES, isKind, lengthOf, outputsOf } from './elements/registry.ts';
import { FIRST_SLIT_MIN_DISTANCE, LIMITS } from './limits.ts';
import { abbreviate, listText, listedProblems, quote } from './messages.ts';
import { type MigrationRegistry, beamlineMigrations, migrateDoc } from './migrations.ts';
import { readOven } from './oven.ts';
import { readStudies } from './studies.ts';
import { type Obj, type QuantityRead, type ReadCtx, at, checkKeys, describe, full, isObj, problem, quantity, vec, warn } from './read.ts';
import { type SpeciesResolver, readSpecies } from './speciesDoc.ts';
import type { Beamline, BeamlineDoc, Element, Oven, ParseResult, Problem } from './types.ts';

export const FORMAT = 'spinyard.beamline';
export const TOP_KEYS = ['format', 'version', 'title', 'species', 'ambient', 'oven', 'elements', 'scans', 'tolerances', 'fits', 'simulations'] as const;
export const RESERVED_IDS = ['stop', 'oven'] as const;

/** "path: message" (or the message alone for the whole file). */
export function formatProblem(p: Problem): string {
  return p.path ? `${p.path}: ${p.message}` : p.message;
}

const fail = (problems: Problem[]): ParseResult => ({ ok: false, problems: listedProblems(problems) });

/** Validate a parsed JSON value as a beamline and normalise it (SI numbers, defaults filled in). */
export function checkBeamline(json: unknown, resolver: SpeciesResolver, migrations: MigrationRegistry = beamlineMigrations,
  quantities?: QuantityRead[]): ParseResult {
  if (!isObj(json)) return fail([{ path: '', message: `a beamline is a JSON object, got ${describe(json)}` }]);
  if (!Object.hasOwn(json, 'format') || json.format !== FORMAT) {
    return fail([{ path: 'format', message: json.format === undefined ? `missing "format": not a Spinyard beamline (expected "format": "${FORMAT}")` : `not a Spinyard beamline: format is ${describe(json.format)}, expected "${FORMAT}"` }]);
  }
  if (json.version === undefined) return fail([{ path: 'version', message: `missing "version" (this Spinyard reads up to ${migrations.current})` }]);
  const mig = migrateDoc(json, migrations);
  if (!mig.ok) return fail([{ path: 'version', message: mig.message }]);
  const doc = mig.doc;

  const problems: Problem[] = [];
  const warnings: Problem[] = [];
  checkKeys({ problems, warnings, species: undefined }, doc, '', TOP_KEYS, 'the beamline');

  let title = '';
  if (doc.title !== undefined) {
    if (typeof doc.title !== 'string') problems.push({ path: 'title', message: `expected a string, got ${describe(doc.title)}` });
    else title = doc.title;
  }
  const sp = readSpecies({ problems, warnings }, doc.species, resolver);
  // the studies name the line's quantities: record them when the document keeps any (or the caller asks)
  const read = quantities ?? (doc.scans !== undefined || doc.tolerances !== undefined || doc.fits !== undefined ? [] : undefined);
  const ctx: ReadCtx = { problems, warnings, species: sp?.species, quantities: read };
  const ambient = doc.ambient === undefined ? { x: 0, y: 0, z: 0 } : vec(ctx, doc, 'ambient', 'field', '', LIMITS.field);
  const oven = readOven(ctx, doc.oven);
  const elements = readElements(ctx, doc.elements);
  const studies = (read || doc.simulations !== undefined) && oven && elements && !problems.length ? readStudies(ctx, doc, read ?? [], elements.map((e) => e.id)) : {};

  if (oven && elements && checkRouting(ctx, oven.to, elements)) checkFirstSlits(ctx, oven, elements);
  if (problems.length || !sp || !oven || !elements || !ambient) {
    return fail(problems.length ? problems : [{ path: '', message: 'the beamline could not be read' }]);
  }
  // the normalized line is frozen: the engine keeps what it derives from it by identity, so a line changed in
  // place would read stale results; a change makes a new line (edits, scans), and assigning into one throws
  const line: Beamline = deepFreeze({ title, species: sp.ref, oven, ambient, elements, ...studies });
  return { ok: true, doc: doc as unknown as BeamlineDoc, line, warnings: listedProblems(warnings, 'warnings') };
}

/**
 * The line read again with some quantities replaced by SI values (keyed by their JSON paths): only the parts that
 * hold a replaced path (the ambient field, the oven, an element) are read again, with the reader's own bounds,
 * and every other part of the result is the object of `line` itself, so the engine's caches keep serving it.
 * `doc` is the (migrated) document `line` was read from.
 */
export function rereadBeamline(doc: BeamlineDoc, line: Beamline, species: LabelSpecies | undefined, values: ReadonlyMap<string, number>):
  { ok: true; line: Beamline; warnings: Problem[] } | { ok: false; problems: Problem[] } {
  const problems: Problem[] = [];
  const warnings: Problem[] = [];
  const ctx: ReadCtx = { problems, warnings, species, values };
  const raw = doc as unknown as Obj;
  let ambient = line.ambient;
  let oven = line.oven;
  let elements = line.elements;
  const touched = new Set<string>();
  for (const p of values.keys()) {
    const m = /^elements\[(\d+)\]/.exec(p);
    touched.add(m ? m[1] : p.startsWith('oven') ? 'oven' : p.startsWith('ambient') ? 'ambient' : p);
  }
  for (const t of touched) {
    if (t === 'ambient') ambient = vec(ctx, raw, 'ambient', 'field', '', LIMITS.field) ?? ambient;
    else if (t === 'oven') oven = readOven(ctx, raw.oven) ?? oven;
    else if (/^\d+$/.test(t) && Number(t) < line.elements.length && Array.isArray(raw.elements)) {
      const i = Number(t);
      const el = readElement(ctx, raw.elements[i], at('elements', i));
      if (el) {
        if (elements === line.elements) elements = line.elements.slice();
        (elements as Element[])[i] = el;
      }
    } else problems.push({ path: t, message: 'no quantity of the line is here' });
  }
  // only a slit can fail the check of the first slits: a line without one passes it as it is
  if (!problems.length && elements.some((e) => e.kind === 'slit')) checkFirstSlits(ctx, oven, elements);
  if (problems.length) return { ok: false, problems };
  return { ok: true, line: deepFreeze({ ...line, ambient, oven, elements }), warnings };
}

function readElements(ctx: ReadCtx, v: unknown): Element[] | undefined {
  if (v === undefined) return problem(ctx, 'elements', 'missing "elements": the list of magnets, rotators, detectors, …');
  if (!Array.isArray(v)) return problem(ctx, 'elements', `expected a list of elements, got ${describe(v)}`);
  const out: Element[] = [];
  const firstSeen = new Map<string, string>();
  let ok = true;
  for (let i = 0; i < v.length && !full(ctx); i++) {
    const raw: unknown = v[i];
    const path = at('elements', i);
    const n = ctx.problems.length;
    const el = readElement(ctx, raw, path);
    if (isObj(raw) && typeof raw.id === 'string' && raw.id !== '') {
      const prev = firstSeen.get(raw.id);
      if (prev) problem(ctx, at(path, 'id'), `duplicate id ${quote(raw.id)}: ${prev} has it already`);
      else firstSeen.set(raw.id, path);
    }
    if (!el || ctx.problems.length > n) ok = false;
    else out.push(el);
  }
  return ok && !full(ctx) ? out : undefined;
}

function readId(ctx: ReadCtx, o: Obj, path: string): string | undefined {
  const id = o.id;
  const p = at(path, 'id');
  if (id === undefined) return problem(ctx, p, 'missing "id"');
  if (typeof id !== 'string' || id.trim() === '') return problem(ctx, p, `an id is a non-empty string, got ${describe(id)}`);
  if ((RESERVED_IDS as readonly string[]).includes(id)) return problem(ctx, p, `"${id}" is reserved (${id === 'stop' ? 'the beam stop target' : 'the source'}): choose another id`);
  if (id.includes(':')) return problem(ctx, p, `an id must not contain ":" (results write ELEMENT:PORT), got ${quote(id)}`);
  if (id !== id.trim()) return problem(ctx, p, `an id must not start or end with spaces, got ${quote(id)}`);
  return id;
}

function readElement(ctx: ReadCtx, raw: unknown, path: string): Element | undefined {
  if (!isObj(raw)) return problem(ctx, path, `expected an element object, got ${describe(raw)}`);
  const id = readId(ctx, raw, path);
  const kind = raw.kind;
  if (kind === undefined) return problem(ctx, at(path, 'kind'), `missing "kind": one of ${KIND_NAMES.join(', ')}`);
  if (!isKind(kind)) {
    const hint = kind === 'stop' ? ' (a beam stop is the target "stop", not an element)' : kind === 'oven' ? ' (the oven is the top-level "oven")' : '';
    return problem(ctx, at(path, 'kind'), `unknown element kind ${describe(kind)}${hint}; kinds: ${KIND_NAMES.join(', ')}`);
  }
  const mod = KINDS[kind];
  const allowed = ['id', 'kind', 'gap', ...mod.keys, ...(mod.output === 'none' ? [] : [mod.output])];
  const why: Record<string, string> = Object.create(null) as Record<string, string>;
  if (ctx.species && !isHyperfine(ctx.species)) {
    for (const k of mod.hyperfineOnly) why[k] = `${k} applies to hyperfine species only (this line's species has no nuclear spin)`;
  }
  if (mod.output === 'none') {
    why.to = 'a detector is a leaf: it ends its path and routes nothing';
    why.ports = why.to;
  } else if (mod.output === 'to') why.ports = `a ${kind} has one output: route it with "to"`;
  else why.to = 'a magnet routes each port in "ports"';
  checkKeys(ctx, raw, path, allowed.filter((k) => !Object.hasOwn(why, k)), `a ${kind}`, why);
  const gap = quantity(ctx, raw, 'gap', 'length', path, { fallback: 0, nonNegative: true, range: LIMITS.distance, what: 'the gap' });
  const body = mod.read(raw, path, ctx);
  if (id === undefined || gap === undefined || !body) return undefined;
  return { id, kind, gap, path, ...body } as Element;
}

/**
 * Routing: every target is an element id or "stop"; no cycle (a port routed back upstream); elements the
 * oven never reaches are reported as warnings. Leaves are detectors and "stop" by construction (every
 * other kind must route its outputs). The walks keep their own stacks, so a line of any length is checked
 * without deep recursion. Returns true when the routing has no problem (targets exist, no cycle).
 */
function checkRouting(ctx: ReadCtx, ovenTo: string, elements: readonly Element[]): boolean {
  const n = ctx.problems.length;
  const byId = new Map(elements.map((e) => [e.id, e]));
  const where = (el: Element, port: string | null) => (port === null ? at(el.path, 'to') : at(at(el.path, 'ports'), port));
  const ids = () => listText([...byId.keys()]) || 'none';
  const checkTarget = (t: string, p: string) => {
    if (t === 'stop' || byId.has(t)) return true;
    if (t === 'oven') problem(ctx, p, 'the oven is the source and cannot be a target');
    else problem(ctx, p, `target ${quote(t)} is not an element id or "stop"; ids: ${ids()}`);
    return false;
  };
  checkTarget(ovenTo, 'oven.to');
  for (const el of elements) for (const o of outputsOf(el)) if (!full(ctx)) checkTarget(o.target, where(el, o.port));

  // cycles: depth-first search, three colours, an explicit stack; each cycle is named once.
  const colour = new Map<string, 0 | 1 | 2>();
  const order = byId.has(ovenTo) ? [ovenTo, ...byId.keys()] : [...byId.keys()];
  for (const root of order) {
    if ((colour.get(root) ?? 0) !== 0) continue;
    const stack: { id: string; outs: { port: string | null; target: string }[]; next: number }[] = [];
    const enter = (id: string) => {
      colour.set(id, 1);
      stack.push({ id, outs: outputsOf(byId.get(id)!), next: 0 });
    };
    enter(root);
    while (stack.length) {
      const top = stack[stack.length - 1];
      if (top.next === top.outs.length) {
        colour.set(top.id, 2);
        stack.pop();
        continue;
      }
      const o = top.outs[top.next++];
      const t = o.target;
      if (!byId.has(t)) continue;
      const c = colour.get(t) ?? 0;
      if (c === 1) {
        const from = stack.findIndex((f) => f.id === t);
        const cyc = [...stack.slice(from).map((f) => f.id), t];
        problem(ctx, where(byId.get(top.id)!, o.port), `cycle ${listText(cyc, ' → ')}: ${o.port === null ? 'the output' : `port ${abbreviate(o.port)}`} of ${abbreviate(top.id)} is routed back upstream`);
      } else if (c === 0) enter(t);
    }
  }

  // reachability from the oven
  const seen = new Set<string>();
  const todo = [ovenTo];
  while (todo.length) {
    const id = todo.pop()!;
    if (seen.has(id) || !byId.has(id)) continue;
    seen.add(id);
    for (const o of outputsOf(byId.get(id)!)) todo.push(o.target);
  }
  for (const el of elements) if (!seen.has(el.id)) warn(ctx, el.path, `${abbreviate(el.id)} is not reached from the oven`);
  return ctx.problems.length === n;
}

/**
 * The first slit of every path must stand at least FIRST_SLIT_MIN_DISTANCE past the oven aperture: the
 * engine draws each trajectory through a point of the aperture (y = 0) and a point of that slit (y = y_s) and
 * divides by y_s (docs/design.md, "Deflection and the detector plane"); at y_s = 0 every position would be NaN.
 * Without an aperture the oven is a point, and the same holds. Distances are the smallest over the paths that
 * reach each element before any slit, relaxed in topological order (the routing has no cycle here).
 */
function checkFirstSlits(ctx: ReadCtx, oven: Oven, elements: readonly Element[]): void {
  const byId = new Map(elements.map((e) => [e.id, e]));
  // reverse post-order of the elements the oven reaches: a topological order
  const post: string[] = [];
  const state = new Map<string, 1 | 2>();
  if (!byId.has(oven.to)) return;
  const stack: { id: string; outs: string[]; next: number }[] = [{ id: oven.to, outs: outputsOf(byId.get(oven.to)!).map((o) => o.target), next: 0 }];
  state.set(oven.to, 1);
  while (stack.length) {
    const top = stack[stack.length - 1];
    if (top.next === top.outs.length) {
      state.set(top.id, 2);
      post.push(top.id);
      stack.pop();
      continue;
    }
    const t = top.outs[top.next++];
    if (!byId.has(t) || state.has(t)) continue;
    state.set(t, 1);
    stack.push({ id: t, outs: outputsOf(byId.get(t)!).map((o) => o.target), next: 0 });
  }
  const entry = new Map<string, number>([[oven.to, 0]]); // smallest distance to the element's upstream face, over slit-free paths
  for (let i = post.length - 1; i >= 0; i--) {
    const e = byId.get(post[i])!;
    const before = entry.get(e.id);
    if (before === undefined) continue;
    const y = before + e.gap;
    if (e.kind === 'slit') {
      if (y < FIRST_SLIT_MIN_DISTANCE) {
        const from = oven.aperture ? 'the oven aperture' : 'the oven (a point without oven.aperture)';
        problem(ctx, at(e.path, 'gap'), `this slit is the first after the oven and stands ${y === 0 ? '0 m' : `${Number(y.toPrecision(3))} m`} from ${from}: the collimation runs from the aperture to the first slit and needs at least 1 µm between them; give this slit or an element before it a gap`);
      }
      continue; // past the first slit the distance no longer matters
    }
    const exit = y + lengthOf(e);
    for (const o of outputsOf(e)) {
      const prev = entry.get(o.target);
      if (prev === undefined || exit < prev) entry.set(o.target, exit);
    }
  }
}

/** Freezes `o` and every object and array inside it (the normalized line holds plain data only). */
export function deepFreeze<T>(o: T): T {
  if (o !== null && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o as Record<string, unknown>)) deepFreeze(v);
  }
  return o;
}
