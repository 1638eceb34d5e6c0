/** field: a uniform field vector `field` over `length`; U(v) = exp(−i H(B) t/ħ), t = length/v. */
import type { FieldRegion } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { type Obj, type ReadCtx, at, quantity, target, vec } from '../read.ts';
import type { KindModule } from './kind.ts';
import { plausibleVector } from '../plausible.ts';

export const field: KindModule<FieldRegion> = {
  kind: 'field',
  keys: ['field', 'length'],
  output: 'to',
  length: (e) => e.length,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const f = vec(ctx, o, 'field', 'field', path, LIMITS.field);
    plausibleVector(ctx, at(path, 'field'), f, 'the field');
    const length = quantity(ctx, o, 'length', 'length', path, { nonNegative: true, range: LIMITS.distance, what: 'the length' });
    const to = target(ctx, o, 'to', path, 'a field region');
    return f && length !== undefined && to ? { field: f, length, to } : undefined;
  },
  defaults: () => ({ field: { x: '10 uT', y: '0 T', z: '0 T' }, length: '5 cm' }),
};
