/**
 * Beam velocity distributions (flux-weighted, normalised to 1) and the averages the engine needs.
 *
 *   effusive:   f(v) = 2 v³/a⁴ · exp(−v²/a²),  a = √(2kT/M)           (Ramsey, Molecular Beams, ch. II)
 *   supersonic: f(v) ∝ v³ exp(−(v − u)²/α²),   α = u/S                  (docs/design.md, "Velocity distributions")
 *   fixed:      δ(v − v₀)
 *   table:      Σ_k w_k δ(v − v_k), weights normalised by their sum, used as they are
 *
 * Everything velocity dependent in the engine is a sum of terms c·e^{−iΦ/v} (Φ in rad·m/s: a Bohr
 * frequency times a length). The average of one term is the characteristic function of the transit
 * variable s = 1/v,
 *
 *   χ_n(Φ) = ⟨s^n e^{−iΦ s}⟩ = ∫ f(v) v^{−n} e^{−iΦ/v} dv,
 *
 * computed frequency by frequency, so that no sampling grid can alias a fast phase:
 * - effusive: in u = v/a, χ_n = a^{−n} ∫₀^∞ 2u^{3−n} e^{−u²} e^{−iW/u} du with W = Φ/a. The integrand is
 *   analytic in the right half plane; for W > 0 the contour is rotated onto the ray u = r·e^{iπ/6}, where
 *   |integrand| = 2r^{3−n} exp(−r²/2 − W/(2r)) has no cancellation, and integrated by adaptive
 *   Gauss–Kronrod to ~1e-15 absolute. (W < 0 by complex conjugation.) This is exact for every W: at
 *   W = 10⁷ the result is ~exp(−1.5 (W/2)^{2/3}) ≈ 0 to all digits, instead of an aliased grid sum.
 * - supersonic: adaptive Gauss–Kronrod on the real axis over u ± 12α, with a Gaussian decay bound
 *   |χ| ≲ exp(−(Φα/u²)²/4) beyond which the term is zero to double precision.
 * - fixed and table: the exact finite sums.
 */
import { BoundedCache } from './cache.ts';
import { BOLTZMANN } from './constants.ts';
import { gaussLegendre, type Rule, integrateAdaptive, compositeRule } from './quadrature.ts';
import { reduceAngle } from './trig.ts';
import { chebFit, chebEval, type ChebPanel } from './chebyshev.ts';

export type VelocityDistribution =
  | { readonly kind: 'fixed'; readonly speed: number }
  | { readonly kind: 'effusive'; readonly a: number }
  | { readonly kind: 'supersonic'; readonly u: number; readonly alpha: number }
  | { readonly kind: 'table'; readonly speeds: Float64Array; readonly weights: Float64Array };

export { BOLTZMANN };

/** Effusive (flux-weighted) beam of temperature T and atomic mass M: a = √(2kT/M). */
export function effusiveDistribution(temperature: number, massKg: number): VelocityDistribution {
  return { kind: 'effusive', a: Math.sqrt((2 * BOLTZMANN * temperature) / massKg) };
}

export function supersonicDistribution(speed: number, ratio: number): VelocityDistribution {
  return { kind: 'supersonic', u: speed, alpha: speed / ratio };
}

export function tableDistribution(points: readonly (readonly [number, number])[]): VelocityDistribution {
  const total = points.reduce((s, p) => s + p[1], 0);
  return {
    kind: 'table',
    speeds: Float64Array.from(points, (p) => p[0]),
    weights: Float64Array.from(points, (p) => p[1] / total),
  };
}

export interface CharValue {
  re: number;
  im: number;
  /** Estimated absolute error. */
  error: number;
  /** Integrand evaluations (quadrature nodes) used. */
  nodes: number;
}

const SIN30 = 0.5, COS30 = Math.sqrt(3) / 2;

function gammaHalf(k2: number): number {
  // Γ(k2/2) for k2 = 1, 2, 3, 4
  return [NaN, Math.sqrt(Math.PI), 1, Math.sqrt(Math.PI) / 2, 1][k2];
}

/** I_n(W) = ∫₀^∞ 2u^{3−n} e^{−u²} e^{−iW/u} du for W ≥ 0, on the rotated ray. */
export function effusiveIntegral(n: number, w: number): CharValue {
  if (w === 0) {
    if (n >= 4) return { re: Infinity, im: 0, error: 0, nodes: 0 };
    return { re: gammaHalf(4 - n), im: 0, error: 0, nodes: 0 };
  }
  if (w > 2e4) return { re: 0, im: 0, error: Math.exp(-1.5 * Math.cbrt((w / 2) ** 2) + 10), nodes: 0 };
  const p = 3 - n;
  const ph0 = (4 - n) * (Math.PI / 6);
  const f = (r: number): readonly [number, number] => {
    if (r <= 0) return [0, 0];
    // E = −r² e^{iπ/3} − iW e^{−iπ/6}/r + i(4−n)π/6 + ln(2 r^p)
    const reE = -r * r * 0.5 - (w * SIN30) / r;
    if (reE < -745) return [0, 0];
    const imE = -r * r * COS30 - (w * COS30) / r + ph0;
    const mag = 2 * Math.pow(r, p) * Math.exp(reE);
    return [mag * Math.cos(imE), mag * Math.sin(imE)];
  };
  // the integrand peaks near r³ ≈ W/2 + …; integrate to where e^{−r²/2} is below 1e-30 of the peak
  const rPeak = Math.max(1, Math.cbrt(w / 2) * 1.2);
  const rMax = Math.sqrt(rPeak * rPeak + 2 * 80);
  const res = integrateAdaptive(f, 0, rMax, 1e-16, 1e-14, 4000);
  return { re: res.re, im: res.im, error: res.error + 1e-16, nodes: res.evaluations };
}

/**
 * I₀(W) and I₂(W) through lazily built Chebyshev panels (chebyshev.ts): width 1/2 on [1, 420], halving widths
 * towards 0 down to 2⁻¹⁴, degree 15; a panel whose fit is not good to 1e-14 is not used and the
 * integral is evaluated directly there and below 2⁻¹⁴; above W = 420, |I₀| < 1e-20 and is taken as 0
 * with that bound as its error.
 * I₀ does not depend on the beam's temperature or mass (W = Φ/a), so one table serves every line.
 */
const CHEB_N = 16;
const W_TOP = 420;
const panelsUniform = new Map<number, (ChebPanel | null | undefined)[]>();
const panelsSmall = new Map<number, (ChebPanel | null | undefined)[]>();

function fitPanel(n: number, a: number, b: number): ChebPanel | null {
  const p = chebFit((x) => effusiveIntegral(n, x), a, b, CHEB_N);
  return p.error < 1e-14 ? p : null;
}

function panelFor(n: number, w: number): ChebPanel | null {
  if (w >= 1) {
    let arr = panelsUniform.get(n);
    if (!arr) panelsUniform.set(n, (arr = []));
    const i = Math.floor((w - 1) * 2);
    let p = arr[i];
    if (p === undefined) arr[i] = p = fitPanel(n, 1 + i / 2, 1 + (i + 1) / 2);
    return p;
  }
  const j = Math.floor(-Math.log2(w)); // w in [2^-(j+1), 2^-j)
  if (j >= 14) return null;
  let arr = panelsSmall.get(n);
  if (!arr) panelsSmall.set(n, (arr = []));
  let p = arr[j];
  if (p === undefined) arr[j] = p = fitPanel(n, 2 ** -(j + 1), 2 ** -j);
  return p;
}

/**
 * χ(Φ) = χ₀ of an effusive beam with a = √(2kT/M), written to out[0] (re), out[1] (im) and out[2] (its
 * error) without allocating, where the panels (or the bound above W = 420) serve it: the values of
 * charFunction(d, phi, 0). Returns false, with out unchanged, where a direct integral is needed.
 */
export function effusiveCharInto(a: number, phi: number, out: Float64Array): boolean {
  const w = Math.abs(phi) / a;
  if (!(w > 0)) return false;
  if (w >= W_TOP) {
    out[0] = 0;
    out[1] = 0;
    out[2] = 1e3 * Math.exp(-1.5 * Math.cbrt((w / 2) ** 2));
    return true;
  }
  const p = panelFor(0, w);
  if (!p) return false;
  // Clenshaw, as chebEval
  const t = (2 * w - p.a - p.b) / (p.b - p.a);
  const cr = p.cr, ci = p.ci;
  let b1r = 0, b1i = 0, b2r = 0, b2i = 0;
  for (let j = cr.length - 1; j >= 1; j--) {
    const r = 2 * t * b1r - b2r + cr[j];
    const i = 2 * t * b1i - b2i + ci[j];
    b2r = b1r; b2i = b1i;
    b1r = r; b1i = i;
  }
  const im = t * b1i - b2i + ci[0];
  out[0] = t * b1r - b2r + cr[0];
  out[1] = phi < 0 ? -im : im;
  out[2] = p.error;
  return true;
}

/** I_n(W) for n = 0 (yields) and n = 2 (mean deflections) through the panels. */
function effusiveTabled(n: number, w: number): CharValue {
  if (w === 0) return effusiveIntegral(n, w);
  // |I_n(W)| ≈ C·exp(−1.5 (W/2)^{2/3}) (saddle point at u³ = iW/2), C < 10³ checked against the
  // contour integral: below 1e-20 from W = 420 on
  if (w >= W_TOP) return { re: 0, im: 0, error: 1e3 * Math.exp(-1.5 * Math.cbrt((w / 2) ** 2)), nodes: 0 };
  const p = panelFor(n, w);
  if (!p) return effusiveIntegral(n, w);
  const [re, im] = chebEval(p, w);
  return { re, im, error: p.error, nodes: 0 };
}

const supersonicNorm = new BoundedCache<string, number>('supersonic normalisations', 64);

/** ∫ v³ e^{−((v−u)/α)²} dv over [u − 12α, u + 12α] ∩ [0, ∞), cached per (u, α). */
function supersonicNormOf(d: { u: number; alpha: number }): number {
  const key = `${d.u}/${d.alpha}`;
  return supersonicNorm.getOr(key, () => {
    const lo = Math.max(0, d.u - 12 * d.alpha), hi = d.u + 12 * d.alpha;
    return integrateAdaptive((v) => [v ** 3 * Math.exp(-(((v - d.u) / d.alpha) ** 2)), 0], lo, hi, 0, 1e-15).re;
  });
}

function supersonicDensity(d: { u: number; alpha: number }): { f: (v: number) => number; lo: number; hi: number } {
  const lo = Math.max(0, d.u - 12 * d.alpha), hi = d.u + 12 * d.alpha;
  const nn = supersonicNormOf(d);
  return { f: (v) => (v ** 3 * Math.exp(-(((v - d.u) / d.alpha) ** 2))) / nn, lo, hi };
}

/** χ_n(Φ) = ⟨v^{−n} e^{−iΦ/v}⟩ over the distribution (see module doc). */
export function charFunction(d: VelocityDistribution, phi: number, n: number = 0): CharValue {
  switch (d.kind) {
    case 'fixed': {
      const s = 1 / d.speed;
      const a = Math.pow(s, n);
      const ph = reduceAngle(phi * s);
      return { re: a * Math.cos(ph), im: -a * Math.sin(ph), error: 0, nodes: 1 };
    }
    case 'table': {
      let re = 0, im = 0;
      for (let k = 0; k < d.speeds.length; k++) {
        const s = 1 / d.speeds[k];
        const a = d.weights[k] * Math.pow(s, n);
        const ph = reduceAngle(phi * s);
        re += a * Math.cos(ph);
        im -= a * Math.sin(ph);
      }
      return { re, im, error: 0, nodes: d.speeds.length };
    }
    case 'effusive': {
      const r = n === 0 || n === 2 ? effusiveTabled(n, Math.abs(phi) / d.a) : effusiveIntegral(n, Math.abs(phi) / d.a);
      const sc = Math.pow(d.a, -n);
      return { re: r.re * sc, im: (phi < 0 ? -r.im : r.im) * sc, error: r.error * sc, nodes: r.nodes };
    }
    case 'supersonic': {
      const { f, lo, hi } = supersonicDensity(d);
      const decay = (Math.abs(phi) * d.alpha) / (d.u * d.u);
      if (decay > 60 && d.u / d.alpha > 3) return { re: 0, im: 0, error: 1e-300, nodes: 0 };
      // many oscillations across the beam: panels uniform in 1/v (the phase is linear there), each short enough
      // that the phase turns by at most 2 rad, with 16 and 8 Gauss–Legendre nodes (their difference the error);
      // adaptive Gauss–Kronrod on the real axis took 120,000 evaluations (45 ms) per frequency from decay 5 on
      const panels = decay > 2 && d.u / d.alpha > 3 ? supersonicPanels(f, Math.max(lo, d.u - 8 * d.alpha), Math.min(hi, d.u + 8 * d.alpha), phi, n) : null;
      if (panels) return panels;
      const r = integrateAdaptive((v) => {
        if (v <= 0) return [0, 0];
        const a = f(v) * Math.pow(v, -n);
        const ph = reduceAngle(phi / v);
        return [a * Math.cos(ph), -a * Math.sin(ph)];
      }, lo, hi, 1e-16, 1e-14, 4000);
      return { re: r.re, im: r.im, error: r.error, nodes: r.evaluations };
    }
  }
}

/**
 * ∫ f(v) v^{−n} e^{−iΦ/v} dv over [lo, hi] as ∫ f(1/s) s^{n−2} e^{−iΦs} ds on panels uniform in s = 1/v, the
 * phase turning by at most 2 rad per panel (and at least 64 panels across the beam): 16-node Gauss–Legendre, with
 * the 8-node rule on the same panels as the error estimate. The caller passes u ± 8α, outside which the density is
 * below e^{−64} of its peak. Null where more than 4096 panels would be needed.
 */
function supersonicPanels(f: (v: number) => number, lo: number, hi: number, phi: number, n: number): CharValue | null {
  const s0 = 1 / hi, s1 = 1 / Math.max(lo, hi * 1e-3);
  const panels = Math.max(64, Math.ceil((Math.abs(phi) * (s1 - s0)) / 2));
  // a beam so broad that it reaches down to slow speeds (a speed ratio below about 8) spans too many turns of the
  // phase in 1/v: the adaptive rule is used there
  if (panels > 4096) return null;
  const h = (s1 - s0) / panels;
  const g16 = gaussLegendre(16), g8 = gaussLegendre(8);
  let re = 0, im = 0, re8 = 0, im8 = 0;
  const add = (g: Rule, c: number, acc: (x: number, y: number) => void) => {
    for (let i = 0; i < g.nodes.length; i++) {
      const sv = c + (h / 2) * g.nodes[i];
      const a = (g.weights[i] * h * 0.5) * f(1 / sv) * Math.pow(sv, n - 2);
      const ph = reduceAngle(phi * sv);
      acc(a * Math.cos(ph), -a * Math.sin(ph));
    }
  };
  for (let p = 0; p < panels; p++) {
    const c = s0 + (p + 0.5) * h;
    add(g16, c, (x, y) => { re += x; im += y; });
    add(g8, c, (x, y) => { re8 += x; im8 += y; });
  }
  return { re, im, error: Math.hypot(re - re8, im - im8) + 1e-17, nodes: panels * 24 };
}

/** ⟨v^{−n}⟩: e.g. ⟨1/v²⟩ = M/(2kT) for the effusive beam (Ramsey). */
export function inverseSpeedMoment(d: VelocityDistribution, n: number): number {
  return charFunction(d, 0, n).re;
}

/** Flux density f(v) (1/(m/s)) for plotting; a table returns its weights at its speeds. */
export function densityAt(d: VelocityDistribution, v: number): number {
  switch (d.kind) {
    case 'effusive': {
      const u = v / d.a;
      return u <= 0 ? 0 : (2 * u ** 3 * Math.exp(-u * u)) / d.a;
    }
    case 'supersonic':
      return v <= 0 ? 0 : (v ** 3 * Math.exp(-(((v - d.u) / d.alpha) ** 2))) / supersonicNormOf(d);
    default:
      return 0;
  }
}

/** The speed range that holds all but ~1e-9 of the flux (for plots and geometry grids). */
export function speedRange(d: VelocityDistribution): [number, number] {
  switch (d.kind) {
    case 'fixed': return [d.speed, d.speed];
    case 'table': return [d.speeds[0], d.speeds[d.speeds.length - 1]];
    case 'effusive': return [0, 4.8 * d.a];
    case 'supersonic': return [Math.max(0, d.u - 7 * d.alpha), d.u + 7 * d.alpha];
  }
}

/**
 * A grid for averaging functions that oscillate like e^{−iΦ/v}: below the distribution's typical speed
 * (a for the effusive beam, u − 2α for a supersonic one) the panels are uniform in s = 1/v, so every
 * panel advances such a phase by the same amount; above it they are uniform in v. `panels` panels of
 * `order` Gauss–Legendre nodes on each side, and for the effusive beam a quarter as many on its slow
 * tail 5e-4·a … 0.05a (3e-6 of the flux); what is left out, v < 5e-4·a, is 3e-14 of the flux.
 */
const oscillationGrids = new WeakMap<VelocityDistribution, Map<string, { speeds: Float64Array; weights: Float64Array; excluded: number }>>();

export function oscillationGrid(d: VelocityDistribution, panels: number, order: number = 8): { speeds: Float64Array; weights: Float64Array; excluded: number } {
  if (d.kind === 'fixed' || d.kind === 'table') return speedGrid(d);
  // kept per distribution (the caller does not change the arrays)
  let byKey = oscillationGrids.get(d);
  if (!byKey) oscillationGrids.set(d, (byKey = new Map()));
  const key = `${panels}/${order}`;
  let g = byKey.get(key);
  if (!g) {
    g = buildOscillationGrid(d, panels, order);
    byKey.set(key, g);
  }
  return g;
}

function buildOscillationGrid(d: Exclude<VelocityDistribution, { kind: 'fixed' | 'table' }>, panels: number, order: number): { speeds: Float64Array; weights: Float64Array; excluded: number } {
  const [lo0, hi0] = speedRange(d);
  // out to where the flux beyond is below 1e-19 (effusive: (1 + u²)e^{−u²} at u = 7)
  const hi = d.kind === 'effusive' ? 7 * d.a : d.u + 12 * d.alpha;
  const lo = d.kind === 'effusive' ? 5e-4 * d.a : Math.max(lo0, 1e-3 * hi0);
  const mid = d.kind === 'effusive' ? d.a : Math.max(lo * 1.01, d.u - 2 * d.alpha);
  const knee = d.kind === 'effusive' ? 0.05 * d.a : lo;
  const f = (v: number) => densityAt(d, v);
  // in s: [1/mid, 1/knee] with `panels` panels, and for the effusive beam the slow tail [1/knee, 1/lo]
  // (3e-6 of the flux) with a quarter as many
  const slow = compositeRule(1 / mid, 1 / knee, order, panels);
  // the tail in ln s (its density falls as s⁻⁵)
  const tailLog = knee > lo ? compositeRule(Math.log(1 / knee), Math.log(1 / lo), order, Math.max(2, panels / 4)) : { nodes: new Float64Array(0), weights: new Float64Array(0) };
  const tail = { nodes: tailLog.nodes.map(Math.exp), weights: tailLog.weights.map((w, i) => w * Math.exp(tailLog.nodes[i])) };
  const fast = compositeRule(mid, hi, order, panels); // in v
  const n = tail.nodes.length + slow.nodes.length + fast.nodes.length;
  const speeds = new Float64Array(n), weights = new Float64Array(n);
  let k = 0;
  for (const r of [tail, slow]) {
    for (let i = r.nodes.length - 1; i >= 0; i--, k++) {
      const v = 1 / r.nodes[i];
      speeds[k] = v;
      weights[k] = f(v) * v * v * r.weights[i]; // dv = v² ds
    }
  }
  {
    // speeds ascending across the two s-blocks
    const idx = Array.from({ length: k }, (_, i) => i).sort((x, y) => speeds[x] - speeds[y]);
    const sp = idx.map((i) => speeds[i]), wt = idx.map((i) => weights[i]);
    for (let i = 0; i < k; i++) { speeds[i] = sp[i]; weights[i] = wt[i]; }
  }
  for (let i = 0; i < fast.nodes.length; i++, k++) {
    speeds[k] = fast.nodes[i];
    weights[k] = f(fast.nodes[i]) * fast.weights[i];
  }
  return { speeds, weights, excluded: 1 - weights.reduce((a, b) => a + b, 0) };
}

/**
 * Speeds and flux weights for averaging smooth functions of v (geometry: deflections go as 1/v²).
 * Continuous distributions get a composite Gauss–Legendre grid over their range; the slowest atoms
 * (effusive: v < 0.05a, a flux fraction of 3·10⁻⁶) are left out, because their deflection diverges
 * and they end on an aperture; the weight left out is returned as `excluded`.
 */
export function speedGrid(d: VelocityDistribution, panels: number = 24, order: number = 8): { speeds: Float64Array; weights: Float64Array; excluded: number } {
  switch (d.kind) {
    case 'fixed': return { speeds: Float64Array.of(d.speed), weights: Float64Array.of(1), excluded: 0 };
    case 'table': return { speeds: d.speeds, weights: d.weights, excluded: 0 };
    case 'effusive': {
      const lo = 0.05, hi = 4.8;
      const r = compositeRule(lo, hi, order, panels);
      const speeds = r.nodes.map((u) => u * d.a);
      const weights = r.nodes.map((u, i) => 2 * u ** 3 * Math.exp(-u * u) * r.weights[i]);
      const excluded = 1 - weights.reduce((s, w) => s + w, 0);
      return { speeds, weights, excluded };
    }
    case 'supersonic': {
      const { f, lo, hi } = supersonicDensity(d);
      const r = compositeRule(lo, hi, order, panels);
      const weights = r.nodes.map((v, i) => f(v) * r.weights[i]);
      return { speeds: r.nodes, weights, excluded: 1 - weights.reduce((s, w) => s + w, 0) };
    }
  }
}
