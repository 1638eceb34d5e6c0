/**
 * Validation of a whole document against format v1 and the beam keys of docs/design.md, with the species
 * library passed in (validate.ts supplies src/species). Every problem is reported at once, each with its
 * JSON path: header, unknown keys (and keys that do not apply to the species), quantities and their
 * dimensions and bounds, ids, routing (dangling targets, unrouted ports, cycles), and the leaves.
 */
import { isHyperfine } from './labels.ts';
import { KINDS, KIND_NAMES, isKind, outputsOf } from './elements/registry.ts';
import { type MigrationRegistry, beamlineMigrations, migrateDoc } from './migrations.ts';
import { readOven } from './oven.ts';
import { type Obj, type ReadCtx, at, checkKeys, describe, isObj, problem, quantity, vec, warn } from './read.ts';
import { type SpeciesResolver, readSpecies } from './speciesDoc.ts';
import type { Beamline, BeamlineDoc, Element, ParseResult, Problem } from './types.ts';

export const FORMAT = 'spinyard.beamline';
export const TOP_KEYS = ['format', 'version', 'title', 'species', 'ambient', 'oven', 'elements'] as const;
export const RESERVED_IDS = ['stop', 'oven'] as const;

/** "path: message" (or the message alone for the whole file). */
export function formatProblem(p: Problem): string {
  return p.path ? `${p.path}: ${p.message}` : p.message;
}

const fail = (problems: Problem[]): ParseResult => ({ ok: false, problems });

/** Validate a parsed JSON value as a beamline and normalise it (SI numbers, defaults filled in). */
export function checkBeamline(json: unknown, resolver: SpeciesResolver, migrations: MigrationRegistry = beamlineMigrations): ParseResult {
  if (!isObj(json)) return fail([{ path: '', message: `a beamline is a JSON object, got ${describe(json)}` }]);
  if (json.format !== FORMAT) {
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
  const ctx: ReadCtx = { problems, warnings, species: sp?.species };
  const ambient = doc.ambient === undefined ? { x: 0, y: 0, z: 0 } : vec(ctx, doc, 'ambient', 'field', '');
  const oven = readOven(ctx, doc.oven);
  const elements = readElements(ctx, doc.elements);

  if (oven && elements) checkRouting(ctx, oven.to, elements);
  if (problems.length || !sp || !oven || !elements || !ambient) {
    return fail(problems.length ? problems : [{ path: '', message: 'the beamline could not be read' }]);
  }
  // the normalized line is frozen: the engine keeps what it derives from it by identity, so a line changed in
  // place would read stale results; a change makes a new line (edits, scans), and assigning into one throws
  const line: Beamline = deepFreeze({ title, species: sp.ref, oven, ambient, elements });
  return { ok: true, doc: doc as unknown as BeamlineDoc, line, warnings };
}

function readElements(ctx: ReadCtx, v: unknown): Element[] | undefined {
  if (v === undefined) return problem(ctx, 'elements', 'missing "elements": the list of magnets, rotators, detectors, …');
  if (!Array.isArray(v)) return problem(ctx, 'elements', `expected a list of elements, got ${describe(v)}`);
  const out: Element[] = [];
  const firstSeen = new Map<string, string>();
  let ok = true;
  v.forEach((raw, i) => {
    const path = at('elements', i);
    const n = ctx.problems.length;
    const el = readElement(ctx, raw, path);
    if (isObj(raw) && typeof raw.id === 'string' && raw.id !== '') {
      const prev = firstSeen.get(raw.id);
      if (prev) problem(ctx, at(path, 'id'), `duplicate id "${raw.id}": ${prev} has it already`);
      else firstSeen.set(raw.id, path);
    }
    if (!el || ctx.problems.length > n) ok = false;
    else out.push(el);
  });
  return ok ? out : undefined;
}

function readId(ctx: ReadCtx, o: Obj, path: string): string | undefined {
  const id = o.id;
  const p = at(path, 'id');
  if (id === undefined) return problem(ctx, p, 'missing "id"');
  if (typeof id !== 'string' || id.trim() === '') return problem(ctx, p, `an id is a non-empty string, got ${describe(id)}`);
  if ((RESERVED_IDS as readonly string[]).includes(id)) return problem(ctx, p, `"${id}" is reserved (${id === 'stop' ? 'the beam stop target' : 'the source'}): choose another id`);
  if (id.includes(':')) return problem(ctx, p, `an id must not contain ":" (results write ELEMENT:PORT), got "${id}"`);
  if (id !== id.trim()) return problem(ctx, p, `an id must not start or end with spaces, got "${id}"`);
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
  const why: Record<string, string> = {};
  if (ctx.species && !isHyperfine(ctx.species)) {
    for (const k of mod.hyperfineOnly) why[k] = `${k} applies to hyperfine species only (this line's species has no nuclear spin)`;
  }
  if (mod.output === 'none') {
    why.to = 'a detector is a leaf: it ends its path and routes nothing';
    why.ports = why.to;
  } else if (mod.output === 'to') why.ports = `a ${kind} has one output: route it with "to"`;
  else why.to = 'a magnet routes each port in "ports"';
  checkKeys(ctx, raw, path, allowed.filter((k) => !(k in why)), `a ${kind}`, why);
  const gap = quantity(ctx, raw, 'gap', 'length', path, { fallback: 0, nonNegative: true, what: 'the gap' });
  const body = mod.read(raw, path, ctx);
  if (id === undefined || gap === undefined || !body) return undefined;
  return { id, kind, gap, path, ...body } as Element;
}

/**
 * Routing: every target is an element id or "stop"; no cycle (a port routed back upstream); elements the
 * oven never reaches are reported as warnings. Leaves are detectors and "stop" by construction (every
 * other kind must route its outputs).
 */
function checkRouting(ctx: ReadCtx, ovenTo: string, elements: readonly Element[]): void {
  const byId = new Map(elements.map((e) => [e.id, e]));
  const where = (el: Element, port: string | null) => (port === null ? at(el.path, 'to') : at(at(el.path, 'ports'), port));
  const checkTarget = (t: string, p: string) => {
    if (t === 'stop' || byId.has(t)) return true;
    if (t === 'oven') problem(ctx, p, 'the oven is the source and cannot be a target');
    else problem(ctx, p, `target "${t}" is not an element id or "stop"; ids: ${[...byId.keys()].join(', ') || 'none'}`);
    return false;
  };
  checkTarget(ovenTo, 'oven.to');
  for (const el of elements) for (const o of outputsOf(el)) checkTarget(o.target, where(el, o.port));

  // cycles: depth-first search, three colours; each cycle is named once.
  const colour = new Map<string, 0 | 1 | 2>();
  const stack: string[] = [];
  const visit = (id: string) => {
    colour.set(id, 1);
    stack.push(id);
    const el = byId.get(id)!;
    for (const o of outputsOf(el)) {
      const t = o.target;
      if (!byId.has(t)) continue;
      const c = colour.get(t) ?? 0;
      if (c === 1) {
        const cyc = [...stack.slice(stack.indexOf(t)), t];
        problem(ctx, where(el, o.port), `cycle ${cyc.join(' → ')}: ${o.port === null ? 'the output' : `port ${o.port}`} of ${id} is routed back upstream`);
      } else if (c === 0) visit(t);
    }
    stack.pop();
    colour.set(id, 2);
  };
  const order = byId.has(ovenTo) ? [ovenTo, ...byId.keys()] : [...byId.keys()];
  for (const id of order) if ((colour.get(id) ?? 0) === 0) visit(id);

  // reachability from the oven
  const seen = new Set<string>();
  const walk = (id: string) => {
    if (seen.has(id) || !byId.has(id)) return;
    seen.add(id);
    for (const o of outputsOf(byId.get(id)!)) walk(o.target);
  };
  walk(ovenTo);
  for (const el of elements) if (!seen.has(el.id)) warn(ctx, el.path, `${el.id} is not reached from the oven`);
}

/** Freezes `o` and every object and array inside it (the normalized line holds plain data only). */
export function deepFreeze<T>(o: T): T {
  if (o !== null && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o as Record<string, unknown>)) deepFreeze(v);
  }
  return o;
}
