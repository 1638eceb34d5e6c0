/**
 * twist: a field of constant size `field` whose direction turns from `start` to `end` over `length`
 * (solved exactly in the rotating frame by the engine: adiabatic ↔ sudden).
 */
import type { Twist } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { type Obj, type ReadCtx, at, axis, quantity, target } from '../read.ts';
import type { KindModule } from './kind.ts';
import { plausible } from '../plausible.ts';

export const twist: KindModule<Twist> = {
  kind: 'twist',
  keys: ['field', 'start', 'end', 'length'],
  output: 'to',
  length: (e) => e.length,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const f = quantity(ctx, o, 'field', 'field', path, { nonNegative: true, range: LIMITS.fieldSize, what: 'the field size' });
    plausible(ctx, at(path, 'field'), 'field', f, 'the field size');
    const start = axis(ctx, o, 'start', path);
    const end = axis(ctx, o, 'end', path);
    const length = quantity(ctx, o, 'length', 'length', path, { nonNegative: true, range: LIMITS.distance, what: 'the length' });
    const to = target(ctx, o, 'to', path, 'a field twist');
    return f !== undefined && start && end && length !== undefined && to ? { field: f, start, end, length, to } : undefined;
  },
  defaults: () => ({ field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm' }),
};
