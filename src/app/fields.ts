// What the inspector shows for each element kind: quantity fields (relative JSON path, label,
// dimension), choices, and which keys are optional. The document layer validates; this only lists.

import type { Dimension, ElementKind } from './core-adapter.ts';

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
}

export type FieldSpec = QuantityField | ChoiceField | BoolField;

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

const vec = (key: string, label: string, dim: Dimension) =>
  (['x', 'y', 'z'] as const).map((c) => q(`${key}.${c}`, `${label} ${c}`, dim));

const rect = (key: string, label: string, offsets: boolean) => [
  q(`${key}.width`, `${label} width`, 'length', true),
  q(`${key}.height`, `${label} height`, 'length', true),
  ...(offsets ? [q(`${key}.x`, `${label} x`, 'length', true, '0 mm'), q(`${key}.z`, `${label} z`, 'length', true, '0 mm')] : []),
];

type FieldsOf = (el: Record<string, unknown>, hyperfine: boolean) => FieldSpec[];

/** The inspector's fields of each element kind, one entry per kind (a kind without one fails the type check). */
export const ELEMENT_FIELDS: { readonly [K in ElementKind]: FieldsOf } = {
  magnet: (el, hyperfine) => [
    gap,
    ...axisFields('axis', 'axis', el.axis),
    q('field', 'field at the beam', 'field', true),
    q('gradient', 'gradient', 'gradient', true),
    q('length', 'length', 'length', true),
    ...rect('aperture', 'pole gap', false),
    ...(hyperfine
      ? [
          { type: 'choice', key: 'group', label: 'ports group', options: ['', 'mJ', 'each'], optional: true } as ChoiceField,
          { type: 'choice', key: 'entry', label: 'entry', options: ['', 'adiabatic', 'sudden'], optional: true } as ChoiceField,
        ]
      : []),
  ],
  rotator: (el) => [gap, ...axisFields('axis', 'axis', el.axis), q('angle', 'angle', 'angle')],
  field: () => [gap, ...vec('field', 'field', 'field'), q('length', 'length', 'length')],
  twist: (el) => [gap, q('field', 'field size', 'field'), ...axisFields('start', 'start', el.start), ...axisFields('end', 'end', el.end), q('length', 'length', 'length')],
  rf: (el) => [
    gap, ...vec('static', 'static', 'field'), q('amplitude', 'amplitude', 'field'), q('frequency', 'frequency', 'frequency'),
    ...axisFields('axis', 'axis', el.axis), q('length', 'length', 'length'),
    // empty: a continuous beam, averaged over every RF phase; a value: a pulsed beam locked to the RF at that phase
    q('phase', 'entry phase (locked beam)', 'angle', true, 'every phase'),
  ],
  recombiner: (el, hyperfine) => [gap, ...axisFields('axis', 'axis', el.axis), { type: 'bool', key: 'coherent', label: 'coherent' },
    ...(hyperfine ? [q('field', 'field', 'field', true)] : [])],
  slit: () => [gap, q('width', 'width', 'length'), q('height', 'height', 'length'), q('x', 'offset x', 'length', true, '0 mm'), q('z', 'offset z', 'length', true, '0 mm')],
  detector: () => [
    gap,
    q('efficiency', 'efficiency', 'dimensionless', true, '1'),
    q('background', 'background', 'rate', true, '0 /s'),
    q('dwell', 'dwell', 'time', true, '1 s'),
    ...rect('window', 'window', true),
  ],
};

/** The fields of an element as written in the document (`el` is the raw element object); an unknown kind shows its gap. */
export function elementFields(el: Record<string, unknown>, hyperfine: boolean): FieldSpec[] {
  const kind = el.kind;
  return typeof kind === 'string' && Object.hasOwn(ELEMENT_FIELDS, kind) ? ELEMENT_FIELDS[kind as ElementKind](el, hyperfine) : [gap];
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
