/** The rotator's step: the rotation exp(−iθ n̂·F) as a Kraus operator, the same at every speed. */
import { rotationOperator } from '../../physics/rotation.ts';
import type { Rotator } from '../../beamline/types.ts';
import type { State } from '../nodes.ts';
import { applyKraus } from '../propagate.ts';
import type { Step, WalkCtx } from './step.ts';

export const rotatorStep: Step<Rotator> = {
  run(ctx: WalkCtx, e: Rotator, s: State): State {
    return applyKraus(s, rotationOperator(ctx.sys.F, e.axis, e.angle));
  },
};
