/** The element kinds of format v1 (docs/design.md "Keys by element kind"), one module each. */
import type { ElementKind } from '../types.ts';
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

export { outputsOf } from './kind.ts';
export type { KindModule } from './kind.ts';
