/** The detector's step: a leaf. The state arrives as it is (a drift over the gap is unitary and leaves the trace, all a leaf reads, unchanged) and ends its path at the detector's plane. */
import type { Detector } from '../../beamline/types.ts';
import type { State } from '../nodes.ts';
import { finishLeaf } from '../leaf.ts';
import type { Step, Walk, WalkCtx } from './step.ts';

export const detectorStep: Step<Detector> = {
  enter: (_ctx: WalkCtx, _e: Detector, st: State): State => st,
  run(ctx: WalkCtx, e: Detector, s: State, walk: Walk, entrance: number): undefined {
    finishLeaf(ctx, s, { ...walk, y: entrance }, e.id, e);
    return undefined;
  },
};
