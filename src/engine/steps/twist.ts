/**
 * The field twist's step (its physics: ../twist.ts). A twist that does not turn is a field region; otherwise a
 * state already evaluated speed by speed goes through the closed form per speed, and a spectral state starts
 * the speed-by-speed average of the whole subtree behind the twist.
 */
import { cmatCombine } from '../../physics/cmat.ts';
import { rotationOperator, vecCross, vecDot, vecNorm, vecUnit } from '../../physics/rotation.ts';
import type { Twist } from '../../beamline/types.ts';
import { type State, isNodes } from '../nodes.ts';
import { applyLinear } from '../propagate.ts';
import { applyTwist, runSampledSubtree, twistRotation } from '../twist.ts';
import type { Step, Walk, WalkCtx } from './step.ts';

export const twistStep: Step<Twist> = {
  run(ctx: WalkCtx, e: Twist, s: State, walk: Walk, _entrance: number, exit: number): State | undefined {
    const sys = ctx.sys;
    const n1 = e.start, n2 = e.end;
    const cross = vecCross(n1, n2);
    const angle = Math.atan2(vecNorm(cross), vecDot(n1, n2));
    const h1 = sys.hamiltonian({ x: e.field * n1.x, y: e.field * n1.y, z: e.field * n1.z });
    if (angle < 1e-12) {
      return applyLinear(ctx, s, h1, e.length, { x: e.field * n1.x, y: e.field * n1.y, z: e.field * n1.z });
    }
    const k = vecUnit(cross);
    const kGen = cmatCombine([[k.x, sys.F.jx], [k.y, sys.F.jy], [k.z, sys.F.jz]]);
    const rot = rotationOperator(sys.F, k, angle);
    const twist = { h1, kGen, angle, rot, length: e.length, rotation: twistRotation(sys.F, h1, n1, k, rot) };
    if (isNodes(s)) {
      return applyTwist(s, twist);
    }
    runSampledSubtree(ctx, e, s, twist, { ...walk, y: exit });
    return undefined;
  },
};
