/**
 * Fits to measured counts (docs/design.md, "Fits"): Poisson maximum likelihood of chosen parameters of a compiled
 * line, and optionally of the oven's populations of its zero-field states, from readings of the detectors
 * (measurements.ts). The expected counts of a reading are (signal + background) × dwell at its set-points; the
 * deviance D = 2 Σ [μ − n + n ln(n/μ)] is minimised by Levenberg–Marquardt steps on the Fisher information
 * I = Jᵀ diag(1/μ) J (J = ∂μ/∂θ by central differences), within the bounds. Reported: the best values, σ from
 * I⁻¹, profile-likelihood intervals (ΔD = 1, the others re-fitted) where they differ from ±σ, the correlation
 * matrix, the deviance with its χ² p-value on N − k degrees of freedom, and every reading's residuals.
 *
 * The oven's state of a species without hyperfine structure is fitted as a density matrix kept positive by
 * construction: ρ = T T†/Tr(T T†), T lower-triangular (a Cholesky factor, d² real numbers t). The scale of t is
 * the gauge (ρ does not see it); the fit moves on the unit sphere |t| = 1 through a chart of its d² − 1 tangent
 * coordinates u about a point t₀: t(u) = (t₀ + B u)/|t₀ + B u|, B an orthonormal basis of t₀^⊥, re-centred on
 * the best point before σ are taken. The expected counts are linear in ρ: each group of readings is run once
 * per d² pure states that span the Hermitian matrices, and μ(ρ) is their combination. For a hyperfine species
 * the populations of the zero-field states are fitted (docs/design.md, "Fits").
 */
import { DISPLAY_UNITS, isHyperfine, speciesOfRef, stateLabels } from '../beamline/index.ts';
import type { Axis, Beamline, Oven, OvenState } from '../beamline/types.ts';
import { type CMat, cmatDagger, cmatMul, cmatZeros } from '../physics/cmat.ts';
import { eigh, spectralFunction } from '../physics/eigh.ts';
import { rotationToAxis } from '../physics/rotation.ts';
import { spinOperators } from '../physics/spin.ts';
import type { Dimension } from '../beamline/units.ts';
import { chiSquareSurvival } from '../physics/special.ts';
import type { Measurements, Reading } from './measurements.ts';
import { lineAt, parameter, type Plan } from './plan.ts';
import { CancelledError, RunError, runLine, type RunOptions } from './run.ts';
import { checkCost } from './cost.ts';
import { EvaluationSession } from './replay.ts';

/** A parameter to fit, with optional bounds (SI). */
export interface FreeParameter { name: string; lower?: number; upper?: number }

export interface FitOptions extends RunOptions {
  free: readonly FreeParameter[];
  /** Fit the oven's state too: its density matrix for a species without hyperfine structure, else the populations
   *  of its zero-field states (along the oven state's axis, else z). */
  state?: boolean;
  /** How the state is fitted: 'density' (the full ρ; not for a hyperfine species) or 'populations'; the default
   *  as `state` says. */
  stateModel?: 'density' | 'populations';
  maxIterations?: number;
  /** Find the profile-likelihood intervals (default true; they cost a fit per step along each parameter). */
  profiles?: boolean;
}

export interface FittedParameter {
  name: string;
  path: string;
  dimension: Dimension;
  unit: string;
  factor: number;
  /** The document's value (SI), where the fit started. */
  start: number;
  value: number;
  /** Standard deviation from the inverse Fisher information (absent at a bound or when it is singular). */
  sigma?: number;
  /** The ΔD = 1 profile-likelihood interval, where it was found. */
  profile?: { lower?: number; upper?: number; asymmetric: boolean };
  lower?: number;
  upper?: number;
  /** The best value lies on a bound. */
  atBound?: boolean;
}

export interface FitResidual { line: number; detector: string; counts: number; expected: number; pearson: number; deviance: number }

export interface FitResult {
  format: 'spinyard.fit';
  version: 1;
  title: string;
  parameters: FittedParameter[];
  /** The fitted populations of the oven's zero-field states (labels along `axis`). */
  state?: { axis: string; labels: string[]; populations: number[]; sigma: (number | null)[] };
  /** The fitted density matrix (a state fitted as one): ρ over the zero-field states `basis` along `axis`. */
  density?: FittedDensity;
  /** Names of the fitted coordinates in the order of `correlation` (parameters, then populations but the last;
   *  for a density matrix its d − 1 first populations, then Re and Im of each element above the diagonal). */
  coordinates: string[];
  correlation: (number | null)[][];
  deviance: number;
  degreesOfFreedom: number;
  /** P(χ² ≥ D) for the degrees of freedom; absent without any. */
  pValue?: number;
  readings: number;
  residuals: FitResidual[];
  iterations: number;
  converged: boolean;
  method: string;
  warnings: string[];
}

/** A fitted density matrix with its uncertainties (null where the readings do not determine it). */
export interface FittedDensity {
  axis: string;
  basis: string[];
  re: number[][];
  im: number[][];
  sigmaRe: (number | null)[][];
  sigmaIm: (number | null)[][];
  /** Ascending eigenvalues (all ≥ 0 by construction, to the rounding). */
  eigenvalues: number[];
  purity: number;
  puritySigma: number | null;
  /** ⟨J⟩/j in the lab frame (x, y, z): the Bloch vector for spin ½. */
  polarization: { x: number; y: number; z: number; sigma: { x: number | null; y: number | null; z: number | null } };
  /** How many of the d² − 1 real parameters of ρ the readings determine. */
  determined: number;
  parameters: number;
}

interface Coord {
  name: string;
  lower: number;
  upper: number;
  /** Finite-difference scale. */
  scale: number;
}

/** Solve A x = b (n small) by Gaussian elimination with partial pivoting; null when singular. */
export function solve(a: readonly number[][], b: readonly number[]): number[] | null {
  const n = b.length;
  const m = a.map((r, i) => [...r, b[i]]);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r][c]) > Math.abs(m[p][c])) p = r;
    const big = Math.max(...m.map((r) => Math.abs(r[c])));
    if (!(Math.abs(m[p][c]) > 1e-300) || Math.abs(m[p][c]) < 1e-14 * big) return null;
    [m[c], m[p]] = [m[p], m[c]];
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = m[r][c] / m[c][c];
      if (f !== 0) for (let k = c; k <= n; k++) m[r][k] -= f * m[c][k];
    }
  }
  return m.map((r, i) => r[n] / r[i]);
}

function inverse(a: readonly number[][]): number[][] | null {
  const n = a.length;
  const cols: number[][] = [];
  for (let j = 0; j < n; j++) {
    const x = solve(a, Array.from({ length: n }, (_, i) => (i === j ? 1 : 0)));
    if (!x) return null;
    cols.push(x);
  }
  return Array.from({ length: n }, (_, i) => cols.map((c) => c[i]));
}

/** The deviance term of one reading: 2[μ − n + n ln(n/μ)]. */
export function devianceTerm(n: number, mu: number): number {
  if (!(mu > 0)) return n === 0 && mu === 0 ? 0 : Infinity;
  return 2 * (mu - n + (n > 0 ? n * Math.log(n / mu) : 0));
}

// ---------------------------------------------------------------- density matrices

/** ρ = T T† for the real vector t of a lower-triangular T (row by row: T_ii, then Re T_ij and Im T_ij for j < i). */
export function densityFromCholesky(t: readonly number[], d: number): CMat {
  const tr = new Float64Array(d * d), ti = new Float64Array(d * d);
  let k = 0;
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < i; j++) {
      tr[i * d + j] = t[k++];
      ti[i * d + j] = t[k++];
    }
    tr[i * d + i] = t[k++];
  }
  const rho = cmatZeros(d, d);
  let trace = 0;
  for (let a = 0; a < d; a++) for (let b = 0; b <= a; b++) {
    // Σ_c T_ac conj(T_bc), c ≤ b
    let sr = 0, si = 0;
    for (let c = 0; c <= b; c++) {
      const ar = tr[a * d + c], ai = ti[a * d + c], br = tr[b * d + c], bi = -ti[b * d + c];
      sr += ar * br - ai * bi;
      si += ar * bi + ai * br;
    }
    rho.re[a * d + b] = sr;
    rho.im[a * d + b] = si;
    rho.re[b * d + a] = sr;
    rho.im[b * d + a] = -si;
    if (a === b) trace += sr;
  }
  for (let i = 0; i < d * d; i++) {
    rho.re[i] /= trace;
    rho.im[i] /= trace;
  }
  return rho;
}

/** The vector t of the Cholesky factor of a positive definite ρ (real positive diagonal), the inverse of densityFromCholesky. */
export function choleskyVector(rho: CMat): number[] {
  const d = rho.rows;
  const lr = new Float64Array(d * d), li = new Float64Array(d * d);
  for (let j = 0; j < d; j++) {
    let s = rho.re[j * d + j];
    for (let c = 0; c < j; c++) s -= lr[j * d + c] ** 2 + li[j * d + c] ** 2;
    if (!(s > 0)) throw new RunError('fit: the starting state is not positive definite');
    const ljj = Math.sqrt(s);
    lr[j * d + j] = ljj;
    for (let i = j + 1; i < d; i++) {
      // L_ij = (ρ_ij − Σ_c L_ic conj(L_jc)) / L_jj
      let xr = rho.re[i * d + j], xi = rho.im[i * d + j];
      for (let c = 0; c < j; c++) {
        const ar = lr[i * d + c], ai = li[i * d + c], br = lr[j * d + c], bi = -li[j * d + c];
        xr -= ar * br - ai * bi;
        xi -= ar * bi + ai * br;
      }
      lr[i * d + j] = xr / ljj;
      li[i * d + j] = xi / ljj;
    }
  }
  const t: number[] = [];
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < i; j++) t.push(lr[i * d + j], li[i * d + j]);
    t.push(lr[i * d + i]);
  }
  return t;
}

/** An orthonormal basis (columns, as rows of the result) of the complement of the unit vector t0, by Gram–Schmidt. */
function complementBasis(t0: readonly number[]): number[][] {
  const n = t0.length;
  const basis: number[][] = [[...t0]];
  for (let e = 0; e < n && basis.length < n; e++) {
    const v = Array.from({ length: n }, (_, i) => (i === e ? 1 : 0));
    for (let pass = 0; pass < 2; pass++) {
      for (const b of basis) {
        const dot = b.reduce((s, x, i) => s + x * v[i], 0);
        for (let i = 0; i < n; i++) v[i] -= dot * b[i];
      }
    }
    const norm = Math.hypot(...v);
    if (norm > 1e-6) basis.push(v.map((x) => x / norm));
  }
  return basis.slice(1);
}

/** A chart of the unit sphere about t0: u ↦ (t0 + B u)/|t0 + B u|. */
function chartOf(t0: readonly number[]) {
  const t0n = t0.map((x) => x / Math.hypot(...t0));
  const B = complementBasis(t0n);
  return {
    t0: t0n,
    at(u: readonly number[]): number[] {
      const t = [...t0n];
      B.forEach((b, k) => {
        if (u[k] !== 0) for (let i = 0; i < t.length; i++) t[i] += u[k] * b[i];
      });
      const norm = Math.hypot(...t);
      return t.map((x) => x / norm);
    },
  };
}

/** √ρ of a positive semidefinite ρ (eigenvalues below 0 by round-off taken as 0), by the Hermitian eigensolver. */
export function sqrtPositive(rho: CMat): CMat {
  return spectralFunction(eigh(rho), (l) => [Math.sqrt(Math.max(0, l)), 0]);
}

/**
 * The fidelity F(ρ, σ) = (Tr √(√ρ σ √ρ))² of two density matrices (Uhlmann; Nielsen & Chuang, Quantum Computation
 * and Quantum Information, §9.2.2), by the Hermitian eigensolver: the trace is Σ √λ over the eigenvalues λ of √ρ σ √ρ.
 */
export function fidelity(rho: CMat, sigma: CMat): number {
  const r = sqrtPositive(rho);
  const m = cmatMul(cmatMul(r, sigma), r);
  const tr = Array.from(eigh(m).values).reduce((s, l) => s + Math.sqrt(Math.max(0, l)), 0);
  return tr * tr;
}

/** The d² pure states that span the Hermitian matrices (|a⟩, (|a⟩ + |b⟩)/√2, (|a⟩ + i|b⟩)/√2 for a < b), as weights of ρ. */
function spanningWeights(rho: CMat): number[] {
  const d = rho.rows;
  const w: number[] = [];
  const diag = Array.from({ length: d }, (_, a) => rho.re[a * d + a]);
  const plus: number[] = [], plusI: number[] = [];
  for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) {
    // ρ_ab E_ab + ρ_ba E_ba = x (2P₊ − E_aa − E_bb) − y (2P₊ᵢ − E_aa − E_bb), ρ_ab = x + iy
    const x = rho.re[a * d + b], y = rho.im[a * d + b];
    plus.push(2 * x);
    plusI.push(-2 * y);
    diag[a] += -x + y;
    diag[b] += -x + y;
  }
  w.push(...diag, ...plus, ...plusI);
  return w;
}

function spanningStates(d: number): { re: number[]; im: number[] }[] {
  const out: { re: number[]; im: number[] }[] = [];
  const proj = (v: [number, number][]) => {
    const re: number[] = [], im: number[] = [];
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      const [ar, ai] = v[a], [br, bi] = [v[b][0], -v[b][1]];
      re.push(ar * br - ai * bi);
      im.push(ar * bi + ai * br);
    }
    return { re, im };
  };
  const unit = (entries: [number, [number, number]][]) => {
    const v: [number, number][] = Array.from({ length: d }, () => [0, 0]);
    for (const [i, c] of entries) v[i] = c;
    return proj(v);
  };
  const h = Math.SQRT1_2;
  for (let a = 0; a < d; a++) out.push(unit([[a, [1, 0]]]));
  for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) out.push(unit([[a, [h, 0]], [b, [h, 0]]]));
  for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) out.push(unit([[a, [h, 0]], [b, [0, h]]]));
  return out;
}

/** ρ in the lab frame from ρ over |j m; n̂⟩ (m descending) of a bare spin: R ρ R†, R = rotationToAxis. */
function labFrame(rho: CMat, ax: Axis): CMat {
  const ops = spinOperators(rho.rows - 1);
  const R = rotationToAxis(ops, ax);
  return cmatMul(cmatMul(R, rho), cmatDagger(R));
}

/**
 * The pseudo-inverse of a symmetric positive semidefinite matrix A (a Fisher information) in coordinates scaled by
 * `scale` (each coordinate's natural size): eigenvalues of S A S below 1e-9 of the largest are directions the
 * readings do not see. `nullDirs` are those directions as unit vectors in the scaled coordinates.
 */
function pseudoInverse(a: readonly number[][], scale: readonly number[]): { inv: number[][]; nullDirs: number[][]; rank: number } {
  const n = a.length;
  const m = cmatZeros(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) m.re[i * n + j] = a[i][j] * scale[i] * scale[j];
  const e = eigh(m);
  const top = Math.max(0, ...e.values);
  const inv = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  const nullDirs: number[][] = [];
  let rank = 0;
  for (let k = 0; k < n; k++) {
    const v = Array.from({ length: n }, (_, i) => e.vectors.re[i * n + k]);
    if (top > 0 && e.values[k] > 1e-9 * top) {
      rank++;
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) inv[i][j] += (v[i] * scale[i]) * (v[j] * scale[j]) / e.values[k];
    } else nullDirs.push(v);
  }
  return { inv, nullDirs, rank };
}

export function fit(plan: Plan, data: Measurements, opts: FitOptions): FitResult {
  // the document's line estimated once, not at every evaluation of the likelihood
  if (!opts.costChecked) checkCost(plan.line, opts);
  const readings = data.readings;
  const warnings: string[] = [];
  const slots = opts.free.map((f) => {
    const s = parameter(plan, f.name);
    if (data.columns.some((c) => c.name === s.name)) throw new RunError(`fit: ${s.name} is a column of the data (a set-point that differs between readings); it cannot also be fitted`);
    if (f.lower !== undefined && f.upper !== undefined && !(f.lower < f.upper)) throw new RunError(`fit: ${s.name}: the lower bound must be below the upper bound`);
    return { slot: s, free: f };
  });
  if (new Set(slots.map((s) => s.slot.path)).size !== slots.length) throw new RunError('fit: a parameter is given twice');
  // the oven's populations: along the document state's axis, else z
  const oven = plan.line.oven;
  const stateAxis = opts.state ? (oven.state.kind === 'unpolarized' ? { x: 0, y: 0, z: 1, text: 'θ 0°, φ 0°' } : oven.state.axis) : undefined;
  const sp = opts.state ? speciesOfRef(plan.line.species) : undefined;
  if (opts.state && !sp) throw new RunError('fit: the line\'s species is not in the library; its states cannot be listed');
  const labels = sp ? stateLabels(sp) : [];
  if (opts.state && labels.length < 2) throw new RunError('fit: the species has one state; there are no populations to fit');
  if (!slots.length && !opts.state) throw new RunError('fit: nothing to fit: name parameters (e.g. M2.axis.roll) or the oven state');

  const model = !opts.state ? undefined : opts.stateModel ?? (sp && isHyperfine(sp) ? 'populations' : 'density');
  if (model === 'density' && sp && isHyperfine(sp)) {
    throw new RunError('fit: the oven state of a hyperfine species is fitted as the populations of its zero-field states, not as a full density matrix (docs/design.md, "Fits")');
  }
  const d = labels.length;
  /** The document's state over the labels along the state's axis (ρ_ab, row-major). */
  const docRho = (): CMat => {
    const m = cmatZeros(d, d);
    const st = oven.state;
    if (st.kind === 'unpolarized') for (let a = 0; a < d; a++) m.re[a * d + a] = 1 / d;
    else if (st.kind === 'pure') m.re[labels.indexOf(st.m) * (d + 1)] = 1;
    else if (st.kind === 'populations') labels.forEach((l, a) => (m.re[a * d + a] = st.p[l] ?? 0));
    else {
      const n = st.basis.length;
      const idx = st.basis.map((l) => labels.indexOf(l));
      for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) {
        if (idx[a] < 0 || idx[b] < 0) continue;
        m.re[idx[a] * d + idx[b]] = st.re[a * n + b];
        m.im[idx[a] * d + idx[b]] = st.im[a * n + b];
      }
    }
    return m;
  };

  const coords: Coord[] = slots.map(({ slot, free }) => ({
    name: slot.name, lower: free.lower ?? -Infinity, upper: free.upper ?? Infinity,
    scale: Math.max(Math.abs(slot.value), DISPLAY_UNITS[slot.dimension].factor),
  }));
  const startRho = model ? docRho() : cmatZeros(1, 1);
  const startPops = labels.map((_, a) => startRho.re[a * d + a]);
  const nParams = slots.length;
  const nState = model === 'density' ? d * d - 1 : model === 'populations' ? d - 1 : 0;
  let chart = chartOf([1]);
  if (model === 'populations') for (let i = 0; i < d - 1; i++) coords.push({ name: `oven.state population ${labels[i]}`, lower: 0, upper: 1, scale: 1 });
  if (model === 'density') {
    // start inside: the document's state mixed with a tenth of the unpolarised one, so that T is invertible
    const mixed = cmatZeros(d, d);
    for (let i = 0; i < d * d; i++) {
      mixed.re[i] = 0.9 * startRho.re[i] + (i % (d + 1) === 0 ? 0.1 / d : 0);
      mixed.im[i] = 0.9 * startRho.im[i];
    }
    chart = chartOf(choleskyVector(mixed));
    for (let i = 0; i < nState; i++) coords.push({ name: `oven.state chart ${i + 1}`, lower: -Infinity, upper: Infinity, scale: 1 });
  }
  const k = coords.length;
  if (readings.length < k) throw new RunError(`fit: ${readings.length} reading${readings.length === 1 ? '' : 's'} for ${k} fitted coordinate${k === 1 ? '' : 's'} (${model === 'density' ? [...coords.slice(0, nParams).map((c) => c.name), `the ${nState} real parameters of the oven's density matrix`].join(', ') : coords.map((c) => c.name).join(', ')}): a fit needs at least as many readings as it fits`);
  const x0 = [...slots.map((s) => s.slot.value), ...(model === 'populations' ? startPops.slice(0, d - 1) : model === 'density' ? new Array<number>(nState).fill(0) : [])];

  // readings grouped by their set-points: one evaluation per group
  const groups = new Map<string, { setPoints: Record<string, number>; readings: number[] }>();
  readings.forEach((r, i) => {
    const key = JSON.stringify(r.setPoints);
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { setPoints: r.setPoints, readings: [] }));
    g.readings.push(i);
  });
  const groupList = [...groups.values()];
  let evaluations = 0;

  const populations = (x: readonly number[]): number[] => {
    const p = x.slice(nParams).map((v) => Math.max(0, v));
    const last = 1 - p.reduce((a, b) => a + b, 0);
    return [...p, last];
  };
  const withState = (line: Beamline, state: OvenState): Beamline => Object.freeze({ ...line, oven: Object.freeze({ ...line.oven, state } as Oven) });
  // the fit's lines differ in a few set-points: a session reads only those again, and replays the walk up to the
  // element of a set-up's set-point while the fitted ones stay (replay.ts; the same numbers bit for bit)
  const session = new EvaluationSession();
  const lineFor = (x: readonly number[], g: { setPoints: Record<string, number> }): Beamline => {
    const values: Record<string, number> = { ...g.setPoints };
    slots.forEach((s, i) => (values[s.slot.name] = x[i]));
    const read = session.lineAt(plan.source, values);
    // a refused value: the plain reader's message, naming the parameter
    const line = read.ok ? read.line : lineAt(plan, values);
    if (model !== 'populations') return line;
    const pops = populations(x);
    const p: Record<string, number> = {};
    labels.forEach((l, i) => {
      if (pops[i] > 0) p[l] = pops[i];
    });
    return withState(line, { kind: 'populations', axis: stateAxis!, p });
  };
  /** The detectors' rates of a group for each of the d² spanning states, at the set-points of x (the last ones kept). */
  const spanning = model === 'density' ? spanningStates(d) : [];
  const responses = new Map<number, { key: string; rates: Map<string, number>[] }>();
  const responseOf = (x: readonly number[], gi: number): Map<string, number>[] | null => {
    const key = JSON.stringify(x.slice(0, nParams));
    const hit = responses.get(gi);
    if (hit && hit.key === key) return hit.rates;
    const line = lineFor(x, groupList[gi]);
    const rates: Map<string, number>[] = [];
    for (const st of spanning) {
      let r;
      try {
        r = runLine(withState(line, { kind: 'density', axis: stateAxis!, basis: labels, re: st.re, im: st.im }), { light: true, noProfiles: true, isCancelled: opts.isCancelled, costChecked: true });
      } catch (e) {
        if (e instanceof RunError) return null;
        throw e;
      }
      evaluations++;
      rates.push(new Map(r.detectors.map((q) => [q.id, q.rate])));
    }
    responses.set(gi, { key, rates });
    return rates;
  };
  const rhoAt = (x: readonly number[]): CMat => densityFromCholesky(chart.at(x.slice(nParams)), d);
  /** Expected counts of every reading at x, or null where the line cannot be evaluated there. */
  const expected = (x: readonly number[]): number[] | null => {
    if (opts.isCancelled?.()) throw new CancelledError('fit: cancelled');
    const mu = new Array<number>(readings.length);
    if (model === 'density') {
      // linear in ρ: μ = dwell × Σ_k w_k(ρ) rate(σ_k), the weights summing to Tr ρ = 1 (the background rides along)
      const w = spanningWeights(rhoAt(x));
      for (let gi = 0; gi < groupList.length; gi++) {
        const rates = responseOf(x, gi);
        if (!rates) return null;
        for (const i of groupList[gi].readings) {
          let m = 0;
          for (let q = 0; q < w.length; q++) m += w[q] * (rates[q].get(readings[i].detector) ?? 0);
          mu[i] = Math.max(0, m) * readings[i].dwell;
        }
      }
      return mu;
    }
    for (const g of groupList) {
      let r;
      try {
        r = runLine(lineFor(x, g), { light: true, noProfiles: true, isCancelled: opts.isCancelled, costChecked: true, session });
      } catch (e) {
        if (e instanceof RunError) return null;
        throw e;
      }
      evaluations++;
      const rate = new Map(r.detectors.map((q) => [q.id, q.rate]));
      for (const i of g.readings) mu[i] = (rate.get(readings[i].detector) ?? 0) * readings[i].dwell;
    }
    return mu;
  };
  const devianceOf = (mu: readonly number[] | null) => (mu ? readings.reduce((s, r, i) => s + devianceTerm(r.counts, mu[i]), 0) : Infinity);
  const feasible = (x: readonly number[]) => x.every((v, i) => v >= coords[i].lower && v <= coords[i].upper) && (model !== 'populations' || x.slice(nParams).reduce((a, b) => a + b, 0) <= 1 + 1e-12);
  const project = (x: number[]): number[] => {
    const y = x.map((v, i) => Math.min(coords[i].upper, Math.max(coords[i].lower, v)));
    if (model === 'populations') {
      const s = y.slice(nParams).reduce((a, b) => a + b, 0);
      if (s > 1) for (let i = nParams; i < k; i++) y[i] /= s;
    }
    return y;
  };
  /** J (readings × coords) by central differences, one-sided at a bound; fixed coordinates get a zero column. */
  const jacobian = (x: readonly number[], mu0: readonly number[], fixed: ReadonlySet<number>): number[][] => {
    const J = readings.map(() => new Array<number>(k).fill(0));
    for (let j = 0; j < k; j++) {
      if (fixed.has(j)) continue;
      const h = 1e-6 * coords[j].scale;
      const up = [...x], dn = [...x];
      up[j] += h;
      dn[j] -= h;
      const canUp = feasible(up), canDn = feasible(dn);
      const muUp = canUp ? expected(up) : null;
      const muDn = canDn ? expected(dn) : null;
      for (let i = 0; i < readings.length; i++) {
        if (muUp && muDn) J[i][j] = (muUp[i] - muDn[i]) / (2 * h);
        else if (muUp) J[i][j] = (muUp[i] - mu0[i]) / h;
        else if (muDn) J[i][j] = (mu0[i] - muDn[i]) / h;
      }
    }
    return J;
  };
  const fisher = (J: readonly number[][], mu: readonly number[]) => {
    const I = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    const g = new Array<number>(k).fill(0);
    readings.forEach((r, i) => {
      const w = mu[i] > 0 ? 1 / mu[i] : 0;
      const res = mu[i] > 0 ? 1 - r.counts / mu[i] : 1;
      for (let a = 0; a < k; a++) {
        g[a] += res * J[i][a];
        for (let b = 0; b < k; b++) I[a][b] += w * J[i][a] * J[i][b];
      }
    });
    return { I, g };
  };

  /** Levenberg–Marquardt from x with the coordinates in `fixed` held. */
  const minimise = (xStart: readonly number[], fixed: ReadonlySet<number>, maxIt: number) => {
    let x = [...xStart];
    let mu = expected(x);
    if (!mu) throw new RunError('fit: the line cannot be evaluated at its starting values with these readings');
    let D = devianceOf(mu);
    let lambda = 1e-3;
    let it = 0, converged = false;
    for (; it < maxIt; it++) {
      const J = jacobian(x, mu, fixed);
      const { I, g } = fisher(J, mu);
      // coordinates the readings do not see at all here (a zero diagonal in natural units, to the differences'
      // round-off) are held
      const seen = I.map((r, a) => r[a] * coords[a].scale ** 2);
      const top = Math.max(0, ...seen);
      const free = [...Array(k).keys()].filter((j) => !fixed.has(j) && seen[j] > 1e-12 * top);
      let improved = false;
      for (let tries = 0; tries < 12; tries++) {
        const A = free.map((a) => free.map((b) => I[a][b] + (a === b ? lambda * (I[a][a] || 1) : 0)));
        const step = solve(A, free.map((a) => -g[a]));
        if (!step) {
          lambda *= 10;
          continue;
        }
        const trial = [...x];
        free.forEach((a, i) => (trial[a] += step[i]));
        const y = project(trial);
        const muY = expected(y);
        const Dy = devianceOf(muY);
        if (Dy < D) {
          const small = D - Dy < 1e-10 * Math.max(1, D) && free.every((a, i) => Math.abs(step[i]) < 1e-8 * coords[a].scale);
          x = y;
          mu = muY!;
          const dropped = D - Dy;
          D = Dy;
          lambda = Math.max(lambda / 10, 1e-12);
          improved = true;
          if (small || dropped < 1e-9 * Math.max(1, D)) converged = true;
          break;
        }
        lambda *= 10;
      }
      if (!improved) {
        converged = true; // no step lowers D: a minimum within the bounds, to the resolution of the differences
        break;
      }
      if (converged) break;
    }
    return { x, mu, D, iterations: it + 1, converged };
  };

  const maxIt = opts.maxIterations ?? 100;
  if (model === 'density') {
    // a state no reading sees cannot be fitted: every spanning state gives every reading the same rate
    let sees = false;
    for (let gi = 0; gi < groupList.length && !sees; gi++) {
      const rates = responseOf(x0, gi);
      if (!rates) throw new RunError('fit: the line cannot be evaluated at its starting values with these readings');
      for (const i of groupList[gi].readings) {
        const v = rates.map((m) => m.get(readings[i].detector) ?? 0);
        if (Math.max(...v) - Math.min(...v) > 1e-9 * Math.max(...v.map(Math.abs))) sees = true;
      }
    }
    if (!sees) {
      throw new RunError('fit: oven.state: no reading depends on the oven\'s spin state (every state gives the same counts): the line has no magnet that sorts the states before a detector of the readings, or each reading collects all of a magnet\'s ports; fit the state from readings of detectors behind an analysing magnet, at two or more of its axes');
    }
  }
  let best = minimise(x0, new Set(), maxIt);
  if (model === 'density') {
    // re-centre the chart on the best point (u = 0 there) and polish: the σ are taken where the chart is flat
    chart = chartOf(chart.at(best.x.slice(nParams)));
    const again = minimise([...best.x.slice(0, nParams), ...new Array<number>(nState).fill(0)], new Set(), maxIt);
    best = { ...again, iterations: best.iterations + again.iterations };
  }
  if (!best.converged) warnings.push(`the fit did not converge in ${maxIt} iterations; the values are the last iterate`);
  const J = jacobian(best.x, best.mu, new Set());
  const { I } = fisher(J, best.mu);
  const atBound = best.x.map((v, j) => v <= coords[j].lower + 1e-9 * coords[j].scale || v >= coords[j].upper - 1e-9 * coords[j].scale);
  const inner = [...Array(k).keys()].filter((j) => !atBound[j]);
  const cov = Array.from({ length: k }, () => new Array<number | null>(k).fill(null));
  /** Whether the readings determine a quantity of gradient g (over all coordinates): g has no part along a direction I does not see. */
  let determinedBy = (g: readonly number[]): boolean => g.every((x) => Number.isFinite(x));
  let stateRank = nState;
  if (model === 'density') {
    const innerScale = inner.map((a) => coords[a].scale);
    const pin = pseudoInverse(inner.map((a) => inner.map((b) => I[a][b])), innerScale);
    inner.forEach((a, i) => inner.forEach((b, j) => (cov[a][b] = pin.inv[i][j])));
    if (pin.nullDirs.length) {
      // g·x = (S g)·v for a null direction x = S v
      determinedBy = (g) => {
        const sg = inner.map((a, i) => g[a] * innerScale[i]);
        const norm = Math.hypot(...sg);
        if (!(norm > 0)) return true;
        return pin.nullDirs.every((v) => Math.abs(sg.reduce((s, x, i) => s + x * v[i], 0)) <= 1e-6 * norm);
      };
      // parameters the readings do not tell apart: no σ, no correlations
      for (const a of inner) {
        if (a >= nParams || determinedBy(Array.from({ length: k }, (_, j) => (j === a ? 1 : 0)))) continue;
        for (let b = 0; b < k; b++) cov[a][b] = cov[b][a] = null;
      }
      warnings.push('the Fisher information is singular: the readings do not tell all the fitted coordinates apart; quantities that depend on the unseen ones have no σ');
    }
    const stateIdx = inner.filter((a) => a >= nParams);
    stateRank = pseudoInverse(stateIdx.map((a) => stateIdx.map((b) => I[a][b])), stateIdx.map((a) => coords[a].scale)).rank;
    if (stateRank < nState) {
      warnings.push(`the readings determine ${stateRank} of the ${nState} real parameters of the oven's density matrix: a magnet along n̂ sees only the populations along n̂, and a spin j needs readings along at least 4j + 1 axes in general position${d === 3 ? ' (for spin 1, x, y and z count as two: J_x² + J_y² + J_z² = 2)' : ''}; the fitted ρ is one of the states that fit the readings equally well, and the parts of it they do not determine have no σ`);
    }
  } else {
    const Iin = inverse(inner.map((a) => inner.map((b) => I[a][b])));
    if (Iin) inner.forEach((a, i) => inner.forEach((b, j) => (cov[a][b] = Iin[i][j])));
    else warnings.push('the Fisher information is singular: the readings do not tell the fitted parameters apart (no σ and no correlations); fit fewer parameters or add readings that differ');
  }
  const sigma = (j: number) => {
    const c = cov[j][j];
    return c !== null && c > 0 ? Math.sqrt(c) : undefined;
  };

  // profile likelihood: where D rises by 1 with the other coordinates re-fitted. The profile is nearly a parabola in
  // the parameter (exactly one where the response is linear): its first guess is the parabola through the minimum and
  // the deviance one σ out, then the root of ΔD − 1 by regula falsi (Illinois) inside the bracket, each re-fit starting
  // from the other coordinates of the last one; to 10⁻⁴ σ of the parameter or 10⁻⁴ of the deviance
  const profileSide = (j: number, dir: 1 | -1): number | undefined => {
    const s = sigma(j) ?? 0.1 * coords[j].scale;
    let warm: readonly number[] = best.x;
    const prof = (v: number) => {
      const start = [...warm];
      start[j] = v;
      if (!feasible(start)) return Infinity;
      try {
        const m = minimise(start, new Set([j]), 30);
        warm = m.x;
        return m.D - best.D;
      } catch (e) {
        if (e instanceof RunError) return Infinity;
        throw e;
      }
    };
    const x0 = best.x[j];
    let near = x0, fNear = 0, far = x0 + dir * s;
    let f = prof(far);
    for (let e = 0; e < 8 && f < 1; e++) {
      near = far;
      fNear = f;
      far = x0 + dir * s * 2 ** (e + 1);
      f = prof(far);
    }
    if (!(f >= 1) || f === Infinity && !Number.isFinite(prof(near))) return undefined;
    let fFar = f;
    if (!Number.isFinite(fFar)) {
      // beyond a bound or where the line cannot be run: halve back into the region where the profile is defined
      for (let b = 0; b < 30 && !Number.isFinite(fFar); b++) {
        const mid = (near + far) / 2;
        const fm = prof(mid);
        if (fm < 1) {
          near = mid;
          fNear = fm;
        } else {
          far = mid;
          fFar = fm;
        }
      }
      if (!Number.isFinite(fFar)) return (near + far) / 2;
    }
    // the parabola through the minimum and the nearest point at or above 1, kept inside the bracket
    const tol = 1e-4 * s;
    let v = x0 + (far - x0) / Math.sqrt(fFar);
    if (!((v - near) * (far - v) > 0)) v = (near + far) / 2;
    let side = 0;
    for (let it = 0; it < 20; it++) {
      const fv = prof(v);
      if (Number.isFinite(fv) && Math.abs(fv - 1) < 1e-4) return v;
      if (fv < 1) {
        near = v;
        fNear = fv;
        if (side === -1) fFar = 1 + (fFar - 1) / 2;
        side = -1;
      } else {
        far = v;
        fFar = Number.isFinite(fv) ? fv : fFar;
        if (side === 1) fNear = 1 - (1 - fNear) / 2;
        side = 1;
      }
      if (Math.abs(far - near) < tol) break;
      // regula falsi on ΔD − 1 between the bracket's ends (the Illinois halving of a stale end's value)
      v = near + ((1 - fNear) / (fFar - fNear)) * (far - near);
      if (!((v - near) * (far - v) > 0)) v = (near + far) / 2;
    }
    return (near + far) / 2;
  };
  const parameters: FittedParameter[] = slots.map(({ slot, free }, j) => {
    const shown = DISPLAY_UNITS[slot.dimension];
    const out: FittedParameter = { name: slot.name, path: slot.path, dimension: slot.dimension, unit: shown.unit, factor: shown.factor, start: slot.value, value: best.x[j] };
    if (free.lower !== undefined) out.lower = free.lower;
    if (free.upper !== undefined) out.upper = free.upper;
    if (atBound[j]) {
      out.atBound = true;
      warnings.push(`${slot.name}: the best value lies on its bound; no σ is given for it`);
    }
    const s = atBound[j] ? undefined : sigma(j);
    if (s !== undefined) out.sigma = s;
    if (!atBound[j] && readings.length > k && opts.profiles !== false) {
      const lo = profileSide(j, -1), hi = profileSide(j, 1);
      if (lo !== undefined || hi !== undefined) {
        const asym = s !== undefined && ((lo !== undefined && Math.abs(Math.abs(best.x[j] - lo) / s - 1) > 0.1) || (hi !== undefined && Math.abs(Math.abs(hi - best.x[j]) / s - 1) > 0.1));
        out.profile = { ...(lo !== undefined ? { lower: lo } : {}), ...(hi !== undefined ? { upper: hi } : {}), asymmetric: asym };
      }
    }
    return out;
  });
  let state: FitResult['state'];
  let density: FittedDensity | undefined;
  let coordinates = coords.map((c) => c.name);
  let correlation = cov.map((row, a) => row.map((c, b) => {
    const sa = cov[a][a], sb = cov[b][b];
    return c === null || sa === null || sb === null || !(sa > 0) || !(sb > 0) ? null : c / Math.sqrt(sa * sb);
  }));
  if (model === 'populations') {
    // σ of the last population from the covariance of the others: var(1 − Σp) = Σ_ab C_ab
    const popIdx = [...Array(labels.length - 1).keys()].map((i) => nParams + i);
    let lastVar: number | null = 0;
    for (const a of popIdx) for (const b of popIdx) lastVar = cov[a][b] === null || lastVar === null ? null : lastVar + cov[a][b]!;
    state = {
      axis: stateAxis!.text, labels, populations: populations(best.x),
      sigma: [...popIdx.map((j) => sigma(j) ?? null), lastVar !== null && lastVar > 0 ? Math.sqrt(lastVar) : null],
    };
  }
  if (model === 'density') {
    const j = (d - 1) / 2;
    const ops = spinOperators(d - 1);
    // every reported quantity of ρ: Re and Im of each element, the purity, ⟨J⟩/j in the lab frame
    const quantities = (rho: CMat): number[] => {
      const out = [...rho.re, ...rho.im];
      let purity = 0;
      for (let i = 0; i < d * d; i++) purity += rho.re[i] ** 2 + rho.im[i] ** 2;
      out.push(purity);
      const lab = labFrame(rho, stateAxis!);
      for (const op of [ops.jx, ops.jy, ops.jz]) {
        // Tr(ρ J) = Σ_ab ρ_ab J_ba
        let t = 0;
        for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) t += lab.re[a * d + b] * op.re[b * d + a] - lab.im[a * d + b] * op.im[b * d + a];
        out.push(t / j);
      }
      return out;
    };
    const rho = rhoAt(best.x);
    const q0 = quantities(rho);
    // their gradients over the coordinates (the parameters do not enter ρ), by central differences on the chart
    const grads = q0.map(() => new Array<number>(k).fill(0));
    for (let c = nParams; c < k; c++) {
      const h = 1e-6;
      const up = [...best.x], dn = [...best.x];
      up[c] += h;
      dn[c] -= h;
      const qu = quantities(rhoAt(up)), qd = quantities(rhoAt(dn));
      for (let i = 0; i < q0.length; i++) grads[i][c] = (qu[i] - qd[i]) / (2 * h);
    }
    const covOf = (g1: readonly number[], g2: readonly number[]): number | null => {
      let v = 0;
      for (const a of inner) for (const b of inner) {
        if (g1[a] === 0 || g2[b] === 0) continue;
        if (cov[a][b] === null) return null;
        v += g1[a] * cov[a][b]! * g2[b];
      }
      return v;
    };
    const sigmaOf = (g: readonly number[]): number | null => {
      if (!determinedBy(g)) return null;
      const v = covOf(g, g);
      return v === null ? null : Math.sqrt(Math.max(0, v));
    };
    const sig = grads.map(sigmaOf);
    const rows = (off: number, src: readonly number[]) => Array.from({ length: d }, (_, a) => Array.from({ length: d }, (_, b) => src[off + a * d + b]));
    const sigRows = (off: number) => Array.from({ length: d }, (_, a) => Array.from({ length: d }, (_, b) => (off > 0 && a === b ? 0 : sig[off + a * d + b])));
    const nq = 2 * d * d;
    density = {
      axis: stateAxis!.text, basis: labels, re: rows(0, q0), im: rows(d * d, q0), sigmaRe: sigRows(0), sigmaIm: sigRows(d * d),
      eigenvalues: Array.from(eigh(rho).values), purity: q0[nq], puritySigma: sig[nq],
      polarization: { x: q0[nq + 1], y: q0[nq + 2], z: q0[nq + 3], sigma: { x: sig[nq + 1], y: sig[nq + 2], z: sig[nq + 3] } },
      determined: stateRank, parameters: nState,
    };
    state = { axis: stateAxis!.text, labels, populations: labels.map((_, a) => q0[a * d + a]), sigma: labels.map((_, a) => sig[a * d + a]) };
    // the correlations over the parameters and ρ's own coordinates: d − 1 populations, then Re and Im above the diagonal
    const names = coords.slice(0, nParams).map((c) => c.name);
    const gs: number[][] = names.map((_, a) => Array.from({ length: k }, (__, b) => (a === b ? 1 : 0)));
    for (let a = 0; a < d - 1; a++) {
      names.push(`oven.state ρ(${labels[a]}, ${labels[a]})`);
      gs.push(grads[a * d + a]);
    }
    for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) {
      names.push(`oven.state Re ρ(${labels[a]}, ${labels[b]})`, `oven.state Im ρ(${labels[a]}, ${labels[b]})`);
      gs.push(grads[a * d + b], grads[d * d + a * d + b]);
    }
    const sd = gs.map(sigmaOf);
    coordinates = names;
    correlation = gs.map((ga, a) => gs.map((gb, b) => {
      if (sd[a] === null || sd[b] === null || !(sd[a]! > 0) || !(sd[b]! > 0)) return null;
      const c = covOf(ga, gb);
      return c === null ? null : Math.max(-1, Math.min(1, c / (sd[a]! * sd[b]!)));
    }));
  }
  const dof = readings.length - k;
  const residuals: FitResidual[] = readings.map((r: Reading, i) => {
    const mu = best.mu[i];
    const d = devianceTerm(r.counts, mu);
    return { line: r.line, detector: r.detector, counts: r.counts, expected: mu, pearson: mu > 0 ? (r.counts - mu) / Math.sqrt(mu) : 0, deviance: Math.sign(r.counts - mu) * Math.sqrt(Math.max(0, d)) };
  });
  if (dof <= 0) warnings.push(`${readings.length} readings for ${k} fitted coordinates: no degrees of freedom are left for the goodness of fit`);
  const pValue = dof > 0 ? chiSquareSurvival(best.D, dof) : undefined;
  if (pValue !== undefined && pValue < 0.001) warnings.push(`the deviance ${best.D.toPrecision(4)} on ${dof} degrees of freedom has p = ${pValue.toExponential(1)}: the model does not describe the readings within their counting errors (a set-point not fitted, a background, a drift)`);
  return {
    format: 'spinyard.fit', version: 1, title: plan.line.title, parameters, ...(state ? { state } : {}), ...(density ? { density } : {}),
    coordinates, correlation, deviance: best.D, degreesOfFreedom: dof, ...(pValue !== undefined ? { pValue } : {}),
    readings: readings.length, residuals, iterations: best.iterations, converged: best.converged,
    method: `Poisson maximum likelihood (deviance 2Σ[μ − n + n ln(n/μ)]) by Levenberg–Marquardt on the Fisher information, ∂μ/∂θ by central differences; σ from the inverse Fisher information${model === 'density' ? ` (its pseudo-inverse where the readings do not see every direction), carried to ρ through the chart; the state as ρ = T T†/Tr(T T†), T a lower-triangular Cholesky factor (positive by construction), ${nState} real parameters on a chart of the unit sphere of T` : ''}; profile intervals where the deviance rises by 1; ${evaluations} evaluations of the line`,
    warnings,
  };
}
