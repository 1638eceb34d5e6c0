/** The field region's step: free precession in a static field over its length (the species' Hamiltonian, from the m_F blocks). */
import type { FieldRegion } from '../../beamline/types.ts';
import type { State } from '../nodes.ts';
import { applyLinear } from '../propagate.ts';
import type { Step, WalkCtx } from './step.ts';

export const fieldStep: Step<FieldRegion> = {
  run(ctx: WalkCtx, e: FieldRegion, s: State): State {
    return applyLinear(ctx, s, null, e.length, e.field);
  },
};
