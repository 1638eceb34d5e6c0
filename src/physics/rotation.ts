/**
 * Rotations of spin states and axes.
 *   R(α, n̂) = exp(−i α n̂·J)                 (active rotation by α about n̂, ħ = 1)
 *   D(α, β, γ) = exp(−iαJz) exp(−iβJy) exp(−iγJz),   d^j_{m′m}(β) = ⟨j m′| exp(−iβJy) |j m⟩
 * (Wigner/Condon–Shortley convention, as tabulated by the Particle Data Group review
 * "Clebsch-Gordan coefficients, spherical harmonics, and d functions").
 */
import { type CMat, cmatMul, cmatZeros } from './cmat.ts';
import { eigh, spectralFunction } from './eigh.ts';
import { CacheFamily, IdentityCache } from './cache.ts';
import { spinOperators, spinAlong, type SpinOperators } from './spin.ts';

export interface Vec3 {
  readonly x: number;
  readonly y: number;
  readonly z: number;
}

/** Unit axis n̂(θ, φ) = (sinθ cosφ, sinθ sinφ, cosθ). */
export function axisFromAngles(theta: number, phi: number): Vec3 {
  return { x: Math.sin(theta) * Math.cos(phi), y: Math.sin(theta) * Math.sin(phi), z: Math.cos(theta) };
}

/** Roll α about the beam (+y): n̂ = (sin α, 0, cos α). */
export function axisFromRoll(alpha: number): Vec3 {
  return { x: Math.sin(alpha), y: 0, z: Math.cos(alpha) };
}

/** Polar angles (θ, φ) of a non-zero vector. */
export function anglesOf(n: Vec3): { theta: number; phi: number } {
  // atan2 keeps full precision near the poles, where acos(z) loses it
  return { theta: Math.atan2(Math.hypot(n.x, n.y), n.z), phi: Math.atan2(n.y, n.x) };
}

export function vecNorm(v: Vec3): number {
  // √(x² + y² + z²) where the squares neither overflow nor underflow (Math.hypot, which guards against
  // both, measured several times slower, and a field region asks for its norm at every point)
  const s = v.x * v.x + v.y * v.y + v.z * v.z;
  if (s > 1e-290 && s < 1e290) return Math.sqrt(s);
  return Math.hypot(v.x, v.y, v.z);
}
export function vecScale(v: Vec3, s: number): Vec3 {
  return { x: v.x * s, y: v.y * s, z: v.z * s };
}
export function vecUnit(v: Vec3): Vec3 {
  const r = vecNorm(v);
  return { x: v.x / r, y: v.y / r, z: v.z / r };
}
export function vecDot(a: Vec3, b: Vec3): number {
  return a.x * b.x + a.y * b.y + a.z * b.z;
}
export function vecCross(a: Vec3, b: Vec3): Vec3 {
  return { x: a.y * b.z - a.z * b.y, y: a.z * b.x - a.x * b.z, z: a.x * b.y - a.y * b.x };
}
export function vecAdd(a: Vec3, b: Vec3): Vec3 {
  return { x: a.x + b.x, y: a.y + b.y, z: a.z + b.z };
}

/** exp(−i α n̂·J) for any operator triple (a single spin or the total F of a composite space). */
export function rotationOperator(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>, n: Vec3, alpha: number): CMat {
  const u = vecUnit(n);
  // the generator's eigenvectors do not depend on the angle: found once per spin and axis (a scan of a roll angle asks
  // for the same two axes at every point), the same numbers as found afresh
  const byAxis = generators.getOr(ops, () => new Map());
  const key = `${u.x},${u.y},${u.z}`;
  let eg = byAxis.get(key);
  if (eg) generatorAxes.hits++;
  else {
    generatorAxes.misses++;
    eg = eigh(spinAlong(ops, u));
    generatorAxes.put(byAxis, key, eg);
  }
  return spectralFunction(eg, (l) => [Math.cos(alpha * l), -Math.sin(alpha * l)]);
}

// (registered with the engine's caches: bounded, counted, emptied by clearCaches)
const generators = new IdentityCache<object, Map<string, ReturnType<typeof eigh>>>('rotation generators by spin');
const generatorAxes = new CacheFamily('rotation generator axes per spin', 64);

/** Wigner small-d matrix d^j(β) in the basis m = +j … −j (row m′, column m). */
export function wignerSmallD(j2: number, beta: number): CMat {
  return rotationOperator(spinOperators(j2), { x: 0, y: 1, z: 0 }, beta);
}

/** Wigner D matrix D^j(α, β, γ) = exp(−iαJz) d^j(β) exp(−iγJz). */
export function wignerD(j2: number, alpha: number, beta: number, gamma: number): CMat {
  const d = wignerSmallD(j2, beta);
  const n = j2 + 1;
  const out = cmatZeros(n, n);
  for (let r = 0; r < n; r++) {
    const mp = j2 / 2 - r;
    for (let c = 0; c < n; c++) {
      const m = j2 / 2 - c;
      const ph = -(alpha * mp + gamma * m);
      const cr = Math.cos(ph), ci = Math.sin(ph);
      const xr = d.re[r * n + c], xi = d.im[r * n + c];
      out.re[r * n + c] = xr * cr - xi * ci;
      out.im[r * n + c] = xr * ci + xi * cr;
    }
  }
  return out;
}

/**
 * Wigner's explicit formula for d^j_{m′m}(β) (Wigner 1931; Sakurai Eq. 3.8.33), an independent
 * evaluation used to check the operator exponential.
 */
export function wignerSmallDFormula(j2: number, mp2: number, m2: number, beta: number): number {
  const j = j2 / 2, mp = mp2 / 2, m = m2 / 2;
  const f = (x: number) => factorial(Math.round(x));
  const pre = Math.sqrt(f(j + mp) * f(j - mp) * f(j + m) * f(j - m));
  let sum = 0;
  const c = Math.cos(beta / 2), s = Math.sin(beta / 2);
  for (let k = 0; k <= 2 * j; k++) {
    const a = j + m - k, b = k, cc = j - k - mp, dd = k - m + mp;
    if (a < 0 || cc < 0 || dd < 0) continue;
    const term = ((k - m + mp) % 2 === 0 ? 1 : -1) / (f(a) * f(b) * f(cc) * f(dd));
    sum += term * c ** (2 * j + m - mp - 2 * k) * s ** (mp - m + 2 * k);
  }
  return pre * sum;
}

const factCache: number[] = [1];
function factorial(n: number): number {
  for (let i = factCache.length; i <= n; i++) factCache[i] = factCache[i - 1] * i;
  return factCache[n];
}

/**
 * The rotation exp(−iφJz) exp(−iθJy) that carries ẑ onto n̂(θ, φ): |j m⟩ along n̂ is its column m.
 */
export function rotationToAxis(ops: Pick<SpinOperators, 'jx' | 'jy' | 'jz'>, n: Vec3): CMat {
  const { theta, phi } = anglesOf(n);
  const ry = rotationOperator(ops, { x: 0, y: 1, z: 0 }, theta);
  const rz = rotationOperator(ops, { x: 0, y: 0, z: 1 }, phi);
  return cmatMul(rz, ry);
}
