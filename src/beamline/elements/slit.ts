/** slit: a rectangular opening `width` × `height`, centred on the beam axis unless offset by `x`/`z`. */
import type { Slit } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { type Obj, type ReadCtx, quantity, target } from '../read.ts';
import type { KindModule } from './kind.ts';

export const slit: KindModule<Slit> = {
  kind: 'slit',
  keys: ['width', 'height', 'x', 'z'],
  output: 'to',
  length: () => 0,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const width = quantity(ctx, o, 'width', 'length', path, { positive: true, range: LIMITS.size, what: 'the width' });
    const height = quantity(ctx, o, 'height', 'length', path, { positive: true, range: LIMITS.size, what: 'the height' });
    const x = quantity(ctx, o, 'x', 'length', path, { fallback: 0, range: LIMITS.offset, what: 'the offset x' });
    const z = quantity(ctx, o, 'z', 'length', path, { fallback: 0, range: LIMITS.offset, what: 'the offset z' });
    const to = target(ctx, o, 'to', path, 'a slit');
    return width !== undefined && height !== undefined && x !== undefined && z !== undefined && to
      ? { width, height, x, z, to }
      : undefined;
  },
  // a gap of its own: the first slit after the oven must stand clear of the aperture (check.ts, checkFirstSlits)
  defaults: () => ({ gap: '10 cm', width: '0.1 mm', height: '3 mm' }),
};
