/**
 * Spin operators (ħ = 1) for any j, in the basis |j, m⟩ ordered m = +j, j−1, …, −j (row/column 0 is m = +j).
 * Spins are passed doubled (j2 = 2j) so that half-integers are exact.
 *   Jz|m⟩ = m|m⟩,  J±|m⟩ = √(j(j+1) − m(m±1)) |m±1⟩,  Jx = (J+ + J−)/2,  Jy = (J+ − J−)/(2i)
 * (Condon–Shortley phases; e.g. Sakurai, Modern Quantum Mechanics, §3.5).
 */
import { type CMat, cmatZeros, cmatKron, cmatIdentity, cmatAdd, cmatScale, cmatCombine } from './cmat.ts';

export type SpinAxisName = 'x' | 'y' | 'z' | '+' | '-';

export interface SpinOperators {
  readonly j2: number;
  readonly dim: number;
  readonly jx: CMat;
  readonly jy: CMat;
  readonly jz: CMat;
  readonly jp: CMat;
  readonly jm: CMat;
}

/** Largest 2j accepted (j = 31/2, d = 32 for one spin). */
export const MAX_J2 = 31;

/** Checks that j2 = 2j is a non-negative integer within range; throws a RangeError naming the value. */
export function assertJ2(j2: number): void {
  if (!Number.isInteger(j2) || j2 < 0) throw new RangeError(`2j must be a non-negative integer, got ${j2}`);
  if (j2 > MAX_J2) throw new RangeError(`2j = ${j2} is above the supported maximum ${MAX_J2} (j = 31/2)`);
}

/** m values in basis order: m_k = j − k, k = 0 … 2j. */
export function mValues(j2: number): number[] {
  assertJ2(j2);
  return Array.from({ length: j2 + 1 }, (_, k) => j2 / 2 - k);
}

const cache = new Map<number, SpinOperators>();

/** All spin operators of spin j = j2/2 (cached; treat the result as read-only). */
export function spinOperators(j2: number): SpinOperators {
  assertJ2(j2);
  const hit = cache.get(j2);
  if (hit) return hit;
  const d = j2 + 1;
  const j = j2 / 2;
  const jz = cmatZeros(d, d);
  const jp = cmatZeros(d, d);
  const jm = cmatZeros(d, d);
  for (let k = 0; k < d; k++) {
    const m = j - k;
    jz.re[k * d + k] = m;
    if (k > 0) {
      // J+ |m⟩ = c |m+1⟩ : row k-1, column k
      jp.re[(k - 1) * d + k] = Math.sqrt(j * (j + 1) - m * (m + 1));
    }
    if (k < d - 1) {
      jm.re[(k + 1) * d + k] = Math.sqrt(j * (j + 1) - m * (m - 1));
    }
  }
  const jx = cmatScale(cmatAdd(jp, jm), 0.5);
  // Jy = (J+ − J−)/(2i) = −i/2 (J+ − J−)
  const jy = cmatScale(cmatCombine([[1, jp], [-1, jm]]), 0, -0.5);
  const ops = { j2, dim: d, jx, jy, jz, jp, jm };
  cache.set(j2, ops);
  return ops;
}

/** One spin operator by name. */
export function spinMatrix(j2: number, axis: SpinAxisName): CMat {
  const o = spinOperators(j2);
  return { x: o.jx, y: o.jy, z: o.jz, '+': o.jp, '-': o.jm }[axis];
}

/** n̂·J for a unit vector n̂ = (nx, ny, nz). */
export function spinAlong(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>, n: { x: number; y: number; z: number }): CMat {
  return cmatCombine([[n.x, ops.jx], [n.y, ops.jy], [n.z, ops.jz]]);
}

/**
 * Composite space I ⊗ J (nuclear spin first, electron second): basis |m_I, m_J⟩ with index
 * a·(2J+1) + b, m_I = I − a, m_J = J − b. Returns I and J embedded, and F = I + J.
 */
export interface CompositeSpin {
  readonly i2: number;
  readonly j2: number;
  readonly dim: number;
  readonly I: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>;
  readonly J: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>;
  readonly F: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>;
}

const compositeCache = new Map<string, CompositeSpin>();

export function compositeSpin(i2: number, j2: number): CompositeSpin {
  const key = `${i2}/${j2}`;
  const hit = compositeCache.get(key);
  if (hit) return hit;
  const si = spinOperators(i2);
  const sj = spinOperators(j2);
  const ii = cmatIdentity(si.dim);
  const ij = cmatIdentity(sj.dim);
  const I = { jx: cmatKron(si.jx, ij), jy: cmatKron(si.jy, ij), jz: cmatKron(si.jz, ij) };
  const J = { jx: cmatKron(ii, sj.jx), jy: cmatKron(ii, sj.jy), jz: cmatKron(ii, sj.jz) };
  const F = { jx: cmatAdd(I.jx, J.jx), jy: cmatAdd(I.jy, J.jy), jz: cmatAdd(I.jz, J.jz) };
  const c = { i2, j2, dim: si.dim * sj.dim, I, J, F };
  compositeCache.set(key, c);
  return c;
}

/** J² = Jx² + Jy² + Jz² (a check operator: equals j(j+1)·1). */
export function spinSquared(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>): CMat {
  const sq = (a: CMat) => cmatMulSelf(a);
  return cmatCombine([[1, sq(ops.jx)], [1, sq(ops.jy)], [1, sq(ops.jz)]]);
}

function cmatMulSelf(a: CMat): CMat {
  const n = a.rows;
  const out = cmatZeros(n, n);
  for (let i = 0; i < n; i++) {
    for (let p = 0; p < n; p++) {
      const xr = a.re[i * n + p], xi = a.im[i * n + p];
      if (xr === 0 && xi === 0) continue;
      for (let j = 0; j < n; j++) {
        out.re[i * n + j] += xr * a.re[p * n + j] - xi * a.im[p * n + j];
        out.im[i * n + j] += xr * a.im[p * n + j] + xi * a.re[p * n + j];
      }
    }
  }
  return out;
}

/** Formats m (or any half-integer) as a signed label: "+1/2", "-3/2", "+1", "0". */
export function formatHalfInteger(x2: number, signed: boolean = true): string {
  if (x2 === 0) return '0';
  const sign = x2 > 0 ? (signed ? '+' : '') : '-';
  const a = Math.abs(x2);
  return a % 2 === 0 ? `${sign}${a / 2}` : `${sign}${a}/2`;
}
