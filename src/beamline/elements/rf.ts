/**
 * rf: an RF flipper, an oscillating field (`amplitude`, `frequency`, along `axis`) in a `static` field vector over
 * `length`. `phase` (optional): the RF phase at an atom's entry, for a pulsed beam locked to the RF; without it
 * atoms enter at every phase, as in a continuous beam, and the engine averages over it.
 */
import type { RfFlipper } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { defineKind } from './keys.ts';

export const rf = defineKind<RfFlipper>({
  kind: 'rf',
  idPrefix: 'RF',
  table: [
    { key: 'static', shape: { type: 'vector', dim: 'field', range: LIMITS.field, plausible: 'the static field' }, label: 'static' },
    { key: 'amplitude', shape: { type: 'quantity', dim: 'field', nonNegative: true, range: LIMITS.fieldSize, what: 'the amplitude', plausible: 'field' }, label: 'amplitude' },
    { key: 'frequency', shape: { type: 'quantity', dim: 'frequency', nonNegative: true, range: LIMITS.frequency, what: 'the frequency' }, label: 'frequency' },
    { key: 'axis', shape: { type: 'axis' }, label: 'axis' },
    { key: 'length', shape: { type: 'quantity', dim: 'length', nonNegative: true, range: LIMITS.distance, what: 'the length' }, label: 'length' },
    // empty: a continuous beam, averaged over every RF phase; a value: a pulsed beam locked to the RF at that phase
    { key: 'phase', shape: { type: 'quantity', dim: 'angle' }, label: 'entry phase (locked beam)', optional: true, emptyText: 'every phase' },
    { key: 'to', shape: { type: 'target', what: 'an RF flipper' }, label: 'output' },
  ],
  length: (e) => e.length,
  // 1 mT static field: the free-electron Larmor frequency g μB B / h ≈ 28.0 MHz (CODATA 2018 μB/h, g ≈ 2.0023).
  defaults: () => ({ static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm' }),
});
