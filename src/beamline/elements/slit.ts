/** slit: a rectangular opening `width` × `height`, centred on the beam axis unless offset by `x`/`z`. */
import type { Slit } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { defineKind } from './keys.ts';

export const slit = defineKind<Slit>({
  kind: 'slit',
  idPrefix: 'S',
  table: [
    { key: 'width', shape: { type: 'quantity', dim: 'length', positive: true, range: LIMITS.size, what: 'the width' }, label: 'width' },
    { key: 'height', shape: { type: 'quantity', dim: 'length', positive: true, range: LIMITS.size, what: 'the height' }, label: 'height' },
    { key: 'x', shape: { type: 'quantity', dim: 'length', fallback: 0, range: LIMITS.offset, what: 'the offset x' }, label: 'offset x', defaultText: '0 mm' },
    { key: 'z', shape: { type: 'quantity', dim: 'length', fallback: 0, range: LIMITS.offset, what: 'the offset z' }, label: 'offset z', defaultText: '0 mm' },
    { key: 'to', shape: { type: 'target', what: 'a slit' }, label: 'output' },
  ],
  length: () => 0,
  // a gap of its own: the first slit after the oven must stand clear of the aperture (check.ts, checkFirstSlits)
  defaults: () => ({ gap: '10 cm', width: '0.1 mm', height: '3 mm' }),
});
