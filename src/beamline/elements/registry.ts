/** The element kinds of format v1 (docs/design.md "Keys by element kind"), one module each. */
import type { Element, ElementKind } from '../types.ts';
import { detector } from './detector.ts';
import { field } from './field.ts';
import type { KindModule } from './kind.ts';
import { magnet } from './magnet.ts';
import { recombiner } from './recombiner.ts';
import { rf } from './rf.ts';
import { rotator } from './rotator.ts';
import { slit } from './slit.ts';
import { twist } from './twist.ts';

export const KINDS: Readonly<Record<ElementKind, KindModule<any>>> = {
  magnet, rotator, field, twist, rf, recombiner, slit, detector,
};

export const KIND_NAMES = Object.keys(KINDS) as ElementKind[];

export function isKind(k: unknown): k is ElementKind {
  return typeof k === 'string' && Object.prototype.hasOwnProperty.call(KINDS, k);
}

/** What the routing rule reads of an element: a normalized one or its document form alike. */
export interface Routed {
  readonly kind: ElementKind;
  readonly ports?: Readonly<Record<string, string>>;
  readonly to?: string;
}

/**
 * The routing rule, the one place it is written: one entry per "to" or port key ("*" included) as the kind's
 * module declares its output (a magnet's ports in the order written, one "to", or none for a leaf).
 */
export function outputsOf(el: Routed): { port: string | null; target: string }[] {
  const out = KINDS[el.kind].output;
  if (out === 'none') return [];
  if (out === 'ports') return Object.entries(el.ports ?? {}).map(([port, target]) => ({ port, target }));
  return [{ port: null, target: el.to as string }];
}

/** The length (m) a normalized element occupies along the beam (its kind module's `length`). */
export function lengthOf(e: Element): number {
  return (KINDS[e.kind] as KindModule<Element>).length(e);
}
export type { KindModule } from './kind.ts';
