/**
 * Propagators and Kraus operators on a path's state: ρ → U ρ U† with U = e^{−iHℓ/v} (exact frequency by
 * frequency on a spectral state, per speed on nodes), ρ → K ρ K† for a speed-independent K, and the drift
 * over a gap in the line's ambient field.
 */
import { type CMat, copyF64, zeroedF64 } from '../physics/cmat.ts';
import { eigh, spectralFunction } from '../physics/eigh.ts';
import { reduceAngle } from '../physics/trig.ts';
import { vecNorm, type Vec3 } from '../physics/rotation.ts';
import { zeemanEigen } from '../physics/hyperfine.ts';
import { specKraus, specPropagate, type PropagatorFactors } from './spectral.ts';
import { type State, isNodes, mapNodes, conj } from './nodes.ts';
import type { WalkCtx } from './steps/step.ts';

export type EigenFactors = { values: ArrayLike<number>; readonly vectors: CMat; factors?: PropagatorFactors };
const eigenCache = new WeakMap<CMat, EigenFactors>();
/** H/ħ = V Λ V†: a field Hamiltonian through the m_F blocks (hyperfine.ts zeemanEigen), else eigh. */
function eigenOf(ctx: WalkCtx, h: CMat | null, field?: Vec3): EigenFactors {
  if (field) {
    // kept for the run (every sub-beam through one field region shares it)
    let e: EigenFactors | undefined;
    for (const c of ctx.fieldEigen) if (c.field.x === field.x && c.field.y === field.y && c.field.z === field.z) e = c.e;
    if (!e) {
      const b = vecNorm(field);
      const z = zeemanEigen(ctx.sys.params, b, b > 0 ? field : { x: 0, y: 0, z: 1 });
      const values = zeroedF64(z.values.length);
      for (let i = 0; i < values.length; i++) values[i] = 2 * Math.PI * z.values[i];
      // the dense eigenvectors are formed only where a path needs them (specPropagate keeps the factors)
      e = { values, get vectors(): CMat { return z.vectors; }, factors: z.factors };
      ctx.fieldEigen.push({ field, e });
    }
    return e;
  }
  if (!h) throw new Error('eigenOf: neither a Hamiltonian nor a field');
  const hit = eigenCache.get(h);
  if (hit) return hit;
  const e = eigh(h);
  eigenCache.set(h, e);
  return e;
}

/**
 * ρ → U ρ U†, U = e^{−iHℓ/v}: H given as a matrix, or (h = null) as the species' Hamiltonian in
 * `field`, which is then never built as a matrix (its eigenstates come from the m_F blocks).
 */
export function applyLinear(ctx: WalkCtx, st: State, h: CMat | null, length: number, field?: Vec3): State {
  if (length === 0) return st;
  if (h) {
    let hn = 0;
    for (let i = 0; i < h.re.length; i++) hn = Math.max(hn, Math.abs(h.re[i]), Math.abs(h.im[i]));
    if (hn === 0) return st;
  } else {
    const p = ctx.sys.params;
    if (!field || (vecNorm(field) === 0 && p.aHz === 0 && !p.bHz)) return st;
  }
  const e = eigenOf(ctx, h, field);
  if (isNodes(st)) {
    const eig = { values: copyF64(e.values), vectors: e.vectors };
    return mapNodes(st, (rho, k) => conj(spectralFunction(eig, (l) => {
      const ph = reduceAngle((l * length) / st.speeds[k]);
      return [Math.cos(ph), -Math.sin(ph)];
    }), rho));
  }
  return specPropagate(st, () => e.vectors, e.values, length, e.factors);
}

export function applyKraus(st: State, k: CMat): State {
  if (isNodes(st)) return mapNodes(st, (rho) => conj(k, rho));
  return specKraus(st, k);
}

export function drift(ctx: WalkCtx, st: State, gap: number): State {
  if (gap <= 0 || ctx.ambientZero) return st;
  return applyLinear(ctx, st, ctx.hAmbient, gap, ctx.line.ambient);
}
