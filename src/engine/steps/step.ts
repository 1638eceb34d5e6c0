/**
 * What an element kind's step is (one module per kind in this folder, held by the registry in index.ts), and
 * the context of the walk it acts in.
 *
 * The walk (walk.ts) places the element, brings the state across its gap (`enter`, by default the drift in the
 * line's ambient field) and calls `run`. A step returns the state at the element's exit, which the walk carries
 * on to the element's single output (`to`), or undefined where it went on itself: a magnet forks the walk into
 * its ports, a detector ends a leaf, an RF flipper or field twist walks the subtree behind it more than once.
 * Transverse effects (a slit's collimation, a magnet's pole gap and deflection) go into the `track` of the
 * walks it forks (subbeam.ts reads them on the detector plane).
 */
import type { CMat } from '../../physics/cmat.ts';
import type { Vec3 } from '../../physics/rotation.ts';
import type { VelocityDistribution } from '../../physics/velocity.ts';
import type { Beamline, Element, ElementKind } from '../../beamline/types.ts';
import type { SpinSystem } from '../system.ts';
import type { CharCache } from '../average.ts';
import type { FinePath, Track } from '../detector-plane.ts';
import type { State } from '../nodes.ts';
import type { EigenFactors } from '../propagate.ts';
import type { RunOptions } from '../run.ts';
import type { Member } from '../merge.ts';

export interface Step<E extends Element = Element> {
  /** The state at the entrance from the state at the start of the gap; absent: the drift over the gap in the ambient field. */
  enter?(ctx: WalkCtx, e: E, st: State): State;
  /** The element's action on the state at its entrance; the state at its exit, or undefined where the step continued or ended the walk itself. */
  run(ctx: WalkCtx, e: E, st: State, walk: Walk, entrance: number, exit: number): State | undefined;
  /**
   * The element's action on a bundle of paths that arrive together (merge.ts), for a kind that forks and merges
   * them (the magnet); without it each member's `run` is called on its own.
   */
  runBundle?(ctx: WalkCtx, e: E, members: readonly Member[], entrance: number, exit: number): void;
}

/** One step per element kind: a kind without one fails the type check. */
export type Steps = { readonly [K in ElementKind]: Step<Extract<Element, { kind: K }>> };

/** Continues the walk at `target` ("stop" or an element id) with the state `st`. */
export type Visit = (ctx: WalkCtx, target: string, st: State, walk: Walk) => void;

/** Continues a bundle of paths at `target` together (walk.ts visitBundle). */
export type VisitBundle = (ctx: WalkCtx, target: string, members: readonly Member[]) => void;

/** What a step sees of the run: the isotope being walked, its beam, the line, and what the run collects. */
export interface WalkCtx {
  sys: SpinSystem;
  fraction: number;
  dist: VelocityDistribution;
  chi: CharCache;
  line: Beamline;
  byId: Map<string, Element>;
  leaves: FinePath[];
  lost: { spin: number };
  warnings: Set<string>;
  positions: Record<string, { entrance: number; exit: number }>;
  opts: RunOptions;
  counter: { steps: number };
  /** Where the run reports its progress: the walk's element steps out of the estimate's (cost.ts), as `share` of the whole. */
  progress?: { total: number; share: number; report: (fraction: number) => void };
  hermiticity: { max: number; positive: boolean };
  sampled: { nodes: number; error: number; unconverged: Map<string, { error: number; speeds: number }> };
  /** χ₂ values of this distribution, shared by the leaves. */
  moment2: Map<number, [number, number]>;
  /** Elements whose sorting warnings this run has added. */
  seen: Set<object>;
  /** Eigenstates of the field regions met in this run, by field (a short list, compared by value). */
  fieldEigen: { field: Vec3; e: EigenFactors }[];
  /** H/ħ of the line's ambient field (the drift Hamiltonian) and whether it vanishes. */
  hAmbient: CMat;
  ambientZero: boolean;
  /** The walk itself (walk.ts visit): a step that forks, or averages a subtree, continues the walk through it. */
  visit: Visit;
  visitBundle: VisitBundle;
  /** How many sub-beams were merged into others (merge.ts). */
  merged: { count: number; fraction: number; at: Set<string> };
  /** Targets of sub-beams that no atom reaches (stopped by an aperture at the magnet that split them off). */
  blocked: Set<string>;
}

/** Where one path of the walk is: the magnets' ports passed, the distance from the orifice, its transverse track. */
export interface Walk {
  path: string[];
  /**
   * The index of the branch taken at each fork (a magnet's state or port, an RF entry phase), the isotope first:
   * the leaves are put in this order before the detector plane, the order of a walk that follows one path at a
   * time, whichever order the bundles reached them in.
   */
  rank: readonly number[];
  y: number;
  track: Track;
  depth: number;
}

/** A walk one element further down, with what changed. */
export function fork(walk: Walk, extra: Partial<Walk>): Walk {
  return {
    path: extra.path ?? walk.path,
    rank: extra.rank ?? walk.rank,
    y: extra.y ?? walk.y,
    track: extra.track ?? walk.track,
    depth: walk.depth + 1,
  };
}
