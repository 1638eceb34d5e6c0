/**
 * twist: a field of constant size `field` whose direction turns from `start` to `end` over `length`
 * (solved exactly in the rotating frame by the engine: adiabatic ↔ sudden).
 */
import type { Twist } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { defineKind } from './keys.ts';

export const twist = defineKind<Twist>({
  kind: 'twist',
  idPrefix: 'T',
  table: [
    { key: 'field', shape: { type: 'quantity', dim: 'field', nonNegative: true, range: LIMITS.fieldSize, what: 'the field size', plausible: 'field' }, label: 'field size' },
    { key: 'start', shape: { type: 'axis' }, label: 'start' },
    { key: 'end', shape: { type: 'axis' }, label: 'end' },
    { key: 'length', shape: { type: 'quantity', dim: 'length', nonNegative: true, range: LIMITS.distance, what: 'the length' }, label: 'length' },
    { key: 'to', shape: { type: 'target', what: 'a field twist' }, label: 'output' },
  ],
  length: (e) => e.length,
  defaults: () => ({ field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm' }),
});
