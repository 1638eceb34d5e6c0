/**
 * A path's state evaluated speed by speed (from a field twist on): one density matrix per grid speed with
 * the grid's flux weights, or the spectral state of spectral.ts before that. `State` is either.
 */
import { type CMat, cmatSandwichParts, cmatScale } from '../physics/cmat.ts';
import type { SpecState } from './spectral.ts';
import { specAverageTrace } from './average.ts';
import type { WalkCtx } from './steps/step.ts';

/**
 * A state evaluated speed by speed (after a field twist): one density matrix per grid speed, with the
 * grid's flux weights (normalised over the grid).
 */
export interface NodeState {
  readonly nodes: true;
  readonly speeds: Float64Array;
  readonly weights: Float64Array;
  readonly rhos: readonly CMat[];
}
export type State = SpecState | NodeState;

export function isNodes(st: State): st is NodeState {
  return (st as NodeState).nodes === true;
}

/**
 * Nodes whose every ρ_k is scales[k]·common: a port that keeps one state, |k⟩⟨k| ρ |k⟩⟨k| = ⟨k|ρ|k⟩ |k⟩⟨k|.
 * The leaves behind such a port read only the traces; the matrices are formed where something reads them.
 */
export class ScaledNodes implements NodeState {
  readonly nodes = true as const;
  private formed: CMat[] | undefined = undefined;
  constructor(readonly speeds: Float64Array, readonly weights: Float64Array, readonly common: CMat, readonly scales: Float64Array) {}
  get rhos(): readonly CMat[] {
    return (this.formed ??= Array.from(this.scales, (s) => cmatScale(this.common, s)));
  }
}

export function realTrace(m: CMat): number {
  let t = 0;
  for (let i = 0; i < m.rows; i++) t += m.re[i * m.rows + i];
  return t;
}

export function mapNodes(st: NodeState, f: (rho: CMat, k: number) => CMat): NodeState {
  return { nodes: true, speeds: st.speeds, weights: st.weights, rhos: st.rhos.map(f) };
}

/** U ρ U† (both d×d), with U ρ in a scratch array: one allocation, the result. */
export function conj(u: CMat, rho: CMat): CMat {
  return cmatSandwichParts(u.re, u.im, u.rows, u.rows, rho);
}

export function nodeTrace(st: NodeState): number {
  if (st instanceof ScaledNodes) {
    let ws = 0;
    for (let k = 0; k < st.scales.length; k++) ws += st.weights[k] * st.scales[k];
    return ws * realTrace(st.common);
  }
  let s = 0;
  for (let k = 0; k < st.rhos.length; k++) {
    const r = st.rhos[k], d = r.rows;
    let t = 0;
    for (let i = 0; i < d; i++) t += r.re[i * d + i];
    s += st.weights[k] * t;
  }
  return s;
}

/** The state's beam-averaged trace (the fraction of flux on this path so far). */
export function averagedTrace(ctx: WalkCtx, st: State): number {
  return isNodes(st) ? nodeTrace(st) : specAverageTrace(st, ctx.chi).value;
}
