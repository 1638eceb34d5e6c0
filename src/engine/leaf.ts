/** The end of a path (a detector or a stop): its beam-averaged yield and what the detector plane needs of it. */
import type { Detector } from '../beamline/types.ts';
import type { SpecState } from './spectral.ts';
import { specAverageTrace } from './average.ts';
import type { FinePath } from './detector-plane.ts';
import { type State, ScaledNodes, isNodes, nodeTrace, realTrace } from './nodes.ts';
import type { Walk, WalkCtx } from './steps/step.ts';

export function finishLeaf(ctx: WalkCtx, st: State, walk: Walk, target: string, det: Detector | null): void {
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
    grid,
    detector: det,
  });
}
