/**
 * Density matrices and the operations a beamline applies to them.
 *   unpolarised: ρ = 1/d
 *   pure |j m⟩ along n̂: |ψ⟩ = exp(−iφJz) exp(−iθJy) |j m⟩            (docs/design.md, "Spin operators, states and rotations")
 *   Lüders selection: ρ → P ρ P (unnormalised; Tr is the probability of the outcome)
 *   unitary step: ρ → U ρ U†;  dephasing sort: ρ → Σ_k P_k ρ P_k
 */
import { type CMat, cmatZeros, cmatMul, cmatDagger, cmatTrace, cmatHermiticityError, cmatIdentity, cmatScale, cmatAddScaledInPlace } from './cmat.ts';
import { eigh } from './eigh.ts';
import { rotationToAxis, type Vec3 } from './rotation.ts';
import type { SpinOperators } from './spin.ts';

export function densityUnpolarized(dim: number): CMat {
  return cmatScale(cmatIdentity(dim), 1 / dim);
}

/** |ψ⟩⟨ψ| for |ψ⟩ = column k of the rotation that carries ẑ to n̂ (k = index of m in +j…−j order). */
export function densityPure(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>, n: Vec3, k: number): CMat {
  return densityPopulations(ops, n, Array.from({ length: ops.jz.rows }, (_, i) => (i === k ? 1 : 0)));
}

/**
 * Σ_k p_k |k along n̂⟩⟨k along n̂| where |k⟩ are the eigenstates of Jz in basis order, rotated to n̂.
 * For a composite space pass the total F and a basis in which F_z is diagonal via `basis`.
 */
export function densityPopulations(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>, n: Vec3, p: ArrayLike<number>, basis?: CMat): CMat {
  const r = rotationToAxis(ops, n);
  const d = ops.jz.rows;
  const diag = cmatZeros(d, d);
  for (let k = 0; k < d; k++) diag.re[k * d + k] = p[k];
  const b = basis ? cmatMul(r, basis) : r;
  return cmatMul(cmatMul(b, diag), cmatDagger(b));
}

/** Lüders selection P ρ P. */
export function selectLuders(rho: CMat, p: CMat): CMat {
  return cmatMul(cmatMul(p, rho), p);
}

/** Σ_k P_k ρ P_k: the state after a sort by the projectors P_k without selection (coherences between them lost). */
export function dephaseInto(rho: CMat, ps: readonly CMat[]): CMat {
  const out = cmatZeros(rho.rows, rho.cols);
  for (const p of ps) cmatAddScaledInPlace(out, selectLuders(rho, p), 1);
  return out;
}

/** U ρ U†. */
export function propagateUnitary(rho: CMat, u: CMat): CMat {
  return cmatMul(cmatMul(u, rho), cmatDagger(u));
}

/** Tr ρ (real part; the imaginary part of a Hermitian trace is round-off). */
export function traceReal(rho: CMat): number {
  return cmatTrace(rho).re;
}

export interface StateCheck {
  readonly hermiticity: number;
  readonly minEigenvalue: number;
  readonly trace: number;
}

/** Hermiticity error ‖ρ − ρ†‖, smallest eigenvalue and trace: the run-time invariants of a state. */
export function checkDensity(rho: CMat): StateCheck {
  const e = eigh(rho);
  return { hermiticity: cmatHermiticityError(rho), minEigenvalue: e.values[0], trace: traceReal(rho) };
}
