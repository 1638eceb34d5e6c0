/**
 * A path's state evaluated speed by speed (from a field twist on): one density matrix per grid speed with
 * the grid's flux weights, or the spectral state of spectral.ts before that. `State` is either.
 */
import { type CMat, cmatSandwichParts, cmatScale, cmatZeros } from '../physics/cmat.ts';
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

/**
 * Nodes whose every ρ_k is the pure state x · y_k y_k† (a field twist's closed form applied to a port that keeps one
 * state): the vectors y_k (d complex numbers a speed, node-major) and x. ρ_k is formed entry by entry as
 * cmatSandwichParts forms it (t_i = y_i x, then t_i conj(y_j)), where something reads the matrices; a sort into one
 * state reads the entries without forming them (sorting.ts), with the same numbers.
 */
export class PureNodes implements NodeState {
  readonly nodes = true as const;
  private formed: CMat[] | undefined = undefined;
  constructor(readonly speeds: Float64Array, readonly weights: Float64Array, readonly d: number, readonly yr: Float64Array, readonly yi: Float64Array,
    readonly xr: number, readonly xi: number) {}
  get rhos(): readonly CMat[] {
    return (this.formed ??= Array.from(this.speeds, (_, k) => pureRho(this, k)));
  }
}

function pureRho(st: PureNodes, k: number): CMat {
  const d = st.d, o = k * d, yr = st.yr, yi = st.yi, xr = st.xr, xi = st.xi;
  const rho = cmatZeros(d, d);
  const or = rho.re, oi = rho.im;
  for (let i = 0; i < d; i++) {
    const pr = yr[o + i], pi = yi[o + i];
    const tr = 0 + (pr * xr - pi * xi), ti = 0 + (pr * xi + pi * xr);
    for (let j = 0; j < d; j++) {
      const cr = yr[o + j], ci = -yi[o + j];
      or[i * d + j] = 0 + (tr * cr - ti * ci);
      oi[i * d + j] = 0 + (tr * ci + ti * cr);
    }
  }
  return rho;
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
