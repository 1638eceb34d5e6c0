/** The end of a path (a detector or a stop): its beam-averaged yield and what the detector plane needs of it. */
import { RunError } from './errors.ts';
import type { Detector } from '../beamline/types.ts';
import type { SpecState } from './spectral.ts';
import { specAverageTrace } from './average.ts';
import type { FinePath } from './detector-plane.ts';
import { type State, ScaledNodes, isNodes, nodeTrace, realTrace } from './nodes.ts';
import type { Walk, WalkCtx } from './steps/step.ts';

/**
 * The most paths (leaves) a run follows. Each magnet that deflects splits a path into its states, each routed port
 * and each RF entry phase multiplies the paths behind it, so they grow exponentially along a chain: 18 magnets that
 * route both ports onward make 262,144 leaves (about 1.7 GB). A line past this bound is refused with the reason,
 * instead of running out of memory (the samples have at most 9).
 */
export const MAX_LEAVES = 20_000;

/** The run's error when one more leaf (this path, ending at `target`) would pass MAX_LEAVES. */
export function checkLeafCount(ctx: WalkCtx, path: readonly string[], target: string): void {
  if (ctx.leaves.length >= MAX_LEAVES) {
    throw new RunError(`the line has more than ${MAX_LEAVES.toLocaleString('en-US')} paths to follow (this one ends at ${target} after ${path.length} magnet ports: ${path.slice(0, 6).join(' ')}${path.length > 6 ? ' …' : ''}): every magnet that deflects splits a path into its states, and every port routed onward, RF entry phase and isotope multiplies the paths behind it; route the ports you do not measure to "stop", or split the line into parts`);
  }
}

export function finishLeaf(ctx: WalkCtx, st: State, walk: Walk, target: string, det: Detector | null): void {
  checkLeafCount(ctx, walk.path, target);
  let yieldSpin: number;
  let yieldError = 0;
  let grid: FinePath['grid'];
  let spec: SpecState | undefined;
  if (isNodes(st)) {
    yieldSpin = nodeTrace(st);
    const traces = new Float64Array(st.speeds.length);
    if (st instanceof ScaledNodes) {
      const t = realTrace(st.common);
      for (let k = 0; k < traces.length; k++) traces[k] = st.scales[k] * t;
    } else for (let k = 0; k < traces.length; k++) {
      const r = st.rhos[k], d = r.rows;
      let s = 0;
      for (let i = 0; i < d; i++) s += r.re[i * d + i];
      traces[k] = s;
    }
    grid = { speeds: st.speeds, weights: st.weights, traces };
  } else {
    const avg = specAverageTrace(st, ctx.chi);
    ctx.hermiticity.max = Math.max(ctx.hermiticity.max, avg.hermiticity);
    if (!avg.positive) ctx.hermiticity.positive = false;
    yieldSpin = avg.value;
    yieldError = avg.error;
    spec = st;
  }
  ctx.leaves.push({
    system: ctx.sys.name,
    fraction: ctx.fraction,
    dist: ctx.dist,
    path: walk.path,
    target,
    plane: walk.y,
    yieldSpin: yieldSpin * ctx.fraction,
    yieldError: yieldError * ctx.fraction,
    spec,
    moment2Cache: ctx.moment2,
    track: walk.track,
    rank: walk.rank,
    grid,
    detector: det,
  });
}
