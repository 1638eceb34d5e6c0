/**
 * Ground-state hyperfine structure in a static field: Hamiltonian, Zeeman levels with their labels,
 * zero-field |F, m_F⟩ states, Landé g_F.
 *
 *   H/h = A I·J + B_hfs [3(I·J)² + (3/2)(I·J) − I(I+1)J(J+1)] / [2I(2I−1)J(2J−1)]   (quadrupole where I, J ≥ 1)
 *         + (μB/h)(g_J J + g_I I)·B                                                 (Steck, Rb 87 D Line Data, Eqs. 16, 20)
 *
 * in Hz, on the composite basis |m_I, m_J⟩ of compositeSpin(i2, j2) (nuclear spin first, index a·(2J+1)+b).
 * I and J are dimensionless, so g_I = −μ_I/(I μB). A bare spin is i2 = 0, gI = 0, aHz = 0, gJ = g.
 * Every term is traceless (Tr(I_a ⊗ J_b) = Tr I_a · Tr J_b = 0; the quadrupole operator is a rank-2
 * tensor), so the energies are those of "H as written" in docs/design.md without any shift.
 *
 * Labels (docs/design.md, "Port labels"), by adiabatic continuation inside one m_F block, where levels do
 * not cross (von Neumann–Wigner: H(B ẑ) commutes with F_z and has no other symmetry in the block):
 *   lowField  "F=2,mF=+1": the block's eigenvalues ranked ascending are matched with the block's F values
 *             ranked by their zero-field energy E_F = A K/2 + B_hfs[(3/2)K(K+1) − 2I(I+1)J(J+1)]/[4I(2I−1)J(2J−1)],
 *             K = F(F+1) − I(I+1) − J(J+1) (so A < 0, as in K-40, gives the inverted order); equal E_F: larger F above.
 *   highField "mJ=+1/2,mI=+3/2": the block's eigenvalues ranked ascending are matched with its |m_I, m_J⟩
 *             ranked by the B → +∞ energy (g_J m_J + g_I m_I) μB B + ⟨m_I m_J|H_hfs|m_I m_J⟩: first by the
 *             coefficient of B, then by the diagonal hyperfine energy (A m_I m_J + quadrupole), then by m_J.
 *   Bare spin (i2 = 0): lowField is the m label "+1/2", highField "mJ=+1/2".
 */
import { BoundedCache } from './cache.ts';
import { type CMat, cmatZeros, cmatMul, cmatCombine, cmatKron, cmatIdentity, cmatAdd, zeroedF64, cmatOwn } from './cmat.ts';
import { MU_B_OVER_H } from './constants.ts';
import { eigh } from './eigh.ts';
import { compositeSpin, spinOperators, spinSquared, formatHalfInteger, assertJ2 } from './spin.ts';
import { rotationToAxis, vecNorm, type Vec3 } from './rotation.ts';

export { MU_B_OVER_H };

export interface HyperfineParams {
  /** 2I */
  readonly i2: number;
  /** 2J */
  readonly j2: number;
  readonly gJ: number;
  /** nuclear g in units of μB (g_I = −μ_I/(I μB)) */
  readonly gI: number;
  /** magnetic dipole constant A, Hz */
  readonly aHz: number;
  /** electric quadrupole constant B, Hz (only where I ≥ 1 and J ≥ 1) */
  readonly bHz?: number;
}

export interface Level {
  /** position in the returned list (energy ascending) */
  readonly index: number;
  /** eigenvalue of H/h, Hz */
  readonly energyHz: number;
  /** μ_eff in μB: −⟨k|∂H/∂B|k⟩/μB = −⟨g_J J_n + g_I I_n⟩ (Hellmann–Feynman) */
  readonly moment: number;
  /** 2 m_F along n̂ (exact quantum number of H(B n̂)) */
  readonly mF2: number;
  /** 2F of the low-field partner */
  readonly F2: number;
  /** 2 m_J, 2 m_I of the high-field partner */
  readonly mJ2: number;
  readonly mI2: number;
  readonly lowField: string;
  readonly highField: string;
  /** eigenvector (d×1) on the composite basis */
  readonly vector: CMat;
}

export interface ZeemanLevels {
  readonly levels: readonly Level[];
  /** eigenvectors as columns, in level order */
  readonly vectors: CMat;
  /** eigenvalues of H/h in Hz, ascending, in level order */
  readonly values: Float64Array;
}

interface Structure {
  readonly i2: number;
  readonly j2: number;
  readonly dim: number;
  readonly mI2: Int32Array;
  readonly mJ2: Int32Array;
  /** I·J */
  readonly ij: CMat;
  /** quadrupole operator [3(I·J)² + (3/2)I·J − I(I+1)J(J+1)]/[2I(2I−1)J(2J−1)], where I, J ≥ 1 */
  readonly q?: CMat;
  /** basis indices of each m_F block, m_F descending */
  readonly blocks: readonly { readonly mF2: number; readonly idx: readonly number[] }[];
  /** zero-field |F, m_F⟩ along ẑ (Condon–Shortley), F descending then m_F descending */
  readonly zf: CMat;
  readonly zfF2: readonly number[];
  readonly zfM2: readonly number[];
}

const structures = new Map<string, Structure>();

function structureOf(i2: number, j2: number): Structure {
  const key = `${i2}/${j2}`;
  const hit = structures.get(key);
  if (hit) return hit;
  const c = compositeSpin(i2, j2);
  const d = c.dim;
  const mI2 = new Int32Array(d), mJ2 = new Int32Array(d);
  for (let a = 0; a <= i2; a++) for (let b = 0; b <= j2; b++) {
    mI2[a * (j2 + 1) + b] = i2 - 2 * a;
    mJ2[a * (j2 + 1) + b] = j2 - 2 * b;
  }
  const ij = cmatCombine([[1, cmatMul(c.I.jx, c.J.jx)], [1, cmatMul(c.I.jy, c.J.jy)], [1, cmatMul(c.I.jz, c.J.jz)]]);
  let q: CMat | undefined;
  if (i2 >= 2 && j2 >= 2) {
    const I = i2 / 2, J = j2 / 2;
    const den = 2 * I * (2 * I - 1) * J * (2 * J - 1);
    q = cmatCombine([[3 / den, cmatMul(ij, ij)], [1.5 / den, ij], [-(I * (I + 1) * J * (J + 1)) / den, cmatIdentity(d)]]);
  }
  const blocks: { mF2: number; idx: number[] }[] = [];
  for (let m = i2 + j2; m >= -(i2 + j2); m -= 2) {
    const idx: number[] = [];
    for (let k = 0; k < d; k++) if (mI2[k] + mJ2[k] === m) idx.push(k);
    blocks.push({ mF2: m, idx });
  }
  const { zf, zfF2, zfM2 } = zeroFieldBasisZ(i2, j2, d, mI2, blocks, c.F);
  const s: Structure = { i2, j2, dim: d, mI2, mJ2, ij, q, blocks, zf, zfF2, zfM2 };
  structures.set(key, s);
  return s;
}

/**
 * |F, m_F⟩ along ẑ: the top state |F, F⟩ is the F(F+1) eigenvector of F² in the m_F = F block, with
 * the phase of Condon–Shortley (⟨I, I; J, F−I | F, F⟩ > 0, I coupled first); lower m_F follow by
 * F−|F, m⟩ = √(F(F+1) − m(m−1)) |F, m−1⟩, so all Clebsch–Gordan coefficients are real.
 */
function zeroFieldBasisZ(
  i2: number, j2: number, d: number, mI2: Int32Array,
  blocks: readonly { mF2: number; idx: readonly number[] }[], F: { jx: CMat; jy: CMat; jz: CMat },
): { zf: CMat; zfF2: number[]; zfM2: number[] } {
  const f2op = spinSquared(F);
  const si = spinOperators(i2), sj = spinOperators(j2);
  const fMinus = cmatAdd(cmatKron(si.jm, cmatIdentity(j2 + 1)), cmatKron(cmatIdentity(i2 + 1), sj.jm));
  const zf = cmatZeros(d, d);
  const zfF2: number[] = [], zfM2: number[] = [];
  let col = 0;
  for (let f2 = i2 + j2; f2 >= Math.abs(i2 - j2); f2 -= 2) {
    const block = blocks.find((b) => b.mF2 === f2)!;
    const sub = submatrix(f2op, block.idx);
    const e = eigh(sub);
    const ff = (f2 / 2) * (f2 / 2 + 1);
    let best = 0;
    for (let k = 1; k < e.values.length; k++) if (Math.abs(e.values[k] - ff) < Math.abs(e.values[best] - ff)) best = k;
    const n = block.idx.length;
    let vr = new Float64Array(d), vi = new Float64Array(d);
    for (let r = 0; r < n; r++) {
      vr[block.idx[r]] = e.vectors.re[r * n + best];
      vi[block.idx[r]] = e.vectors.im[r * n + best];
    }
    // phase: component m_I = I real positive
    const top = block.idx.find((k) => mI2[k] === i2)!;
    const mag = Math.hypot(vr[top], vi[top]);
    const pr = vr[top] / mag, pi = -vi[top] / mag;
    for (let k = 0; k < d; k++) {
      const a = vr[k], b = vi[k];
      vr[k] = a * pr - b * pi;
      vi[k] = a * pi + b * pr;
    }
    vi[top] = 0;
    for (let m2 = f2; m2 >= -f2; m2 -= 2) {
      for (let k = 0; k < d; k++) { zf.re[k * d + col] = vr[k]; zf.im[k * d + col] = vi[k]; }
      zfF2.push(f2); zfM2.push(m2);
      col++;
      if (m2 === -f2) break;
      const F_ = f2 / 2, m = m2 / 2;
      const norm = Math.sqrt(F_ * (F_ + 1) - m * (m - 1));
      const nr = new Float64Array(d), ni = new Float64Array(d);
      for (let r = 0; r < d; r++) {
        let sr = 0, sim = 0;
        for (let k = 0; k < d; k++) {
          const ar = fMinus.re[r * d + k];
          if (ar === 0) continue;
          sr += ar * vr[k]; sim += ar * vi[k];
        }
        nr[r] = sr / norm; ni[r] = sim / norm;
      }
      vr = nr; vi = ni;
    }
  }
  return { zf, zfF2, zfM2 };
}

function submatrix(a: CMat, idx: readonly number[]): CMat {
  const n = idx.length;
  const out = cmatZeros(n, n);
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) {
    out.re[r * n + c] = a.re[idx[r] * a.cols + idx[c]];
    out.im[r * n + c] = a.im[idx[r] * a.cols + idx[c]];
  }
  return out;
}

function checkParams(p: HyperfineParams): void {
  assertJ2(p.i2);
  assertJ2(p.j2);
  for (const k of ['gJ', 'gI', 'aHz'] as const) {
    if (!Number.isFinite(p[k])) throw new RangeError(`hyperfine parameter ${k} must be a finite number, got ${p[k]}`);
  }
  if (p.bHz !== undefined) {
    if (!Number.isFinite(p.bHz)) throw new RangeError(`hyperfine parameter bHz must be a finite number, got ${p.bHz}`);
    if (p.bHz !== 0 && (p.i2 < 2 || p.j2 < 2)) {
      throw new RangeError(`a quadrupole constant B applies only where I ≥ 1 and J ≥ 1 (here 2I = ${p.i2}, 2J = ${p.j2})`);
    }
  }
}

/** H/h in Hz on the |m_I, m_J⟩ basis for the field vector B (T); formula in the module doc. */
export function hyperfineHamiltonianHz(p: HyperfineParams, b: Vec3): CMat {
  checkParams(p);
  const s = structureOf(p.i2, p.j2);
  const c = compositeSpin(p.i2, p.j2);
  const terms: [number, CMat][] = [[p.aHz, s.ij]];
  if (s.q && p.bHz) terms.push([p.bHz, s.q]);
  const cj = MU_B_OVER_H * p.gJ, ci = MU_B_OVER_H * p.gI;
  terms.push([cj * b.x, c.J.jx], [cj * b.y, c.J.jy], [cj * b.z, c.J.jz]);
  terms.push([ci * b.x, c.I.jx], [ci * b.y, c.I.jy], [ci * b.z, c.I.jz]);
  return cmatCombine(terms);
}

/**
 * Zero-field energy of the level F (doubled F2) relative to the centroid, Hz:
 * E_F = A K/2 + B_hfs [(3/2)K(K+1) − 2I(I+1)J(J+1)] / [4I(2I−1)J(2J−1)], K = F(F+1) − I(I+1) − J(J+1)
 * (Steck, Rubidium 87 D Line Data, Eq. 16).
 */
export function zeroFieldEnergyHz(p: HyperfineParams, f2: number): number {
  const I = p.i2 / 2, J = p.j2 / 2, F = f2 / 2;
  const K = F * (F + 1) - I * (I + 1) - J * (J + 1);
  let e = (p.aHz * K) / 2;
  if (p.bHz && p.i2 >= 2 && p.j2 >= 2) {
    e += (p.bHz * (1.5 * K * (K + 1) - 2 * I * (I + 1) * J * (J + 1))) / (4 * I * (2 * I - 1) * J * (2 * J - 1));
  }
  return e;
}

/**
 * Zero-field splitting between the two highest-F levels, E(F = I+J) − E(F = I+J−1), Hz; A(I+½) for
 * J = ½ (negative for an inverted structure); 0 without hyperfine structure.
 */
export function hyperfineSplittingHz(p: HyperfineParams): number {
  if (p.i2 === 0 || p.j2 === 0) return 0;
  const top = p.i2 + p.j2;
  return zeroFieldEnergyHz(p, top) - zeroFieldEnergyHz(p, top - 2);
}

/**
 * Landé g_F = g_J [F(F+1) − I(I+1) + J(J+1)]/[2F(F+1)] + g_I [F(F+1) + I(I+1) − J(J+1)]/[2F(F+1)]
 * (Steck, Rb 87 D Line Data, Eq. 22 with the g_I term); 0 for F = 0.
 */
export function gF(p: HyperfineParams, f2: number): number {
  if (f2 === 0) return 0;
  const I = p.i2 / 2, J = p.j2 / 2, F = f2 / 2;
  const ff = F * (F + 1), ii = I * (I + 1), jj = J * (J + 1);
  return (p.gJ * (ff - ii + jj) + p.gI * (ff + ii - jj)) / (2 * ff);
}

function lowLabel(p: HyperfineParams, f2: number, m2: number): string {
  return p.i2 === 0 ? formatHalfInteger(m2) : `F=${formatHalfInteger(f2, false)},mF=${formatHalfInteger(m2)}`;
}
function highLabel(p: HyperfineParams, mJ2: number, mI2: number): string {
  return p.i2 === 0 ? `mJ=${formatHalfInteger(mJ2)}` : `mJ=${formatHalfInteger(mJ2)},mI=${formatHalfInteger(mI2)}`;
}

interface RawLevel {
  energy: number;
  moment: number;
  mF2: number;
  F2: number;
  mJ2: number;
  mI2: number;
  /** eigenvector on the block's basis indices (real and imaginary parts) */
  idx: readonly number[];
  vr: Float64Array;
  vi: Float64Array;
}

/** Diagonalises H(B ẑ) block by block in m_F and labels every eigenstate (module doc). */
function blockLevels(p: HyperfineParams, fieldT: number): RawLevel[] {
  const s = structureOf(p.i2, p.j2);
  const hz = hyperfineHamiltonianHz(p, { x: 0, y: 0, z: fieldT });
  const hfsDiag = (k: number) => p.aHz * s.ij.re[k * s.dim + k] + (s.q && p.bHz ? p.bHz * s.q.re[k * s.dim + k] : 0);
  const out: RawLevel[] = [];
  for (const block of s.blocks) {
    const n = block.idx.length;
    const e = eigh(submatrix(hz, block.idx));
    // F values of the block ranked by zero-field energy (ascending; tie: smaller F below)
    const fs: number[] = [];
    for (let f2 = p.i2 + p.j2; f2 >= Math.max(Math.abs(p.i2 - p.j2), Math.abs(block.mF2)); f2 -= 2) fs.push(f2);
    fs.sort((a, b) => zeroFieldEnergyHz(p, a) - zeroFieldEnergyHz(p, b) || a - b);
    // |m_I, m_J⟩ of the block ranked by their B → +∞ energy
    const hs = block.idx.slice().sort((a, b) => {
      const la = p.gJ * s.mJ2[a] + p.gI * s.mI2[a], lb = p.gJ * s.mJ2[b] + p.gI * s.mI2[b];
      if (la !== lb) return la - lb;
      const da = hfsDiag(a), db = hfsDiag(b);
      if (da !== db) return da - db;
      return s.mJ2[a] - s.mJ2[b];
    });
    for (let k = 0; k < n; k++) {
      const vr = new Float64Array(n), vi = new Float64Array(n);
      let mu = 0;
      for (let r = 0; r < n; r++) {
        vr[r] = e.vectors.re[r * n + k];
        vi[r] = e.vectors.im[r * n + k];
        const w = vr[r] * vr[r] + vi[r] * vi[r];
        mu -= w * (p.gJ * s.mJ2[block.idx[r]] + p.gI * s.mI2[block.idx[r]]) / 2;
      }
      const f2 = fs[k];
      // phase: overlap with the zero-field |F, m_F⟩ (Condon–Shortley) real and positive
      const col = zfColumn(s, f2, block.mF2);
      let or = 0, oi = 0;
      for (let r = 0; r < n; r++) {
        const zr = s.zf.re[block.idx[r] * s.dim + col], zi = s.zf.im[block.idx[r] * s.dim + col];
        or += zr * vr[r] + zi * vi[r];
        oi += zr * vi[r] - zi * vr[r];
      }
      const mag = Math.hypot(or, oi);
      if (mag > 1e-300) {
        const pr = or / mag, pi = -oi / mag;
        for (let r = 0; r < n; r++) {
          const a = vr[r], b = vi[r];
          vr[r] = a * pr - b * pi;
          vi[r] = a * pi + b * pr;
        }
      }
      out.push({
        energy: e.values[k], moment: mu, mF2: block.mF2, F2: f2,
        mJ2: s.mJ2[hs[k]], mI2: s.mI2[hs[k]], idx: block.idx, vr, vi,
      });
    }
  }
  return out;
}

function zfColumn(s: Structure, f2: number, m2: number): number {
  for (let c = 0; c < s.zfF2.length; c++) if (s.zfF2[c] === f2 && s.zfM2[c] === m2) return c;
  throw new Error(`no zero-field state F2=${f2}, mF2=${m2}`);
}

const rotations = new BoundedCache<string, CMat>('rotations to an axis', 256);

/** exp(−iφF_z) exp(−iθF_y) on I ⊗ J, cached per species structure and axis (small cache). */
function axisRotation(i2: number, j2: number, n: Vec3): CMat | undefined {
  const r = vecNorm(n);
  if (n.x === 0 && n.y === 0 && n.z > 0) return undefined;
  // a scan along one axis asks for the same rotation at every point: the last one is kept by value
  const last = lastRotation;
  if (last && last.i2 === i2 && last.j2 === j2 && last.x === n.x / r && last.y === n.y / r && last.z === n.z / r) return last.rot;
  const key = `${i2}/${j2}/${n.x / r},${n.y / r},${n.z / r}`;
  const rot = rotations.getOr(key, () => cmatOwn(rotationToAxis(compositeSpin(i2, j2).F, n)));
  lastRotation = { i2, j2, x: n.x / r, y: n.y / r, z: n.z / r, rot };
  return rot;
}
let lastRotation: { i2: number; j2: number; x: number; y: number; z: number; rot: CMat } | null = null;

/**
 * R·V for V whose column c has non-zero entries only on the rows of its m_F block: each column of the
 * product combines at most block-size columns of R (the same numbers as a full product, fewer zeros).
 */
function mulBlockColumns(rot: CMat, v: CMat, blocks: readonly { idx: readonly number[] }[]): CMat {
  const d = v.rows;
  const out = cmatZeros(d, d);
  const rr = rot.re, ri = rot.im, vr = v.re, vi = v.im, or = out.re, oi = out.im;
  let col = 0;
  for (const block of blocks) {
    const idx = block.idx;
    for (let c = 0; c < idx.length; c++, col++) {
      for (const p of idx) {
        const xr = vr[p * d + col], xi = vi[p * d + col];
        if (xr === 0 && xi === 0) continue;
        for (let i = 0; i < d; i++) {
          const ar = rr[i * d + p], ai = ri[i * d + p];
          or[i * d + col] += ar * xr - ai * xi;
          oi[i * d + col] += ar * xi + ai * xr;
        }
      }
    }
  }
  return out;
}

function checkAxis(axis: Vec3): void {
  const r = vecNorm(axis);
  if (!Number.isFinite(r) || r === 0) throw new RangeError(`the quantisation axis must be a non-zero finite vector, got (${axis.x}, ${axis.y}, ${axis.z})`);
}

/**
 * Eigenstates of H(B n̂) with B = fieldT ≥ 0: H(B ẑ) is diagonalised in its m_F blocks (size ≤
 * min(2I, 2J) + 1) and the eigenvectors are carried to n̂ by R = exp(−iφF_z) exp(−iθF_y), since
 * H(B n̂) = R H(B ẑ) R† (A I·J and the quadrupole term are scalars under F). Levels come in ascending
 * energy; equal energies (within 1e-12 of the largest |E|) are ordered by m_F descending, then F
 * descending. Labels: module doc. Each eigenvector's phase makes its overlap with the zero-field
 * |F, m_F⟩ of zeroFieldStates real and positive. At fieldT = 0 the blocks (non-degenerate where
 * A ≠ 0) already give |F, m_F⟩ along n̂, so `moment` is exactly the weak-field limit −g_F m_F; no
 * auxiliary field is used.
 */
export function zeemanLevels(p: HyperfineParams, fieldT: number, axis: Vec3): ZeemanLevels {
  checkParams(p);
  checkAxis(axis);
  if (!Number.isFinite(fieldT) || fieldT < 0) throw new RangeError(`the field size must be a finite number ≥ 0 T, got ${fieldT}`);
  const s = structureOf(p.i2, p.j2);
  const d = s.dim;
  const raw = blockLevels(p, fieldT);
  const scale = raw.reduce((m, l) => Math.max(m, Math.abs(l.energy)), 0);
  const tol = 1e-12 * scale;
  raw.sort((a, b) => (Math.abs(a.energy - b.energy) > tol ? a.energy - b.energy : b.mF2 - a.mF2 || b.F2 - a.F2));
  const vz = cmatZeros(d, d);
  raw.forEach((l, c) => {
    l.idx.forEach((k, r) => { vz.re[k * d + c] = l.vr[r]; vz.im[k * d + c] = l.vi[r]; });
  });
  const rot = axisRotation(p.i2, p.j2, axis);
  const vectors = rot ? cmatMul(rot, vz) : vz;
  const values = new Float64Array(d);
  const levels: Level[] = raw.map((l, c) => {
    values[c] = l.energy;
    const vector = cmatZeros(d, 1);
    for (let k = 0; k < d; k++) { vector.re[k] = vectors.re[k * d + c]; vector.im[k] = vectors.im[k * d + c]; }
    return {
      index: c, energyHz: l.energy, moment: l.moment, mF2: l.mF2, F2: l.F2, mJ2: l.mJ2, mI2: l.mI2,
      lowField: lowLabel(p, l.F2, l.mF2), highField: highLabel(p, l.mJ2, l.mI2), vector,
    };
  });
  return { levels, vectors, values };
}

/**
 * Zero-field states |F, m_F⟩ quantised along n̂ (a bare spin: |j, m⟩ along n̂), as the columns of
 * `vectors` in the order F descending, then m_F descending (the order of stateLabels in
 * src/beamline/labels.ts), with labels "F=2,mF=+1" (bare: "+1/2"). Phases: Condon–Shortley along ẑ
 * (I coupled first, F− ladder with positive coefficients), then carried to n̂ by
 * R = exp(−iφF_z) exp(−iθF_y), the rotation of docs/design.md's pure state.
 */
export function zeroFieldStates(p: HyperfineParams, axis: Vec3): { labels: string[]; vectors: CMat } {
  checkParams(p);
  checkAxis(axis);
  const s = structureOf(p.i2, p.j2);
  const labels = s.zfF2.map((f2, c) => lowLabel(p, f2, s.zfM2[c]));
  const rot = axisRotation(p.i2, p.j2, axis);
  return { labels, vectors: rot ? cmatMul(rot, s.zf) : { ...s.zf, re: s.zf.re.slice(), im: s.zf.im.slice() } };
}

/** True when every level with m_J ≠ 0 has a moment of the sign of its m_J group, −sign(g_J m_J). */
function mjSortClean(p: HyperfineParams, fieldT: number): boolean {
  return blockLevels(p, fieldT).every((l) => l.mJ2 === 0 || l.moment * -Math.sign(p.gJ * l.mJ2) > 0);
}

/**
 * The field (T) above which every eigenstate's μ_eff inside each m_J group has that group's sign
 * −sign(g_J m_J) (m_J = 0 groups have no sign and are left out). Found by bisection on the sign test
 * over the Zeeman levels, bracketed from above by doubling from A(I+J)/(g_J μB/h); the sign test changes
 * once (for J = ½ the Breit–Rabi moment of each level changes sign once, at x ≈ −2m_F/(2I+1)). Returns
 * the upper end of the final bracket (width ≤ 1e-10 of the start), so the sort is clean at that field;
 * 0 for a species without hyperfine structure, and close to 0 where the sort is clean at any B > 0 (H).
 */
export function mjSortCleanField(p: HyperfineParams): number {
  checkParams(p);
  if (p.i2 === 0 || p.j2 === 0 || p.aHz === 0 && !p.bHz) return 0;
  if (mjSortClean(p, 0)) return 0;
  const start = (Math.abs(p.aHz) * (p.i2 + p.j2)) / 2 / (Math.abs(p.gJ) * MU_B_OVER_H);
  let hi = start;
  let guard = 0;
  while (!mjSortClean(p, hi)) {
    hi *= 2;
    if (++guard > 60) throw new Error('mjSortCleanField: no field up to 1e18 × A/(g_J μB/h) sorts cleanly by m_J');
  }
  let lo = 0;
  while (hi - lo > 1e-10 * start) {
    const mid = 0.5 * (lo + hi);
    if (mjSortClean(p, mid)) hi = mid;
    else lo = mid;
  }
  return hi;
}

/**
 * Eigen-decomposition of H(B n̂)/h without labels, for propagators: the m_F blocks of H(B ẑ) are
 * diagonalised (2×2 in closed form, larger ones by eigh) and carried to n̂ by the cached rotation
 * exp(−iφF_z) exp(−iθF_y). Values in Hz, in block order (not sorted); columns of `vectors` match.
 */
/** Diagonal entry k of H/h (Hz) along z at the Zeeman frequency zc = μB B/h (module-level: no closure per call). */
function hDiag(p: HyperfineParams, s: Structure, zc: number, k: number): number {
  const d = s.dim;
  return p.aHz * s.ij.re[k * d + k] + (s.q && p.bHz ? p.bHz * s.q.re[k * d + k] : 0) + zc * (p.gJ * s.mJ2[k] + p.gI * s.mI2[k]) / 2;
}
/** Off-diagonal entry (a, b) of H/h (Hz) along z (the Zeeman term is diagonal there). */
function hOff(p: HyperfineParams, s: Structure, a: number, b: number): number {
  const d = s.dim;
  return p.aHz * s.ij.re[a * d + b] + (s.q && p.bHz ? p.bHz * s.q.re[a * d + b] : 0);
}

/** The rows each column of a block-diagonal eigenvector matrix can be non-zero in (its m_F block). */
export interface ColumnSupport {
  /** Column c has rows rows[start[c]] … rows[start[c + 1] − 1]. */
  readonly start: Int32Array;
  readonly rows: Int32Array;
  /** Row i has columns cols[rowStart[i]] … cols[rowStart[i + 1] − 1] (the columns of its block). */
  readonly rowStart: Int32Array;
  readonly cols: Int32Array;
}

const supports = new WeakMap<object, ColumnSupport>();
function columnSupport(blocks: readonly { idx: readonly number[] }[]): ColumnSupport {
  let s = supports.get(blocks);
  if (!s) {
    const start: number[] = [0], rows: number[] = [];
    const byRow: number[][] = [];
    let col = 0;
    for (const b of blocks) for (let c = 0; c < b.idx.length; c++, col++) {
      rows.push(...b.idx);
      start.push(rows.length);
      for (const i of b.idx) (byRow[i] ??= []).push(col);
    }
    const rowStart: number[] = [0], cols: number[] = [];
    for (let i = 0; i < byRow.length; i++) {
      cols.push(...(byRow[i] ?? []));
      rowStart.push(cols.length);
    }
    s = { start: Int32Array.from(start), rows: Int32Array.from(rows), rowStart: Int32Array.from(rowStart), cols: Int32Array.from(cols) };
    supports.set(blocks, s);
  }
  return s;
}

export function zeemanEigen(p: HyperfineParams, fieldT: number, axis: Vec3): { values: Float64Array; readonly vectors: CMat; factors: { rot: CMat | undefined; blocks: CMat; support: ColumnSupport } } {
  const s = structureOf(p.i2, p.j2);
  const d = s.dim;
  const values = zeroedF64(d);
  const vz = cmatZeros(d, d);
  const zc = MU_B_OVER_H * fieldT;
  let col = 0;
  for (const block of s.blocks) {
    const idx = block.idx;
    if (idx.length === 1) {
      values[col] = hDiag(p, s, zc, idx[0]);
      vz.re[idx[0] * d + col] = 1;
      col++;
    } else if (idx.length === 2) {
      const a = hDiag(p, s, zc, idx[0]), c = hDiag(p, s, zc, idx[1]), b = hOff(p, s, idx[0], idx[1]);
      const mean = 0.5 * (a + c), half = 0.5 * (a - c);
      // √(half² + b²): both are frequencies (Hz, below 1e15), so the squares neither overflow nor underflow
      const r = Math.sqrt(half * half + b * b);
      // eigenvectors of [[a, b], [b, c]]: angle t with tan 2t = 2b/(a − c)
      // cos t and sin t without trigonometry: cos 2t = half/r and sin 2t = b/r, t = atan2(b, half)/2 in
      // (−π/2, π/2]; the larger of the two comes from its half-angle formula, the other from sin 2t / 2
      let ct = 1, st = 0;
      if (r > 0) {
        if (half >= 0) {
          ct = Math.sqrt(0.5 * (1 + half / r));
          st = b / (2 * r * ct);
        } else {
          st = (b < 0 ? -1 : 1) * Math.sqrt(0.5 * (1 - half / r));
          ct = b / (2 * r * st);
        }
      }
      values[col] = mean + r;
      vz.re[idx[0] * d + col] = ct;
      vz.re[idx[1] * d + col] = st;
      values[col + 1] = mean - r;
      vz.re[idx[0] * d + col + 1] = -st;
      vz.re[idx[1] * d + col + 1] = ct;
      col += 2;
    } else {
      const n = idx.length;
      const sub = cmatZeros(n, n);
      for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) sub.re[r * n + c] = r === c ? hDiag(p, s, zc, idx[r]) : hOff(p, s, idx[r], idx[c]);
      const e = eigh(sub);
      for (let k = 0; k < n; k++) {
        values[col] = e.values[k];
        for (let r = 0; r < n; r++) {
          vz.re[idx[r] * d + col] = e.vectors.re[r * n + k];
          vz.im[idx[r] * d + col] = e.vectors.im[r * n + k];
        }
        col++;
      }
    }
  }
  const rot = fieldT === 0 ? undefined : axisRotation(p.i2, p.j2, axis);
  // vectors = rot · blocks (blocks: the block-diagonal eigenvectors along z), kept for callers that
  // multiply by V† and can use the sparsity of the blocks; the product itself is formed on first use
  let vectors: CMat | undefined = rot ? undefined : vz;
  return {
    values,
    get vectors(): CMat {
      return (vectors ??= mulBlockColumns(rot!, vz, s.blocks));
    },
    factors: { rot, blocks: vz, support: columnSupport(s.blocks) },
  };
}
