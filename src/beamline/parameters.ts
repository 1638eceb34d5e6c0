/**
 * The parameters of a line: every quantity the reader reads (docs/design.md, "Parameters"), addressed by the
 * element's id and the key's place in it ("M2.axis.roll", "F1.field.x", "oven.velocity.temperature",
 * "D1.efficiency"), with its dimension, the SI value the line has now and what the document writes. A line with
 * some parameters set to other values is read again by the reader itself (check.ts `rereadBeamline`), so every
 * bound, default and derived value (an axis from its roll) is the reader's: a scan, a budget or a fit can never
 * build a line the reader would refuse.
 */
import { checkBeamline, rereadBeamline } from './check.ts';
import { readBeamlineText } from './text.ts';
import { parameterName, parametersNear } from './studies.ts';
import { type SpeciesResolver, readSpecies } from './speciesDoc.ts';
import { beamlineMigrations } from './migrations.ts';
import type { QuantityRead } from './read.ts';
import type { Beamline, BeamlineDoc, Problem } from './types.ts';
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
  const entries = values instanceof Map ? [...values.entries()] : Object.entries(values);
  if (!entries.length) return { ok: true, line: p.line, warnings: [] };
  const byPath = new Map<string, number>();
  const problems: Problem[] = [];
  for (const [name, v] of entries) {
    const slot = p.byName.get(name);
    if (!slot) problems.push({ path: name, message: `no parameter ${quote(name)} in this line (${parameterHint(p, name)})` });
    else if (!Number.isFinite(v)) problems.push({ path: slot.path, message: `${slot.name} must be a finite number, got ${v}` });
    else byPath.set(slot.path, v);
  }
  if (problems.length) return { ok: false, problems };
  return rereadBeamline(p.doc, p.line, p.species, byPath);
}
