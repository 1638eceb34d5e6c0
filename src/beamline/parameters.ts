/**
 * The parameters of a line: every quantity the reader reads (docs/design.md, "Parameters"), addressed by the
 * element's id and the key's place in it ("M2.axis.roll", "F1.field.x", "oven.velocity.temperature",
 * "D1.efficiency"), with its dimension, the SI value the line has now and what the document writes. A line with
 * some parameters set to other values is read again by the reader itself (check.ts `rereadBeamline`), so every
 * bound, default and derived value (an axis from its roll) is the reader's: a scan, a budget or a fit can never
 * build a line the reader would refuse.
 */
import { checkBeamline, deepFreeze, rereadBeamline } from './check.ts';
import { lengthOf } from './elements/registry.ts';
import { readBeamlineText } from './text.ts';
import { parameterName, parametersNear } from './studies.ts';
import { type SpeciesResolver, readSpecies } from './speciesDoc.ts';
import { beamlineMigrations } from './migrations.ts';
import type { QuantityRead } from './read.ts';
import type { Beamline, BeamlineDoc, Element, Problem } from './types.ts';
import { CacheFamily } from '../physics/cache.ts';
import { ATOMIC_MASS_UNIT_KG, type Dimension } from './units.ts';
import type { LabelSpecies } from './labels.ts';
import { quote } from './messages.ts';

/** One parameter of a line. */
export interface ParameterSlot {
  /** How a user names it: the element's id and the key ("M2.axis.roll"); "oven…" and "ambient…" for those. */
  readonly name: string;
  /** Its JSON path in the document ("elements[2].axis.roll"), also accepted as its name. */
  readonly path: string;
  readonly dimension: Dimension;
  /** The value the line has now, in SI units (m, rad, T, T/m, 1/s, s, K, m/s, Hz, kg). */
  readonly value: number;
  /** What the document writes; absent where the key is optional and its default applies. */
  readonly written?: unknown;
  /** The unit this parameter is shown and given in (a scan's axis, a CSV header): see DISPLAY_UNITS. */
  readonly unit: string;
}

/** The unit each dimension is shown in, and its SI factor (value in SI = shown × factor). */
export const DISPLAY_UNITS: Readonly<Record<Dimension, { unit: string; factor: number }>> = {
  length: { unit: 'mm', factor: 1e-3 },
  angle: { unit: 'deg', factor: Math.PI / 180 },
  field: { unit: 'T', factor: 1 },
  gradient: { unit: 'T/m', factor: 1 },
  rate: { unit: '/s', factor: 1 },
  time: { unit: 's', factor: 1 },
  temperature: { unit: 'K', factor: 1 },
  speed: { unit: 'm/s', factor: 1 },
  frequency: { unit: 'Hz', factor: 1 },
  mass: { unit: 'u', factor: ATOMIC_MASS_UNIT_KG },
  dimensionless: { unit: '', factor: 1 },
};

/** A line read once, with its parameters, ready to be read again with other values. */
export interface ParameterizedLine {
  readonly doc: BeamlineDoc;
  readonly line: Beamline;
  readonly warnings: readonly Problem[];
  /** The parameters in document order. */
  readonly slots: readonly ParameterSlot[];
  /** A parameter by its name or its JSON path. */
  readonly byName: ReadonlyMap<string, ParameterSlot>;
  readonly species: LabelSpecies | undefined;
}

export type ParameterizeResult = { ok: true; value: ParameterizedLine } | { ok: false; problems: Problem[] };

/** Read a document (its text, or parsed JSON) and list its parameters. */
export function parameterize(input: string | object, resolver: SpeciesResolver): ParameterizeResult {
  const quantities: QuantityRead[] = [];
  const r = typeof input === 'string' ? readBeamlineText(input, resolver, { quantities }) : checkBeamline(input, resolver, beamlineMigrations, quantities);
  if (!r.ok) return { ok: false, problems: r.problems };
  const ids = r.line.elements.map((e) => e.id);
  const slots: ParameterSlot[] = [];
  const byName = new Map<string, ParameterSlot>();
  for (const q of quantities) {
    const slot: ParameterSlot = {
      name: parameterName(q.path, ids), path: q.path, dimension: q.dimension, value: q.value,
      unit: DISPLAY_UNITS[q.dimension].unit, ...(q.written === undefined ? {} : { written: q.written }),
    };
    if (byName.has(slot.path)) continue;
    slots.push(slot);
    byName.set(slot.name, slot);
    byName.set(slot.path, slot);
  }
  const sp = readSpecies({ problems: [], warnings: [] }, r.doc.species, resolver);
  return { ok: true, value: { doc: r.doc, line: r.line, warnings: r.warnings, slots, byName, species: sp?.species } };
}

/** Ten names near `name` for a message ("did you mean"), or the first parameters when none is near. */
export function parameterHint(p: ParameterizedLine, name: string): string {
  const { head, near } = parametersNear(p.slots.map((s) => s.name), name);
  const list = (near.length ? near : p.slots.map((s) => s.name)).slice(0, 12);
  return list.length ? `parameters${near.length ? ` of ${head}` : ''}: ${list.join(', ')}${list.length < (near.length || p.slots.length) ? ', …' : ''}` : 'the line has no parameters';
}

/**
 * The line with the named parameters at the given SI values (names or JSON paths); every other part is `p.line`'s
 * own object. A value the reader refuses (out of its bounds, or a first slit moved onto the oven) is a problem at
 * the parameter's path.
 */
export function lineWithValues(p: ParameterizedLine, values: ReadonlyMap<string, number> | Readonly<Record<string, number>>):
  { ok: true; line: Beamline; warnings: Problem[] } | { ok: false; problems: Problem[] } {
  const r = valuesByPath(p, values);
  if (!r.ok) return r;
  if (!r.byPath.size) return { ok: true, line: p.line, warnings: [] };
  return rereadBeamline(p.doc, p.line, p.species, withKnown(p, r.byPath));
}

/**
 * The values to read a line's parts again with: `values`, and beside them every other quantity the document writes
 * in the parts they lie in, at the value it was read as (its slot's). The reader takes a given value instead of parsing the text
 * again (read.ts quantity; the text passed its bounds when the line was first read), so a part is read again without
 * parsing its units: the same numbers, a fraction of the time.
 */
function withKnown(p: ParameterizedLine, values: ReadonlyMap<string, number>): Map<string, number> {
  let byPart = slotsByPart.get(p);
  if (!byPart) {
    byPart = new Map();
    for (const s of p.slots) {
      // only what the document writes: a default may follow from other keys (which may be the ones given)
      if (s.written === undefined) continue;
      const part = partOf(s.path);
      let list = byPart.get(part);
      if (!list) byPart.set(part, (list = []));
      list.push(s);
    }
    slotsByPart.set(p, byPart);
  }
  const out = new Map(values);
  const parts = new Set<string>();
  for (const path of values.keys()) parts.add(partOf(path));
  for (const part of parts) for (const s of byPart.get(part) ?? []) if (!out.has(s.path)) out.set(s.path, s.value);
  return out;
}
const slotsByPart = new WeakMap<ParameterizedLine, Map<string, ParameterSlot[]>>();

/** The values by their parameters' JSON paths, or a problem for each name that is no parameter or value that is not finite. */
function valuesByPath(p: ParameterizedLine, values: ReadonlyMap<string, number> | Readonly<Record<string, number>>):
  { ok: true; byPath: Map<string, number> } | { ok: false; problems: Problem[] } {
  const entries = values instanceof Map ? [...values.entries()] : Object.entries(values);
  const byPath = new Map<string, number>();
  const problems: Problem[] = [];
  for (const [name, v] of entries) {
    const slot = p.byName.get(name);
    if (!slot) problems.push({ path: name, message: `no parameter ${quote(name)} in this line (${parameterHint(p, name)})` });
    else if (!Number.isFinite(v)) problems.push({ path: slot.path, message: `${slot.name} must be a finite number, got ${v}` });
    else byPath.set(slot.path, v);
  }
  return problems.length ? { ok: false, problems } : { ok: true, byPath };
}

/** A line read with some values (`lineWithValuesFrom`): the line and the values by JSON path. */
export interface LineWithValues {
  readonly line: Beamline;
  readonly byPath: ReadonlyMap<string, number>;
}

/** The part of the line a parameter's JSON path lies in, as check.ts rereadBeamline groups them: an element's index, "oven" or "ambient". */
function partOf(path: string): string {
  const m = /^elements\[(\d+)\]/.exec(path);
  return m ? m[1] : path.startsWith('oven') ? 'oven' : path.startsWith('ambient') ? 'ambient' : path;
}

/**
 * `lineWithValues` read from an earlier result `from` of the same line: only the parts (elements, the oven, the
 * ambient field) holding a value that differs from `from`'s are read again, every other part is `from.line`'s own
 * object. The line equals the one `lineWithValues` reads, part for part; where nothing differs it is `from.line`
 * itself. A scan's next point reads only what its step changed, and the engine recognises the parts it kept
 * (engine/replay.ts).
 */
export function lineWithValuesFrom(p: ParameterizedLine, from: LineWithValues | undefined, values: ReadonlyMap<string, number> | Readonly<Record<string, number>>,
  kept?: Map<string, Element>): { ok: true; value: LineWithValues } | { ok: false; problems: Problem[] } {
  const r = valuesByPath(p, values);
  if (!r.ok) return r;
  const byPath = r.byPath;
  // a value `from` had and this reading has not returns its part to the document's value: read from the line as written
  let base = from;
  if (base) for (const path of base.byPath.keys()) if (!byPath.has(path)) base = undefined;
  if (!base) {
    if (!byPath.size) return { ok: true, value: { line: p.line, byPath } };
    const full = rereadBeamline(p.doc, p.line, p.species, withKnown(p, byPath));
    if (!full.ok) return full;
    const keys = kept ? partKeys(new Set([...byPath.keys()].map(partOf)), byPath) : undefined;
    if (keys) for (const [i, key] of keys) keptParts.put(kept!, key, full.line.elements[i]);
    return { ok: true, value: { line: full.line, byPath } };
  }
  const changed = new Set<string>();
  for (const [path, v] of byPath) if (!Object.is(base.byPath.get(path), v)) changed.add(partOf(path));
  if (!changed.size) return { ok: true, value: { line: base.line, byPath } };
  const subset = new Map<string, number>();
  for (const [path, v] of byPath) if (changed.has(partOf(path))) subset.set(path, v);
  // elements read before with the same values are taken as they were read (the same objects: what the engine
  // derived from them, a magnet's sorting, serves again); the others are read again, and the line checked as a whole
  const keys = kept ? partKeys(changed, subset) : undefined;
  if (!keys) {
    const part = rereadBeamline(p.doc, base.line, p.species, withKnown(p, subset));
    return part.ok ? { ok: true, value: { line: part.line, byPath } } : part;
  }
  const elements = base.line.elements.slice();
  const missed = new Set<string>();
  let samePlanes = true;
  for (const [i, key] of keys) {
    const el = kept!.get(key);
    if (!el) {
      keptParts.misses++;
      missed.add(String(i));
      continue;
    }
    keptParts.hits++;
    const was = elements[i];
    if (el.gap !== was.gap || lengthOf(el) !== lengthOf(was)) samePlanes = false;
    elements[i] = el;
  }
  // the line's own check (check.ts checkFirstSlits) reads the gaps and lengths only: where the kept elements have
  // those of the line they replace, which passed it, the line passes too
  if (!missed.size && samePlanes) return { ok: true, value: { line: deepFreeze({ ...base.line, elements }), byPath } };
  const rest = new Map<string, number>();
  for (const [path, v] of subset) if (missed.has(partOf(path))) rest.set(path, v);
  const read = rereadBeamline(p.doc, { ...base.line, elements }, p.species, withKnown(p, rest));
  if (!read.ok) return read;
  for (const [i, key] of keys) if (missed.has(String(i))) keptParts.put(kept!, key, read.line.elements[i]);
  return { ok: true, value: { line: read.line, byPath } };
}

/** The elements read with the same values, kept by each session (src/physics/cache.ts: bounded). */
const keptParts = new CacheFamily('elements read with values', 256);

/** For each changed part that is an element, its index and a key of its values; undefined where the oven or the ambient field changed. */
function partKeys(changed: ReadonlySet<string>, subset: ReadonlyMap<string, number>): [number, string][] | undefined {
  const out: [number, string][] = [];
  for (const part of changed) {
    if (!/^\d+$/.test(part)) return undefined;
    let key = part;
    for (const [path, v] of subset) if (partOf(path) === part) key += `\u0000${path}\u0000${Object.is(v, -0) ? '-0' : v}`;
    out.push([Number(part), key]);
  }
  return out;
}
