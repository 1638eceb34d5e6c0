/**
 * The recombiner's step: a magnet run backwards that lets its open ports through. Coherent, the open ports'
 * projectors add with their phases into one Kraus operator (paths interfere); incoherent, the open ports'
 * states are selected as a magnet's port would be. What the closed ports hold is lost.
 */
import { cmatZeros, cmatCombine, cmatScale } from '../../physics/cmat.ts';
import type { Recombiner } from '../../beamline/types.ts';
import { projectorOf } from '../system.ts';
import { type State, averagedTrace } from '../nodes.ts';
import { applyKraus } from '../propagate.ts';
import { getSorting, selectStates } from '../sorting.ts';
import { type Step, type Walk, type WalkCtx, fork } from './step.ts';

export const recombinerStep: Step<Recombiner> = {
  run(ctx: WalkCtx, e: Recombiner, s: State, walk: Walk, _entrance: number, exit: number): State | undefined {
    const sys = ctx.sys;
    const sorting = getSorting(ctx, e);
    const open = sorting.components.filter((c) => e.open.includes(c.port));
    const before = averagedTrace(ctx, s);
    if (e.coherent) {
      const d = sys.dim;
      let k = cmatZeros(d, d);
      for (const port of e.open) {
        const comps = open.filter((c) => c.port === port);
        const ph = e.phases[port] ?? 0;
        k = cmatCombine([[1, k], [1, cmatScale(projectorOf(d, comps), Math.cos(ph), Math.sin(ph))]]);
      }
      s = applyKraus(s, k);
      ctx.lost.spin += ctx.fraction * (before - averagedTrace(ctx, s));
      return s;
    }
    const closed = sorting.components.filter((c) => !e.open.includes(c.port));
    if (closed.length > 0) ctx.lost.spin += ctx.fraction * averagedTrace(ctx, applyKraus(s, projectorOf(sys.dim, closed)));
    const w = fork(walk, { y: exit });
    ctx.visit(ctx, e.to, selectStates(s, open), w);
    return undefined;
  },
};
