/**
 * detector: a leaf that counts what arrives: rate = Φ·yield·efficiency + background, counts = rate·dwell.
 * Keys: efficiency (in [0, 1], default 1), background (a rate ≥ 0, at most 1e15 /s, default 0 /s), dwell (a time
 * > 0, at most 1e9 s, default 1 s), window {x, z, width, height} on the detector plane.
 */
import type { Detector } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { defineKind } from './keys.ts';

export const detector = defineKind<Detector>({
  kind: 'detector',
  idPrefix: 'D',
  table: [
    { key: 'efficiency', shape: { type: 'quantity', dim: 'dimensionless', fallback: 1, unit: true, what: 'the efficiency', plausible: 'efficiency' },
      label: 'efficiency', defaultText: '1', implied: 'fraction of arrivals counted', sheetDefault: true },
    { key: 'background', shape: { type: 'quantity', dim: 'rate', fallback: 0, nonNegative: true, range: LIMITS.background, what: 'the background' },
      label: 'background', defaultText: '0 /s', sheetDefault: true },
    { key: 'dwell', shape: { type: 'quantity', dim: 'time', fallback: 1, positive: true, range: LIMITS.dwell, what: 'the dwell', plausible: 'dwell' },
      label: 'dwell', defaultText: '1 s', sheetDefault: true },
    { key: 'window', shape: { type: 'rect' }, label: 'window', optional: true },
  ],
  length: () => 0,
  defaults: () => ({ efficiency: 1, background: '0 /s', dwell: '10 s' }),
});
