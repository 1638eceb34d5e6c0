/**
 * The slit's step: no spin operation. The first slit of a path sets, with the oven's orifice, the directions of
 * its trajectories (the collimator); later slits add their strips, which clip on the detector plane (subbeam.ts).
 */
import type { Slit } from '../../beamline/types.ts';
import type { State } from '../nodes.ts';
import type { Step, Walk, WalkCtx } from './step.ts';

export const slitStep: Step<Slit> = {
  run(ctx: WalkCtx, e: Slit, s: State, walk: Walk, entrance: number, exit: number): undefined {
    const sx = { y: entrance, lo: e.x - e.width / 2, hi: e.x + e.width / 2, axis: 'x' as const };
    const sz = { y: entrance, lo: e.z - e.height / 2, hi: e.z + e.height / 2, axis: 'z' as const };
    const track = walk.track.collimator
      ? { ...walk.track, strips: [...walk.track.strips, sx, sz] }
      : { ...walk.track, collimator: { y: entrance, rect: { width: e.width, height: e.height, x: e.x, z: e.z } } };
    ctx.visit(ctx, e.to, s, { ...walk, y: exit, track });
    return undefined;
  },
};
