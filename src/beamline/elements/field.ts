/** field: a uniform field vector `field` over `length`; U(v) = exp(−i H(B) t/ħ), t = length/v. */
import type { FieldRegion } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { defineKind } from './keys.ts';

export const field = defineKind<FieldRegion>({
  kind: 'field',
  idPrefix: 'F',
  table: [
    { key: 'field', shape: { type: 'vector', dim: 'field', range: LIMITS.field, plausible: 'the field' }, label: 'field' },
    { key: 'length', shape: { type: 'quantity', dim: 'length', nonNegative: true, range: LIMITS.distance, what: 'the length' }, label: 'length' },
    { key: 'to', shape: { type: 'target', what: 'a field region' }, label: 'output' },
  ],
  length: (e) => e.length,
  defaults: () => ({ field: { x: '10 uT', y: '0 T', z: '0 T' }, length: '5 cm' }),
});
