/**
 * The RF flipper's physics: an oscillating field B1 cos(ωt + φ) along `axis` in a static field B_s n̂ over
 * `length`, in the rotating-wave approximation.
 *
 * In the frame R(t) = exp(−iσ(ωt + φ) F_s), F_s = n̂·F, σ the sense of the Larmor precession of the upper
 * manifold (σ = +1 for g_F > 0), the co-rotating half of the field, (B1⊥/2)(x̂′ cos(ωt + φ) + σ ŷ′ sin(ωt + φ)),
 * stands still and H′ = H(B_s) − σω F_s + (B1⊥/2)·Zeeman(x̂′) does not depend on time (Rabi, Ramsey and
 * Schwinger, Rev. Mod. Phys. 26, 167 (1954); common practice). With the entrance at t = 0 the lab-frame map is
 *   U(φ) = e^{−iσωT F_s} · R_φ e^{−iH′T} R_φ†,   R_φ = e^{−iσφ F_s},   T = length / v,
 * i.e. the entry phase turns the rotating-frame Hamiltonian about n̂ by σφ.
 *
 * A continuous beam meets the RF at every phase, uniformly: ρ → (1/2π)∫ U(φ) ρ U(φ)† dφ. In the eigenbasis of
 * F_s (eigenvalues m), R_φ multiplies ρ_mm′ by e^{−iσφ(m − m′)}, so the average keeps of U ρ U† only the parts
 * where the output coherence order k − k′ equals the input order m − m′: coherences across the static field
 * are dephased, populations along it are not. The integrand is a trigonometric polynomial in φ of degree at
 * most 2D (D = 2F_max, the spread of m), so the mean over N = 2D + 1 equally spaced phases is the exact
 * average (a discrete Fourier sum). The engine runs the subtree behind the flipper once per phase with weight
 * 1/N. A pulsed beam locked to the RF has one entry phase, the element's `phase`.
 */
import { type CMat, cmatCombine, cmatDagger, cmatMul, cmatScale } from '../physics/cmat.ts';
import { eigh } from '../physics/eigh.ts';
import { gF } from '../physics/hyperfine.ts';
import { rotationOperator, vecDot, vecNorm, vecUnit, type Vec3 } from '../physics/rotation.ts';
import type { RfFlipper } from '../beamline/types.ts';
import type { SpinSystem } from './system.ts';

export class RfError extends Error {}

export interface RfMap {
  /** H′ turned by each entry phase (rad/s): one per branch, applied over the element's length. */
  readonly rotating: readonly CMat[];
  /** σω F_s (rad/s): the return from the rotating frame, applied after H′ over the same length. */
  readonly frame: CMat;
  /** The entry phases (rad), one per branch, of equal weight. */
  readonly phases: readonly number[];
}

/** N = 2D + 1 entry phases average a continuous beam exactly; D = 2F_max is the spread of F_s's eigenvalues. */
export function entryPhaseCount(fs: CMat): number {
  const { values } = eigh(fs);
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < values.length; i++) {
    lo = Math.min(lo, values[i]);
    hi = Math.max(hi, values[i]);
  }
  return 2 * Math.round(hi - lo) + 1;
}

/** The flipper's maps for `sys` (module doc); RfError names the key of a flipper that drives no flip. */
export function rfMap(sys: SpinSystem, e: RfFlipper, path: string): RfMap {
  const bs = e.static;
  if (!(vecNorm(bs) > 0)) throw new RfError(`${path}.static: an RF flipper needs a static field > 0 (it sets the rotating frame)`);
  const ns = vecUnit(bs);
  const along = vecDot(e.axis, ns);
  const perp: Vec3 = { x: e.axis.x - along * ns.x, y: e.axis.y - along * ns.y, z: e.axis.z - along * ns.z };
  const pn = vecNorm(perp);
  if (pn < 1e-9) throw new RfError(`${path}.axis: the RF field is parallel to the static field and drives no spin flip`);
  const ex = vecUnit(perp);
  const b1 = (e.amplitude * pn) / 2;
  const h0 = sys.hamiltonian({ x: 0, y: 0, z: 0 });
  const zeemanX = cmatCombine([[1, sys.hamiltonian({ x: ex.x * b1, y: ex.y * b1, z: ex.z * b1 })], [-1, h0]]);
  const fs = cmatCombine([[ns.x, sys.F.jx], [ns.y, sys.F.jy], [ns.z, sys.F.jz]]);
  // sense of the rotating frame: that of the Larmor precession of the upper manifold (g_F > 0: ω along −n̂·F)
  const gUp = sys.hyperfine ? gF(sys.params, sys.params.i2 + sys.params.j2) : sys.params.gJ;
  const sigma = gUp >= 0 ? 1 : -1;
  const omega = 2 * Math.PI * e.frequency;
  const hRot = cmatCombine([[1, sys.hamiltonian(bs)], [-sigma * omega, fs], [1, zeemanX]]);
  const n = e.phase === undefined ? entryPhaseCount(fs) : 1;
  const phases = e.phase === undefined ? Array.from({ length: n }, (_, j) => (2 * Math.PI * j) / n) : [e.phase];
  const rotating = phases.map((phi) => {
    if (phi === 0) return hRot;
    const r = rotationOperator(sys.F, ns, sigma * phi);
    return turned(r, hRot);
  });
  return { rotating, frame: cmatScale(fs, sigma * omega), phases };
}

/** R H R† for unitary R, made exactly Hermitian (the eigensolver reads the upper triangle). */
function turned(r: CMat, h: CMat): CMat {
  const out = cmatMul(cmatMul(r, h), cmatDagger(r));
  const d = out.rows;
  for (let a = 0; a < d; a++) {
    out.im[a * d + a] = 0;
    for (let b = a + 1; b < d; b++) {
      const re = (out.re[a * d + b] + out.re[b * d + a]) / 2, im = (out.im[a * d + b] - out.im[b * d + a]) / 2;
      out.re[a * d + b] = re; out.im[a * d + b] = im;
      out.re[b * d + a] = re; out.im[b * d + a] = -im;
    }
  }
  return out;
}

/**
 * How much the leaves behind a flipper depend on the entry phase: the largest |y_j − ȳ| over the leaves, where
 * y_j is a leaf's yield (fraction of the oven flux) had every atom entered at phase j. `yields[j]` are the
 * leaves of branch j in the order the walk reached them, each already weighted 1/N; undefined when the
 * branches' leaves do not correspond.
 */
export function phaseSpread(yields: readonly (readonly number[])[]): number | undefined {
  const n = yields.length;
  if (n < 2) return 0;
  const m = yields[0].length;
  if (yields.some((y) => y.length !== m)) return undefined;
  let worst = 0;
  for (let i = 0; i < m; i++) {
    let mean = 0;
    for (let j = 0; j < n; j++) mean += yields[j][i];
    for (let j = 0; j < n; j++) worst = Math.max(worst, Math.abs(n * yields[j][i] - mean));
  }
  return worst;
}
