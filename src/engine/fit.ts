/**
 * Fits to measured counts (docs/design.md, "Fits"): Poisson maximum likelihood of chosen parameters of a compiled
 * line, and optionally of the oven's populations of its zero-field states, from readings of the detectors
 * (measurements.ts). The expected counts of a reading are (signal + background) × dwell at its set-points; the
 * deviance D = 2 Σ [μ − n + n ln(n/μ)] is minimised by Levenberg–Marquardt steps on the Fisher information
 * I = Jᵀ diag(1/μ) J (J = ∂μ/∂θ by central differences), within the bounds. Reported: the best values, σ from
 * I⁻¹, profile-likelihood intervals (ΔD = 1, the others re-fitted) where they differ from ±σ, the correlation
 * matrix, the deviance with its χ² p-value on N − k degrees of freedom, and every reading's residuals.
 */
import { DISPLAY_UNITS, speciesOfRef, stateLabels } from '../beamline/index.ts';
import type { Beamline, Oven } from '../beamline/types.ts';
import type { Dimension } from '../beamline/units.ts';
import { chiSquareSurvival } from '../physics/special.ts';
import type { Measurements, Reading } from './measurements.ts';
import { lineAt, parameter, type Plan } from './plan.ts';
import { CancelledError, RunError, runLine, type RunOptions } from './run.ts';

/** A parameter to fit, with optional bounds (SI). */
export interface FreeParameter { name: string; lower?: number; upper?: number }

export interface FitOptions extends RunOptions {
  free: readonly FreeParameter[];
  /** Fit the oven's populations of its zero-field states too (along the oven state's axis, else z). */
  state?: boolean;
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
  /** Names of the fitted coordinates in the order of `correlation` (parameters, then populations but the last). */
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

export function fit(plan: Plan, data: Measurements, opts: FitOptions): FitResult {
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

  const coords: Coord[] = slots.map(({ slot, free }) => ({
    name: slot.name, lower: free.lower ?? -Infinity, upper: free.upper ?? Infinity,
    scale: Math.max(Math.abs(slot.value), DISPLAY_UNITS[slot.dimension].factor),
  }));
  const startPops = labels.map((l) => {
    if (oven.state.kind === 'pure') return oven.state.m === l ? 1 : 0;
    if (oven.state.kind === 'populations') return oven.state.p[l] ?? 0;
    return 1 / labels.length;
  });
  for (let i = 0; i < labels.length - 1; i++) coords.push({ name: `oven.state population ${labels[i]}`, lower: 0, upper: 1, scale: 1 });
  const k = coords.length;
  const nParams = slots.length;
  if (readings.length < k) throw new RunError(`fit: ${readings.length} reading${readings.length === 1 ? '' : 's'} for ${k} fitted coordinate${k === 1 ? '' : 's'} (${coords.map((c) => c.name).join(', ')}): a fit needs at least as many readings as it fits`);
  const x0 = [...slots.map((s) => s.slot.value), ...startPops.slice(0, Math.max(0, labels.length - 1))];

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
  const lineFor = (x: readonly number[], g: { setPoints: Record<string, number> }): Beamline => {
    const values: Record<string, number> = { ...g.setPoints };
    slots.forEach((s, i) => (values[s.slot.name] = x[i]));
    const line = lineAt(plan, values);
    if (!opts.state) return line;
    const pops = populations(x);
    const p: Record<string, number> = {};
    labels.forEach((l, i) => {
      if (pops[i] > 0) p[l] = pops[i];
    });
    const newOven: Oven = { ...line.oven, state: { kind: 'populations', axis: stateAxis!, p } };
    return Object.freeze({ ...line, oven: Object.freeze(newOven) });
  };
  /** Expected counts of every reading at x, or null where the line cannot be evaluated there. */
  const expected = (x: readonly number[]): number[] | null => {
    if (opts.isCancelled?.()) throw new CancelledError('fit: cancelled');
    const mu = new Array<number>(readings.length);
    for (const g of groupList) {
      let r;
      try {
        r = runLine(lineFor(x, g), { light: true, isCancelled: opts.isCancelled });
      } catch (e) {
        if (e instanceof RunError) return null;
        throw e;
      }
      evaluations++;
      const rate = new Map(r.detectors.map((d) => [d.id, d.rate]));
      for (const i of g.readings) mu[i] = (rate.get(readings[i].detector) ?? 0) * readings[i].dwell;
    }
    return mu;
  };
  const devianceOf = (mu: readonly number[] | null) => (mu ? readings.reduce((s, r, i) => s + devianceTerm(r.counts, mu[i]), 0) : Infinity);
  const feasible = (x: readonly number[]) => x.every((v, i) => v >= coords[i].lower && v <= coords[i].upper) && (!opts.state || x.slice(nParams).reduce((a, b) => a + b, 0) <= 1 + 1e-12);
  const project = (x: number[]): number[] => {
    const y = x.map((v, i) => Math.min(coords[i].upper, Math.max(coords[i].lower, v)));
    if (opts.state) {
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
      const free = [...Array(k).keys()].filter((j) => !fixed.has(j));
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
  const best = minimise(x0, new Set(), maxIt);
  if (!best.converged) warnings.push(`the fit did not converge in ${maxIt} iterations; the values are the last iterate`);
  const J = jacobian(best.x, best.mu, new Set());
  const { I } = fisher(J, best.mu);
  const atBound = best.x.map((v, j) => v <= coords[j].lower + 1e-9 * coords[j].scale || v >= coords[j].upper - 1e-9 * coords[j].scale);
  const inner = [...Array(k).keys()].filter((j) => !atBound[j]);
  const Iin = inverse(inner.map((a) => inner.map((b) => I[a][b])));
  const cov = Array.from({ length: k }, () => new Array<number | null>(k).fill(null));
  if (Iin) inner.forEach((a, i) => inner.forEach((b, j) => (cov[a][b] = Iin[i][j])));
  else warnings.push('the Fisher information is singular: the readings do not tell the fitted parameters apart (no σ and no correlations); fit fewer parameters or add readings that differ');
  const sigma = (j: number) => {
    const c = cov[j][j];
    return c !== null && c > 0 ? Math.sqrt(c) : undefined;
  };

  // profile likelihood: where D rises by 1 with the other coordinates re-fitted
  const profileSide = (j: number, dir: 1 | -1): number | undefined => {
    const s = sigma(j) ?? 0.1 * coords[j].scale;
    const prof = (v: number) => {
      const start = [...best.x];
      start[j] = v;
      if (!feasible(start)) return Infinity;
      try {
        return minimise(start, new Set([j]), 30).D - best.D;
      } catch (e) {
        if (e instanceof RunError) return Infinity;
        throw e;
      }
    };
    let near = best.x[j], far = best.x[j] + dir * s;
    let f = prof(far);
    for (let e = 0; e < 8 && f < 1; e++) {
      near = far;
      far = best.x[j] + dir * s * 2 ** (e + 1);
      f = prof(far);
    }
    if (!(f >= 1) || f === Infinity && !Number.isFinite(prof(near))) return undefined;
    for (let b = 0; b < 12; b++) {
      const mid = (near + far) / 2;
      if (prof(mid) < 1) near = mid;
      else far = mid;
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
  const pops = opts.state ? populations(best.x) : [];
  let state: FitResult['state'];
  if (opts.state) {
    // σ of the last population from the covariance of the others: var(1 − Σp) = Σ_ab C_ab
    const popIdx = [...Array(labels.length - 1).keys()].map((i) => nParams + i);
    let lastVar: number | null = 0;
    for (const a of popIdx) for (const b of popIdx) lastVar = cov[a][b] === null || lastVar === null ? null : lastVar + cov[a][b]!;
    state = {
      axis: stateAxis!.text, labels, populations: pops,
      sigma: [...popIdx.map((j) => sigma(j) ?? null), lastVar !== null && lastVar > 0 ? Math.sqrt(lastVar) : null],
    };
  }
  const correlation = cov.map((row, a) => row.map((c, b) => {
    const sa = cov[a][a], sb = cov[b][b];
    return c === null || sa === null || sb === null || !(sa > 0) || !(sb > 0) ? null : c / Math.sqrt(sa * sb);
  }));
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
    format: 'spinyard.fit', version: 1, title: plan.line.title, parameters, ...(state ? { state } : {}),
    coordinates: coords.map((c) => c.name), correlation, deviance: best.D, degreesOfFreedom: dof, ...(pValue !== undefined ? { pValue } : {}),
    readings: readings.length, residuals, iterations: best.iterations, converged: best.converged,
    method: `Poisson maximum likelihood (deviance 2Σ[μ − n + n ln(n/μ)]) by Levenberg–Marquardt on the Fisher information, ∂μ/∂θ by central differences; σ from the inverse Fisher information; profile intervals where the deviance rises by 1; ${evaluations} evaluations of the line`,
    warnings,
  };
}
