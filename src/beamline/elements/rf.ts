/**
 * rf: an RF flipper, an oscillating field (`amplitude`, `frequency`, along `axis`) in a `static` field vector over
 * `length`. `phase` (optional): the RF phase at an atom's entry, for a pulsed beam locked to the RF; without it
 * atoms enter at every phase, as in a continuous beam, and the engine averages over it.
 */
import type { RfFlipper } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { type Obj, type ReadCtx, at, axis, quantity, target, vec } from '../read.ts';
import type { KindModule } from './kind.ts';
import { plausible, plausibleVector } from '../plausible.ts';

export const rf: KindModule<RfFlipper> = {
  kind: 'rf',
  keys: ['static', 'amplitude', 'frequency', 'axis', 'length', 'phase'],
  output: 'to',
  length: (e) => e.length,
  hyperfineOnly: [],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const st = vec(ctx, o, 'static', 'field', path, LIMITS.field);
    const amplitude = quantity(ctx, o, 'amplitude', 'field', path, { nonNegative: true, range: LIMITS.fieldSize, what: 'the amplitude' });
    plausibleVector(ctx, at(path, 'static'), st, 'the static field');
    plausible(ctx, at(path, 'amplitude'), 'field', amplitude, 'the amplitude');
    const frequency = quantity(ctx, o, 'frequency', 'frequency', path, { nonNegative: true, range: LIMITS.frequency, what: 'the frequency' });
    const ax = axis(ctx, o, 'axis', path);
    const length = quantity(ctx, o, 'length', 'length', path, { nonNegative: true, range: LIMITS.distance, what: 'the length' });
    const phase = quantity(ctx, o, 'phase', 'angle', path, { required: false });
    const to = target(ctx, o, 'to', path, 'an RF flipper');
    const phaseOk = o.phase === undefined || phase !== undefined;
    return st && amplitude !== undefined && frequency !== undefined && ax && length !== undefined && phaseOk && to
      ? { static: st, amplitude, frequency, axis: ax, length, ...(phase === undefined ? {} : { phase }), to }
      : undefined;
  },
  // 1 mT static field: the free-electron Larmor frequency g μB B / h ≈ 28.0 MHz (CODATA 2018 μB/h, g ≈ 2.0023).
  defaults: () => ({ static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm' }),
};
