// What the inspector shows for each element kind: quantity fields (relative JSON path, label,
// dimension), choices, switches, and lists and maps of port labels, and which keys are optional. An element's
// fields come from its kind's key table (src/beamline/elements): one field per key, or one per component of an
// axis, a vector or a rectangle. The document layer validates; this only lists.

import { KINDS, checkQuantity, type Dimension, type ElementKind } from './core-adapter.ts';
import { isOptional } from '../beamline/elements/keys.ts';
import type { KeySpec } from '../beamline/elements/kind.ts';

export interface QuantityField {
  type: 'quantity';
  /** Path relative to the element ("axis.roll"), or to the document for the oven ("oven.flux"). */
  key: string;
  label: string;
  dim: Dimension;
  /** An empty entry removes the key (the document's default applies). */
  optional?: boolean;
  placeholder?: string;
}

export interface ChoiceField {
  type: 'choice';
  key: string;
  label: string;
  options: readonly string[];
  /** An option "" means: key absent (the default). */
  optional?: boolean;
}

export interface BoolField {
  type: 'bool';
  key: string;
  label: string;
  /** The value the document's reader takes where the key is left out. */
  fallback?: boolean;
}

/** A list of port labels (a recombiner's open ports): the line's port labels, each on or off. */
export interface LabelsField {
  type: 'labels';
  key: string;
  label: string;
  /** The key of the map over these labels (a label with a value there cannot be taken out before it is cleared). */
  mappedBy?: string;
}

/** A map port label → angle over the labels listed at `of` (a recombiner's phases): one angle per listed label. */
export interface AnglesField {
  type: 'angles';
  key: string;
  label: string;
  of: string;
  /** What a label left out of the map has ("0 deg"). */
  placeholder?: string;
}

/** How an axis is written: a roll about the beam, or θ and φ; switching rewrites it as the same direction where it can. */
export interface AxisFormField {
  type: 'axisForm';
  key: string;
  label: string;
}

export type FieldSpec = QuantityField | ChoiceField | BoolField | LabelsField | AnglesField | AxisFormField;

const q = (key: string, label: string, dim: Dimension, optional = false, placeholder?: string): QuantityField => ({
  type: 'quantity', key, label, dim, optional, placeholder,
});

const gap = q('gap', 'gap before', 'length', true, '0 m');

/** An axis is written {roll} or {theta, phi}; the fields follow what the document holds. */
export function axisFields(key: string, label: string, axis: unknown): QuantityField[] {
  if (axis && typeof axis === 'object' && 'theta' in axis) {
    return [q(`${key}.theta`, `${label} θ`, 'angle'), q(`${key}.phi`, `${label} φ`, 'angle')];
  }
  return [q(`${key}.roll`, `${label} roll`, 'angle')];
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/** How an axis is written: "angles" ({theta, phi}) or "roll" ({roll}, and anything else). */
export function axisForm(axis: unknown): 'roll' | 'angles' {
  return isRecord(axis) && 'theta' in axis ? 'angles' : 'roll';
}

/** −a as people write it: "90 deg" → "-90 deg", "-1 rad" → "1 rad", 0 as it is, any other text as "-(text)". */
export function negated(a: string): string {
  const m = /^\s*([-+]?)\s*((?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?(?:\s*[a-z]+)?)\s*$/i.exec(a);
  if (!m) return `-(${a.trim()})`;
  if (Number.parseFloat(m[2]) === 0) return a.trim();
  return m[1] === '-' ? m[2] : `-${m[2]}`;
}

/**
 * The axis as written (`axis`) rewritten in `form`, the same direction: a roll α is the axis (sin α, 0, cos α)
 * (src/beamline/read.ts), which is θ = α, φ = 0 exactly; θ and φ become a roll only where φ is 0 (roll θ) or 180°
 * (roll −θ), the axes in the x–z plane; undefined otherwise (or where φ does not read as an angle). An axis already
 * in `form` comes back as it is.
 */
export function axisAs(axis: unknown, form: 'roll' | 'angles'): unknown {
  const w = isRecord(axis) ? axis : {};
  if (axisForm(axis) === form) return axis;
  if (form === 'angles') return { theta: w.roll ?? '0 deg', phi: '0 deg' };
  const phi = checkQuantity(w.phi, 'angle', 'phi');
  if (!phi.ok || Math.abs(Math.sin(phi.si)) > 1e-12) return undefined;
  const theta = w.theta ?? '0 deg';
  return { roll: Math.cos(phi.si) > 0 ? theta : negated(String(theta)) };
}

const vec = (key: string, label: string, dim: Dimension) =>
  (['x', 'y', 'z'] as const).map((c) => q(`${key}.${c}`, `${label} ${c}`, dim));

// a rectangle is optional as a whole: each entry can be emptied; its offsets default to 0 (read.ts, rect)
const rect = (key: string, label: string) => [
  q(`${key}.width`, `${label} width`, 'length', true),
  q(`${key}.height`, `${label} height`, 'length', true),
  q(`${key}.x`, `${label} x`, 'length', true, '0 mm'),
  q(`${key}.z`, `${label} z`, 'length', true, '0 mm'),
];

/** The fields of one key of a kind's table, as `el` (the raw element) writes it; none for the output (the routing section). */
export function keyFields(s: KeySpec, el: Record<string, unknown>, table: readonly KeySpec[] = []): FieldSpec[] {
  const sh = s.shape;
  const optional = isOptional(s);
  switch (sh.type) {
    case 'quantity': return [q(s.key, s.label, sh.dim, optional, s.defaultText ?? s.emptyText)];
    case 'axis': return [{ type: 'axisForm', key: s.key, label: s.label }, ...axisFields(s.key, s.label, el[s.key])];
    case 'vector': return vec(s.key, s.label, sh.dim);
    case 'rect': return rect(s.key, s.label);
    case 'bool': return [{ type: 'bool', key: s.key, label: s.label, ...(sh.fallback === undefined ? {} : { fallback: sh.fallback }) }];
    case 'choice': return [{ type: 'choice', key: s.key, label: s.label, options: optional ? ['', ...sh.options] : sh.options, optional }];
    case 'labels': {
      const map = table.find((x) => x.shape.type === 'angles' && x.shape.of === s.key);
      return [{ type: 'labels', key: s.key, label: s.label, ...(map ? { mappedBy: map.key } : {}) }];
    }
    case 'angles': return [{ type: 'angles', key: s.key, label: s.label, of: sh.of, ...(s.defaultText ? { placeholder: s.defaultText } : {}) }];
    case 'ports':
    case 'target':
      return [];
  }
}

/** The fields of a kind's key table for the raw element `el`: the gap first, then each key in the table's order (hyperfine-only keys for a hyperfine species only). */
export function tableFields(table: readonly KeySpec[], el: Record<string, unknown>, hyperfine: boolean): FieldSpec[] {
  return [gap, ...table.filter((s) => hyperfine || !s.hyperfineOnly).flatMap((s) => keyFields(s, el, table))];
}

type FieldsOf = (el: Record<string, unknown>, hyperfine: boolean) => FieldSpec[];

/** The inspector's fields of each element kind, from its key table: one entry per kind (a kind without one fails the type check). */
export const ELEMENT_FIELDS: { readonly [K in ElementKind]: FieldsOf } = Object.fromEntries(
  (Object.keys(KINDS) as ElementKind[]).map((k) => [k, (el: Record<string, unknown>, hyperfine: boolean) => tableFields(KINDS[k].table, el, hyperfine)]),
) as { readonly [K in ElementKind]: FieldsOf };

/** The fields of an element as written in the document (`el` is the raw element object), from its kind's key table; an unknown kind shows its gap. */
export function elementFields(el: Record<string, unknown>, hyperfine: boolean): FieldSpec[] {
  const kind = el.kind;
  return typeof kind === 'string' && Object.hasOwn(KINDS, kind) ? tableFields(KINDS[kind as ElementKind].table, el, hyperfine) : [gap];
}

export const VELOCITY_KINDS = ['fixed', 'effusive', 'supersonic', 'table'] as const;
export type VelocityKind = (typeof VELOCITY_KINDS)[number];

/** The fields of the oven's velocity distribution of a kind. */
export function velocityFields(kind: string): QuantityField[] {
  switch (kind) {
    case 'fixed': return [q('oven.velocity.speed', 'speed', 'speed')];
    case 'effusive': return [q('oven.velocity.temperature', 'oven temperature', 'temperature')];
    case 'supersonic': return [q('oven.velocity.speed', 'stream speed u', 'speed'), q('oven.velocity.ratio', 'speed ratio S', 'dimensionless')];
    default: return [];
  }
}

/** A sensible velocity distribution of each kind to switch to (a demo set-point; the user edits it). */
export function defaultVelocity(kind: VelocityKind, current: Record<string, unknown>): Record<string, unknown> {
  const speed = typeof current.speed === 'string' ? current.speed : '600 m/s';
  switch (kind) {
    case 'fixed': return { kind, speed };
    case 'effusive': return { kind, temperature: typeof current.temperature === 'string' ? current.temperature : '1200 K' };
    case 'supersonic': return { kind, speed, ratio: 10 };
    case 'table': return { kind, points: [['500 m/s', 0.25], ['600 m/s', 0.5], ['700 m/s', 0.25]] };
  }
}

/** Element kinds that can be added on a port, with their starting values (a demo set-point). */
export const NEW_ELEMENT_KINDS = ['magnet', 'detector', 'slit', 'rotator', 'field', 'twist', 'rf', 'recombiner'] as const;
