/**
 * The gradient magnet's step: it sorts the state into its ports (sorting.ts), each port routed by name or "*".
 * With a gradient and a length, or a pole-gap aperture, every sorted state is its own sub-beam with its own
 * deflection (a = μ_eff G/M along the axis) and the aperture's strips at entrance and exit; otherwise the
 * states of one port share a trajectory (an ideal sorter).
 */
import { BOHR_MAGNETON } from '../../physics/constants.ts';
import type { Magnet } from '../../beamline/types.ts';
import type { Track } from '../detector-plane.ts';
import { beamExtent } from '../subbeam.ts';
import { type State, averagedTrace } from '../nodes.ts';
import { drift } from '../propagate.ts';
import { driftCommutesWithSort, getSorting, portComponents, routeOf, selectStates } from '../sorting.ts';
import { type Step, type Walk, type WalkCtx, fork } from './step.ts';
import { type Member, blockedByApertures, mergeForks } from '../merge.ts';

/**
 * A warning when the collimated beam, undeflected, is already wider or taller at a magnet's entrance
 * than the magnet's pole-gap aperture: part of the beam is clipped there whatever the spin does (the
 * clipped part is counted as lost).
 */
function apertureWarning(ctx: WalkCtx, e: Magnet, track: Track, y: number): void {
  const ap = e.aperture!;
  const extent = (axis: 'x' | 'z'): number => {
    const b = beamExtent(track, axis, y);
    return b.hi - b.lo;
  };
  const wx = extent('x'), wz = extent('z');
  const over: string[] = [];
  if (wx > ap.width) over.push(`${(wx * 1e3).toPrecision(3)} mm wide against a ${(ap.width * 1e3).toPrecision(3)} mm pole gap`);
  if (wz > ap.height) over.push(`${(wz * 1e3).toPrecision(3)} mm tall against ${(ap.height * 1e3).toPrecision(3)} mm`);
  if (over.length > 0) ctx.warnings.add(`${e.path}.aperture: the collimated beam at the magnet's entrance is ${over.join(' and ')}: part of it is clipped before any deflection (counted as lost)`);
}

/** Pole-gap strips at a magnet's entrance and exit. */
function stripsOf(e: Magnet, entrance: number, exit: number): Track['strips'] {
  const a = e.aperture;
  if (!a) return [];
  return [
    { y: entrance, lo: a.x - a.width / 2, hi: a.x + a.width / 2, axis: 'x' as const },
    { y: entrance, lo: a.z - a.height / 2, hi: a.z + a.height / 2, axis: 'z' as const },
    { y: exit, lo: a.x - a.width / 2, hi: a.x + a.width / 2, axis: 'x' as const },
    { y: exit, lo: a.z - a.height / 2, hi: a.z + a.height / 2, axis: 'z' as const },
  ];
}

function deflectsOf(e: Magnet): boolean {
  return e.gradient !== undefined && e.length !== undefined && e.length > 0 && e.gradient !== 0;
}

/**
 * Every member of a bundle sorted into its states, each state a sub-beam with its own kick; the forks that leave by
 * one port are merged where their trajectories coincide and go on to the port's target as one bundle.
 */
function sortBundle(ctx: WalkCtx, e: Magnet, members: readonly Member[], exit: number, deflects: boolean, strips: Track['strips']): void {
  const sorting = getSorting(ctx, e);
  const groups = new Map<string, { to: string; forks: Member[] }>();
  for (const m of members) {
    const walk = m.walk;
    for (const [ci, c] of sorting.components.entries()) {
      const to = routeOf(e, c);
      const kick = deflects ? [{ exitY: exit, length: e.length!, accel: (c.moment * BOHR_MAGNETON * e.gradient!) / ctx.sys.massKg, n: e.axis }] : [];
      const w = fork(walk, {
        path: [...walk.path, `${e.id}:${c.port}`],
        rank: [...walk.rank, ci],
        y: exit,
        track: { ...walk.track, kicks: [...walk.track.kicks, ...kick], strips: [...walk.track.strips, ...strips], components: [...walk.track.components, `${e.id}:${c.lowField}`] },
      });
      if (deflects && blockedByApertures(w.track, ctx.dist)) {
        // no atom of this sub-beam passes an aperture it meets: its flux is lost there
        ctx.lost.spin += ctx.fraction * averagedTrace(ctx, selectStates(m.st, [c]));
        ctx.blocked.add(to);
        continue;
      }
      const key = `${c.port}\u0000${to}`;
      let g = groups.get(key);
      if (!g) groups.set(key, (g = { to, forks: [] }));
      g.forks.push({ st: selectStates(m.st, [c]), walk: w });
    }
  }
  for (const g of groups.values()) ctx.visitBundle(ctx, g.to, mergeForks(ctx, e.path, g.to, g.forks));
}

export const magnetStep: Step<Magnet> = {
  enter(ctx: WalkCtx, e: Magnet, st: State): State {
    // a drift just before a magnet whose states are all eigenvectors of the drift Hamiltonian changes
    // nothing the magnet passes on: P_k U ρ U† P_k = P_k ρ P_k when U|k⟩ = e^{−iλt}|k⟩
    const skipDrift = e.gap > 0 && !ctx.ambientZero && driftCommutesWithSort(ctx, e);
    return skipDrift ? st : drift(ctx, st, e.gap);
  },
  run(ctx: WalkCtx, e: Magnet, s: State, walk: Walk, entrance: number, exit: number): undefined {
    const sorting = getSorting(ctx, e);
    const strips = stripsOf(e, entrance, exit);
    if (e.aperture) apertureWarning(ctx, e, walk.track, entrance);
    const deflects = deflectsOf(e);
    if (deflects || e.aperture) {
      // every state its own sub-beam: each has its own moment, so its own deflection; those whose trajectories
      // coincide are merged (merge.ts) and the states of one port go on together
      sortBundle(ctx, e, [{ st: s, walk }], exit, deflects, strips);
      return undefined;
    }
    // an ideal sorter: the states of one port share one trajectory; Σ_k P_k ρ P_k over the port
    for (const [pi, port] of sorting.ports.entries()) {
      const comps = portComponents(sorting, port);
      const to = routeOf(e, comps[0]);
      const w = fork(walk, { path: [...walk.path, `${e.id}:${port}`], rank: [...walk.rank, pi], y: exit });
      ctx.visit(ctx, to, selectStates(s, comps, to === 'stop' || ctx.byId.get(to)?.kind === 'detector'), w);
    }
    return undefined;
  },
  runBundle(ctx: WalkCtx, e: Magnet, members: readonly Member[], entrance: number, exit: number): void {
    if (e.aperture) for (const m of members) apertureWarning(ctx, e, m.walk.track, entrance);
    const deflects = deflectsOf(e);
    if (deflects || e.aperture) {
      sortBundle(ctx, e, members, exit, deflects, stripsOf(e, entrance, exit));
      return;
    }
    // an ideal sorter: each member on its own, as in run
    for (const m of members) this.run(ctx, e, m.st, m.walk, entrance, exit);
  },
};
