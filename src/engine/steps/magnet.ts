/**
 * The gradient magnet's step: it sorts the state into its ports (sorting.ts), each port routed by name or "*".
 * With a gradient and a length, or a pole-gap aperture, every sorted state is its own sub-beam with its own
 * deflection (a = μ_eff G/M along the axis) and the aperture's strips at entrance and exit; otherwise the
 * states of one port share a trajectory (an ideal sorter).
 */
import { BOHR_MAGNETON } from '../../physics/constants.ts';
import type { Magnet } from '../../beamline/types.ts';
import type { Track } from '../detector-plane.ts';
import type { State } from '../nodes.ts';
import { drift } from '../propagate.ts';
import { driftCommutesWithSort, getSorting, portComponents, routeOf, selectStates } from '../sorting.ts';
import { type Step, type Walk, type WalkCtx, fork } from './step.ts';

/**
 * A warning when the collimated beam, undeflected, is already wider or taller at a magnet's entrance
 * than the magnet's pole-gap aperture: part of the beam is clipped there whatever the spin does (the
 * clipped part is counted as lost).
 */
function apertureWarning(ctx: WalkCtx, e: Magnet, track: Track, y: number): void {
  const ap = e.aperture!;
  const src = track.source, col = track.collimator;
  const extent = (axis: 'x' | 'z'): number => {
    const w0 = src ? (axis === 'x' ? src.width : src.height) : 0;
    if (!col) return w0;
    const w1 = axis === 'x' ? col.rect.width : col.rect.height;
    const r = y / col.y;
    // full width of the sum of the two uniform contributions at this plane
    return w0 * Math.abs(1 - r) + w1 * r;
  };
  const wx = extent('x'), wz = extent('z');
  const over: string[] = [];
  if (wx > ap.width) over.push(`${(wx * 1e3).toPrecision(3)} mm wide against a ${(ap.width * 1e3).toPrecision(3)} mm pole gap`);
  if (wz > ap.height) over.push(`${(wz * 1e3).toPrecision(3)} mm tall against ${(ap.height * 1e3).toPrecision(3)} mm`);
  if (over.length > 0) ctx.warnings.add(`${e.path}.aperture: the collimated beam at the magnet's entrance is ${over.join(' and ')}: part of it is clipped before any deflection (counted as lost)`);
}

export const magnetStep: Step<Magnet> = {
  enter(ctx: WalkCtx, e: Magnet, st: State): State {
    // a drift just before a magnet whose states are all eigenvectors of the drift Hamiltonian changes
    // nothing the magnet passes on: P_k U ρ U† P_k = P_k ρ P_k when U|k⟩ = e^{−iλt}|k⟩
    const skipDrift = e.gap > 0 && !ctx.ambientZero && driftCommutesWithSort(ctx, e);
    return skipDrift ? st : drift(ctx, st, e.gap);
  },
  run(ctx: WalkCtx, e: Magnet, s: State, walk: Walk, entrance: number, exit: number): undefined {
    const sys = ctx.sys;
    const sorting = getSorting(ctx, e);
    const strips = e.aperture ? [
      { y: entrance, lo: e.aperture.x - e.aperture.width / 2, hi: e.aperture.x + e.aperture.width / 2, axis: 'x' as const },
      { y: entrance, lo: e.aperture.z - e.aperture.height / 2, hi: e.aperture.z + e.aperture.height / 2, axis: 'z' as const },
      { y: exit, lo: e.aperture.x - e.aperture.width / 2, hi: e.aperture.x + e.aperture.width / 2, axis: 'x' as const },
      { y: exit, lo: e.aperture.z - e.aperture.height / 2, hi: e.aperture.z + e.aperture.height / 2, axis: 'z' as const },
    ] : [];
    if (e.aperture) apertureWarning(ctx, e, walk.track, entrance);
    const deflects = e.gradient !== undefined && e.length !== undefined && e.length > 0 && e.gradient !== 0;
    if (deflects || e.aperture) {
      // every state its own sub-beam: each has its own moment, so its own deflection
      for (const c of sorting.components) {
        const to = routeOf(e, c);
        const kick = deflects ? [{ exitY: exit, length: e.length!, accel: (c.moment * BOHR_MAGNETON * e.gradient!) / sys.massKg, n: e.axis }] : [];
        const w = fork(walk, {
          path: [...walk.path, `${e.id}:${c.port}`],
          y: exit,
          track: { ...walk.track, kicks: [...walk.track.kicks, ...kick], strips: [...walk.track.strips, ...strips], components: [...walk.track.components, `${e.id}:${c.lowField}`] },
        });
        ctx.visit(ctx, to, selectStates(s, [c]), w);
      }
      return undefined;
    }
    // an ideal sorter: the states of one port share one trajectory; Σ_k P_k ρ P_k over the port
    for (const port of sorting.ports) {
      const comps = portComponents(sorting, port);
      const to = routeOf(e, comps[0]);
      const w = fork(walk, { path: [...walk.path, `${e.id}:${port}`], y: exit });
      ctx.visit(ctx, to, selectStates(s, comps, to === 'stop' || ctx.byId.get(to)?.kind === 'detector'), w);
    }
    return undefined;
  },
};
