/**
 * The RF flipper's step (its physics: ../rf.ts): the rotating-wave map over the flipper's length. A pulsed
 * beam locked to the RF has one entry phase; a continuous beam walks the subtree behind the flipper once per
 * entry phase, each with weight 1/N, and is told when its yields depended on the phase.
 */
import type { RfFlipper } from '../../beamline/types.ts';
import { RunError } from '../errors.ts';
import type { State } from '../nodes.ts';
import { applyLinear } from '../propagate.ts';
import { RfError, phaseSpread, rfMap } from '../rf.ts';
import type { Step, Walk, WalkCtx } from './step.ts';

/** Above this spread of the yields over the RF entry phases (fraction of the oven flux) a line is told that its result depended on the phase. */
const RF_PHASE_NOTICE = 1e-6;

export const rfStep: Step<RfFlipper> = {
  run(ctx: WalkCtx, e: RfFlipper, s: State, walk: Walk, _entrance: number, exit: number): State | undefined {
    let map;
    try {
      map = rfMap(ctx.sys, e, e.path);
    } catch (err) {
      if (err instanceof RfError) throw new RunError(err.message);
      throw err;
    }
    ctx.warnings.add(`${e.path}: RF flipper solved in the rotating-wave approximation (the counter-rotating part and the component along the static field are dropped)`);
    if (map.rotating.length === 1) {
      return applyLinear(ctx, applyLinear(ctx, s, map.rotating[0], e.length), map.frame, e.length);
    }
    // a continuous beam: the subtree once per entry phase, each with weight 1/N (rf.ts)
    const whole = ctx.fraction;
    const n = map.rotating.length;
    const branchYields: number[][] = [];
    try {
      ctx.fraction = whole / n;
      for (const [k, h] of map.rotating.entries()) {
        const first = ctx.leaves.length;
        ctx.visit(ctx, e.to, applyLinear(ctx, applyLinear(ctx, s, h, e.length), map.frame, e.length), { ...walk, rank: [...walk.rank, k], y: exit });
        branchYields.push(ctx.leaves.slice(first).map((l) => l.yieldSpin));
      }
    } finally {
      ctx.fraction = whole;
    }
    const spread = phaseSpread(branchYields);
    if (spread === undefined || spread > RF_PHASE_NOTICE) {
      ctx.warnings.add(`${e.path}: the yields behind this RF flipper depend on the RF phase at which an atom enters${spread === undefined ? '' : ` (by up to ${spread.toPrecision(2)} of the oven flux between entry phases)`}: they are averaged over a uniformly distributed phase, as in a continuous beam; a pulsed beam locked to the RF would differ (give the element a "phase" for that case)`);
    }
    return undefined;
  },
};
