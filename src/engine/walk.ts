/**
 * The walk: the line depth first from the oven, one path at a time. At each element it records where the
 * element stands, brings the state across the gap before it and hands the state to the element kind's step
 * (steps/index.ts); a step's exit state goes on to the element's output. A magnet forks the walk into the
 * states it sorts (one rank-one selection |k⟩⟨k| each, docs/design.md "Magnet entry and exit"), so paths that
 * share elements share the work up to the fork.
 */
import type { Element } from '../beamline/types.ts';
import { lengthOf } from '../beamline/elements/registry.ts';
import { CancelledError, CostError, RunError } from './errors.ts';
import type { State } from './nodes.ts';
import { drift } from './propagate.ts';
import { finishLeaf } from './leaf.ts';
import { STEPS } from './steps/index.ts';
import type { Step, Walk, WalkCtx } from './steps/step.ts';
import type { Member } from './merge.ts';

function elementPath(ctx: WalkCtx, id: string): string {
  return ctx.byId.get(id)?.path ?? id;
}

/** The most forks (magnets' ports, RF phases) along one path: deeper means a cycle or a line out of proportion. */
export const MAX_DEPTH = 512;

function checkCancel(ctx: WalkCtx): void {
  const n = ++ctx.counter.steps;
  const p = ctx.progress;
  // a line of few steps reports each (behind a field twist one step may take seconds)
  if (p && (n % 64 === 0 || p.total < 1024)) p.report(p.share * Math.min(0.99, n / p.total));
  if (n % 64 === 0 && ctx.opts.isCancelled?.()) throw new CancelledError('cancelled');
}

/**
 * Where a recorded walk hands over (replay.ts): on reaching element `id` in the run of `ctx`, the walk calls `reach`
 * (or `reachBundle` for a bundle of more than one path) instead of going on, and `reach` continues from there.
 */
export interface WalkCut {
  readonly ctx: WalkCtx;
  readonly id: string;
  reach(ctx: WalkCtx, st: State, walk: Walk): void;
  reachBundle(ctx: WalkCtx, members: readonly Member[]): void;
}

/** The cut of the walk under way (one walk runs at a time in a thread; its ctx is checked as well). */
let activeCut: WalkCut | null = null;

/** Sets (or, with null, clears) the cut of the walk under way; returns the one it replaces. */
export function setWalkCut(cut: WalkCut | null): WalkCut | null {
  const before = activeCut;
  activeCut = cut;
  return before;
}

export function visit(ctx: WalkCtx, target: string, st: State, walk: Walk): void {
  // a loop along the single outputs (a chain of any length runs in constant stack); a step that forks (a magnet's
  // ports) or walks a subtree more than once (RF flipper, field twist) calls visit again for each branch
  for (;;) {
    if (activeCut !== null && target === activeCut.id && activeCut.ctx === ctx) {
      activeCut.reach(ctx, st, walk);
      return;
    }
    checkCancel(ctx);
    if (walk.depth > MAX_DEPTH) throw new RunError(`${elementPath(ctx, target)}: the line is deeper than ${MAX_DEPTH} elements along one path (a cycle?)`);
    if (target === 'stop') {
      finishLeaf(ctx, st, walk, 'stop', null);
      return;
    }
    const e = ctx.byId.get(target);
    if (!e) throw new RunError(`unknown target "${target}"`);
    const entrance = walk.y + e.gap;
    const exit = entrance + lengthOf(e);
    const pos = ctx.positions[e.id];
    if (!pos) ctx.positions[e.id] = { entrance, exit };
    else if (Math.abs(pos.entrance - entrance) > 1e-3) {
      ctx.warnings.add(`${e.path}: reached at ${(entrance * 100).toFixed(1)} cm along one path and ${(pos.entrance * 100).toFixed(1)} cm along another; the gaps of the paths that share it disagree`);
    }
    const step = STEPS[e.kind] as Step<Element>;
    let out: State | undefined;
    try {
      const s = step.enter ? step.enter(ctx, e, st) : drift(ctx, st, e.gap);
      out = step.run(ctx, e, s, walk, entrance, exit);
    } catch (err) {
      throw costNamed(err, e);
    }
    if (out === undefined) return;
    target = (e as { to: string }).to;
    st = out;
    walk = { ...walk, y: exit };
  }
}

/**
 * A bundle of paths that left a magnet through one port (merge.ts): they pass the same elements, so they are walked
 * together, each member's state through each step, until a magnet forks them all and merges the forks whose
 * trajectories coincide. A bundle of one is the plain walk.
 */
export function visitBundle(ctx: WalkCtx, target: string, members: readonly Member[]): void {
  for (;;) {
    if (members.length === 1) {
      visit(ctx, target, members[0].st, members[0].walk);
      return;
    }
    if (activeCut !== null && target === activeCut.id && activeCut.ctx === ctx) {
      activeCut.reachBundle(ctx, members);
      return;
    }
    checkCancel(ctx);
    const walk0 = members[0].walk;
    if (walk0.depth > MAX_DEPTH) throw new RunError(`${elementPath(ctx, target)}: the line is deeper than ${MAX_DEPTH} elements along one path (a cycle?)`);
    if (target === 'stop') {
      for (const m of members) finishLeaf(ctx, m.st, m.walk, 'stop', null);
      return;
    }
    const e = ctx.byId.get(target);
    if (!e) throw new RunError(`unknown target "${target}"`);
    const entrance = walk0.y + e.gap;
    const exit = entrance + lengthOf(e);
    if (!ctx.positions[e.id]) ctx.positions[e.id] = { entrance, exit };
    const step = STEPS[e.kind] as Step<Element>;
    try {
      members = bundleStep(ctx, e, step, members, entrance, exit);
    } catch (err) {
      throw costNamed(err, e);
    }
    if (members.length === 0) return;
    target = (e as { to: string }).to;
  }
}

/** One element's step for every member of a bundle: the members that go on to its output (none where it forked them). */
function bundleStep(ctx: WalkCtx, e: Element, step: Step<Element>, members: readonly Member[], entrance: number, exit: number): Member[] {
  const entered = members.map((m) => ({ st: step.enter ? step.enter(ctx, e, m.st) : drift(ctx, m.st, e.gap), walk: m.walk }));
  if (step.runBundle) {
    step.runBundle(ctx, e, entered, entrance, exit);
    return [];
  }
  const next: Member[] = [];
  for (const m of entered) {
    const out = step.run(ctx, e, m.st, m.walk, entrance, exit);
    if (out !== undefined) next.push({ st: out, walk: { ...m.walk, y: exit } });
  }
  return next;
}

/** A step's CostError as the run's error, naming the element and what to change. */
function costNamed(err: unknown, e: Element): unknown {
  if (!(err instanceof CostError)) return err;
  return new RunError(`${e.path}: ${err.message}. Give the field regions, RF flippers and twists of this path one field axis where the experiment allows, use fewer of them in a row, or split the line into parts`);
}
