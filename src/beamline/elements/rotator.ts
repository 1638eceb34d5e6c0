/** rotator: an ideal spin rotation U = exp(−i α n̂·F) by `angle` α about `axis` n̂ (velocity independent). */
import type { Rotator } from '../types.ts';
import { defineKind } from './keys.ts';

export const rotator = defineKind<Rotator>({
  kind: 'rotator',
  idPrefix: 'R',
  table: [
    { key: 'axis', shape: { type: 'axis' }, label: 'axis' },
    { key: 'angle', shape: { type: 'quantity', dim: 'angle' }, label: 'angle' },
    { key: 'to', shape: { type: 'target', what: 'a rotator' }, label: 'output' },
  ],
  length: () => 0,
  defaults: () => ({ axis: { roll: '90 deg' }, angle: '90 deg' }),
});
