/** rotator: an ideal spin rotation U = exp(−i α n̂·F) by `angle` α about `axis` n̂ (velocity independent). */
import type { Rotator } from '../types.ts';
import { type Obj, type ReadCtx, axis, quantity, target } from '../read.ts';
import type { KindModule } from './kind.ts';

export const rotator: KindModule<Rotator> = {
  kind: 'rotator',
  keys: ['axis', 'angle'],
  output: 'to',
  length: () => 0,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const ax = axis(ctx, o, 'axis', path);
    const angle = quantity(ctx, o, 'angle', 'angle', path);
    const to = target(ctx, o, 'to', path, 'a rotator');
    return ax && angle !== undefined && to ? { axis: ax, angle, to } : undefined;
  },
  defaults: () => ({ axis: { roll: '90 deg' }, angle: '90 deg' }),
};
