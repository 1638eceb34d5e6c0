/**
 * detector: a leaf that counts what arrives: rate = Φ·yield·efficiency + background, counts = rate·dwell.
 * Keys: efficiency (in [0, 1], default 1), background (a rate ≥ 0, at most 1e15 /s, default 0 /s), dwell (a time
 * > 0, at most 1e9 s, default 1 s), window {x, z, width, height} on the detector plane.
 */
import type { Detector } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { type Obj, type ReadCtx, at, quantity, rect } from '../read.ts';
import type { KindModule } from './kind.ts';
import { plausible } from '../plausible.ts';

export const detector: KindModule<Detector> = {
  kind: 'detector',
  keys: ['efficiency', 'background', 'dwell', 'window'],
  output: 'none',
  length: () => 0,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const efficiency = quantity(ctx, o, 'efficiency', 'dimensionless', path, { fallback: 1, unit: true, what: 'the efficiency' });
    const background = quantity(ctx, o, 'background', 'rate', path, { fallback: 0, nonNegative: true, range: LIMITS.background, what: 'the background' });
    const dwell = quantity(ctx, o, 'dwell', 'time', path, { fallback: 1, positive: true, range: LIMITS.dwell, what: 'the dwell' });
    plausible(ctx, at(path, 'efficiency'), 'efficiency', efficiency, 'the efficiency');
    plausible(ctx, at(path, 'dwell'), 'dwell', dwell, 'the dwell');
    const window = rect(ctx, o, 'window', path);
    if (efficiency === undefined || background === undefined || dwell === undefined) return undefined;
    const out: Omit<Detector, 'id' | 'kind' | 'gap' | 'path'> = { efficiency, background, dwell };
    if (window) out.window = window;
    return out;
  },
  defaults: () => ({ efficiency: 1, background: '0 /s', dwell: '10 s' }),
};
