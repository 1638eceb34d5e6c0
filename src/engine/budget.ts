/**
 * Tolerance budgets (docs/design.md, "Tolerances"): how far each detector's signal (counts/s) moves when the
 * set-points are off by their tolerances. For each tolerance, the sensitivity ∂S/∂p by central differences at
 * ±σ and ±σ/2 (σ the parameter's standard deviation: h/√3 for a uniform ±h, h for a normal one), Richardson-
 * extrapolated, with |D(σ/2) − D(σ)|/3 as its error estimate (one-sided where the reader refuses a side); the
 * combined first-order standard deviation √Σ(∂S/∂p_i σ_i)²; and a seeded Monte Carlo over all tolerances at once
 * (mean, standard deviation, 5 % and 95 % quantiles), with a note where the two disagree: the response is not
 * linear over the tolerances there.
 */
import { DISPLAY_UNITS } from '../beamline/parameters.ts';
import type { Dimension } from '../beamline/units.ts';
import type { ToleranceStudy } from '../beamline/types.ts';
import { evaluate, parameter, type Plan } from './plan.ts';
import { Random } from './random.ts';
import { CancelledError, RunError, type RunOptions } from './run.ts';
import { checkCost } from './cost.ts';

export interface Sensitivity {
  detector: string;
  /** ∂S/∂p in counts/s per SI unit of the parameter. */
  derivative: number;
  /** Error estimate of the derivative (same unit). */
  error: number;
  /** |∂S/∂p|·σ: the signal's standard deviation from this tolerance alone, to first order (counts/s). */
  effect: number;
  /** effect / the detector's signal at the set-points (0 where it has none). */
  relative: number;
  /** This tolerance's share of the detector's first-order variance (0 … 1). */
  share: number;
}

export interface BudgetTolerance {
  name: string;
  path: string;
  dimension: Dimension;
  unit: string;
  factor: number;
  distribution: 'uniform' | 'normal';
  /** The ± half-width (SI); the standard deviation for a normal tolerance. */
  halfWidth: number;
  /** The parameter's standard deviation (SI). */
  sigma: number;
  /** The set-point (SI). */
  value: number;
  /** "central", or "forward"/"backward" where the reader refuses the other side. */
  method?: 'central' | 'forward' | 'backward';
  sensitivities?: Sensitivity[];
  /** Why no sensitivity could be had (both sides refused). */
  error?: string;
}

export interface BudgetDetector {
  id: string;
  /** The signal at the set-points (counts/s). */
  nominal: number;
  /** First-order standard deviation √Σ effect² (counts/s). */
  linearSigma: number;
  monteCarlo?: { mean: number; sigma: number; q05: number; q95: number; draws: number };
  /** Set when the Monte Carlo and the first-order figures disagree. */
  nonlinear?: string;
}

export interface BudgetResult {
  format: 'spinyard.budget';
  version: 1;
  title: string;
  /** The quantity budgeted: each detector's signal, counts/s without background. */
  quantity: 'signal';
  tolerances: BudgetTolerance[];
  detectors: BudgetDetector[];
  /** Every (detector, tolerance) pair, the largest relative effect first. */
  ranking: { detector: string; tolerance: string; effect: number; relative: number; share: number }[];
  monteCarlo: { draws: number; seed: number; refused: number; refusedReason?: string };
  method: string;
  warnings: string[];
}

export interface BudgetOptions extends RunOptions {
  /** Monte Carlo draws (0: the first-order budget only). Default 1000. */
  draws?: number;
  seed?: number;
}

export const MAX_BUDGET_DRAWS = 1_000_000;

function signals(plan: Plan, values: Record<string, number>, opts: RunOptions): Map<string, number> {
  const r = evaluate(plan, values, { ...opts, light: true, noProfiles: true, onProgress: undefined });
  return new Map(r.detectors.map((d) => [d.id, d.signal]));
}

/**
 * What a budget evaluates, found before any of it runs: the tolerances (without their sensitivities yet), the
 * detectors and their signals at the set-points, and the parameter values of every other evaluation in order: four
 * per tolerance (+σ, +σ/2, −σ, −σ/2), then the Monte Carlo draws, every tolerance drawn at once in the order of the
 * list from one seeded generator. Each evaluation is a function of the document and its values alone, so they can be
 * dealt out to worker threads (`spinyard budget --workers N`) and the budget made from their outcomes is the same,
 * bit for bit, as one made in one thread.
 */
export interface BudgetSetup {
  tolerances: BudgetTolerance[];
  /** The detectors, in the order of the run's result. */
  ids: string[];
  /** Their signals at the set-points. */
  base: number[];
  /** The values of every other evaluation: 4 per tolerance, then the draws. */
  sets: Record<string, number>[];
  draws: number;
  seed: number;
}

/** An evaluation's outcome: the detectors' signals in the setup's order, or the reader's refusal of a set-point. */
export type BudgetOutcome = number[] | string;

export function budgetSetup(plan: Plan, opts: BudgetOptions = {}, tolerances: readonly ToleranceStudy[] = plan.line.tolerances ?? []): BudgetSetup {
  const draws = opts.draws ?? 1000;
  const seed = opts.seed ?? 1;
  if (!Number.isInteger(draws) || draws < 0 || draws > MAX_BUDGET_DRAWS) throw new RunError(`budget: the number of draws must be a whole number from 0 to ${MAX_BUDGET_DRAWS}, got ${draws}`);
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) throw new RunError(`budget: the seed must be a whole number from 0 to 4294967295, got ${seed}`);
  if (!tolerances.length) throw new RunError('budget: the line has no tolerances (a "tolerances" list in the document: {"parameter": "M2.axis.roll", "halfWidth": "0.5 deg", "distribution": "uniform"})');
  // the document's line estimated once, not at every evaluation
  if (!opts.costChecked) checkCost(plan.line, opts);
  const base = signals(plan, {}, { ...opts, costChecked: true });
  const ids = [...base.keys()];
  if (!ids.length) throw new RunError('budget: the line has no detector');
  const sets: Record<string, number>[] = [];
  const tols: BudgetTolerance[] = tolerances.map((t) => {
    const slot = parameter(plan, t.path);
    const sigma = t.distribution === 'normal' ? t.halfWidth : t.halfWidth / Math.sqrt(3);
    const shown = DISPLAY_UNITS[slot.dimension];
    const p0 = slot.value;
    for (const v of [p0 + sigma, p0 + sigma / 2, p0 - sigma, p0 - sigma / 2]) sets.push({ [t.name]: v });
    return { name: t.name, path: t.path, dimension: slot.dimension, unit: shown.unit, factor: shown.factor,
      distribution: t.distribution, halfWidth: t.halfWidth, sigma, value: slot.value };
  });
  const rng = new Random(seed);
  for (let k = 0; k < draws; k++) {
    const values: Record<string, number> = {};
    for (const t of tols) values[t.name] = t.value + (t.distribution === 'normal' ? t.halfWidth * rng.normal() : t.halfWidth * (2 * rng.uniform() - 1));
    sets.push(values);
  }
  return { tolerances: tols, ids, base: ids.map((id) => base.get(id)!), sets, draws, seed };
}

/**
 * The outcomes of evaluations `sets` (a budget's, or a block of them), in order; `tick` after each (it may throw to
 * cancel).
 */
export function budgetOutcomes(plan: Plan, ids: readonly string[], sets: readonly Record<string, number>[], opts: RunOptions = {}, tick?: () => void): BudgetOutcome[] {
  const o = { ...opts, costChecked: true };
  return sets.map((values) => {
    let out: BudgetOutcome;
    try {
      const s = signals(plan, values, o);
      out = ids.map((id) => s.get(id)!);
    } catch (e) {
      if (!(e instanceof RunError)) throw e;
      out = e.message;
    }
    tick?.();
    return out;
  });
}

/** The first-order and Monte Carlo budget of the plan's tolerances (or the ones given). */
export function budget(plan: Plan, opts: BudgetOptions = {}, tolerances: readonly ToleranceStudy[] = plan.line.tolerances ?? []): BudgetResult {
  return budgetOf(plan, budgetSetup(plan, opts, tolerances), opts);
}

/** The budget of a setup, its evaluations made in this thread (with progress and cancel). */
export function budgetOf(plan: Plan, setup: BudgetSetup, opts: RunOptions = {}): BudgetResult {
  let done = 0;
  const tick = () => {
    if (opts.isCancelled?.()) throw new CancelledError('budget: cancelled');
    opts.onProgress?.(++done / setup.sets.length);
  };
  return budgetResult(plan, setup, budgetOutcomes(plan, setup.ids, setup.sets, opts, tick));
}

/** The budget from its setup and the outcomes of its evaluations (budgetOutcomes over setup.sets, in order). */
export function budgetResult(plan: Plan, setup: BudgetSetup, outcomes: readonly BudgetOutcome[]): BudgetResult {
  const { ids, draws, seed } = setup;
  if (outcomes.length !== setup.sets.length) throw new Error(`budget: ${outcomes.length} outcomes for ${setup.sets.length} evaluations`);
  const base = new Map(ids.map((id, i) => [id, setup.base[i]]));
  const tols: BudgetTolerance[] = setup.tolerances.map((t, k) => {
    const entry: BudgetTolerance = { ...t };
    const sigma = t.sigma;
    const up = [outcomes[4 * k], outcomes[4 * k + 1]];
    const down = [outcomes[4 * k + 2], outcomes[4 * k + 3]];
    const upOk = typeof up[0] !== 'string' && typeof up[1] !== 'string';
    const downOk = typeof down[0] !== 'string' && typeof down[1] !== 'string';
    if (!upOk && !downOk) {
      entry.error = `neither side of the set-point can be evaluated: ${[...up, ...down].find((x) => typeof x === 'string')}`;
      return entry;
    }
    entry.method = upOk && downOk ? 'central' : upOk ? 'forward' : 'backward';
    entry.sensitivities = ids.map((id, i) => {
      const s0 = base.get(id)!;
      const at = (m: BudgetOutcome) => (m as number[])[i];
      let d1: number, d2: number, d: number;
      if (entry.method === 'central') {
        d1 = (at(up[0]) - at(down[0])) / (2 * sigma);
        d2 = (at(up[1]) - at(down[1])) / sigma;
        d = (4 * d2 - d1) / 3;
      } else {
        const side = entry.method === 'forward' ? up : down;
        const sign = entry.method === 'forward' ? 1 : -1;
        d1 = (sign * (at(side[0]) - s0)) / sigma;
        d2 = (sign * (at(side[1]) - s0)) / (sigma / 2);
        d = 2 * d2 - d1;
      }
      const effect = Math.abs(d) * sigma;
      return { detector: id, derivative: d, error: Math.abs(d2 - d1) / 3, effect, relative: s0 > 0 ? effect / s0 : 0, share: 0 };
    });
    return entry;
  });

  const detectors: BudgetDetector[] = ids.map((id) => {
    let v = 0;
    for (const t of tols) for (const s of t.sensitivities ?? []) if (s.detector === id) v += s.effect * s.effect;
    for (const t of tols) for (const s of t.sensitivities ?? []) if (s.detector === id) s.share = v > 0 ? (s.effect * s.effect) / v : 0;
    return { id, nominal: base.get(id)!, linearSigma: Math.sqrt(v) };
  });

  // Monte Carlo: the draws' outcomes, in the order they were drawn
  const samples = ids.map(() => [] as number[]);
  let refused = 0;
  let refusedReason: string | undefined;
  for (let k = 4 * tols.length; k < outcomes.length; k++) {
    const s = outcomes[k];
    if (typeof s === 'string') {
      refused++;
      refusedReason ??= s;
      continue;
    }
    ids.forEach((_, i) => samples[i].push(s[i]));
  }
  const warnings: string[] = [];
  const n = draws - refused;
  if (refused) warnings.push(`${refused} of ${draws} Monte Carlo draws put a set-point where the document's reader refuses it and were left out (the first: ${refusedReason}); the Monte Carlo figures are of the remaining draws, a tolerance that reaches past a bound is cut there`);
  if (draws > 0 && n >= 2) {
    detectors.forEach((d, i) => {
      const xs = samples[i].slice().sort((a, b) => a - b);
      const mean = xs.reduce((a, b) => a + b, 0) / n;
      const sigma = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
      d.monteCarlo = { mean, sigma, q05: quantile(xs, 0.05), q95: quantile(xs, 0.95), draws: n };
      // the Monte Carlo σ has a relative standard error of about 1/√(2(n−1)) and its mean one of σ/√n
      const slack = 3 / Math.sqrt(2 * (n - 1));
      const scale = Math.max(sigma, d.linearSigma);
      const sigmaOff = scale > 0 && Math.abs(sigma - d.linearSigma) > (0.2 + slack) * scale;
      const meanOff = sigma > 0 && Math.abs(mean - d.nominal) > 0.2 * sigma + (3 * sigma) / Math.sqrt(n);
      if (sigmaOff || meanOff) {
        d.nonlinear = `${d.id}: the Monte Carlo gives σ = ${fmt(sigma)} /s and a mean ${fmt(mean)} /s against the first-order σ = ${fmt(d.linearSigma)} /s about ${fmt(d.nominal)} /s: the signal is not linear over these tolerances (a set-point at an extremum, or tolerances too wide for a first-order budget); trust the Monte Carlo figures`;
        warnings.push(d.nonlinear);
      }
    });
  } else if (draws > 0) warnings.push(`fewer than 2 Monte Carlo draws could be evaluated (${n} of ${draws}); no Monte Carlo figures`);
  for (const t of tols) if (t.error) warnings.push(`${t.name}: ${t.error}`);

  const ranking = tols.flatMap((t) => (t.sensitivities ?? []).map((s) => ({ detector: s.detector, tolerance: t.name, effect: s.effect, relative: s.relative, share: s.share })))
    .sort((a, b) => b.relative - a.relative || b.effect - a.effect || a.detector.localeCompare(b.detector) || a.tolerance.localeCompare(b.tolerance));
  return {
    format: 'spinyard.budget', version: 1, title: plan.line.title, quantity: 'signal', tolerances: tols, detectors, ranking,
    monteCarlo: { draws, seed, refused, ...(refusedReason ? { refusedReason } : {}) },
    method: 'sensitivities by central differences at ±σ and ±σ/2 of each set-point, Richardson-extrapolated (error |D(σ/2) − D(σ)|/3; one-sided where the reader refuses a side); first-order σ = √Σ(∂S/∂p·σ_p)²; Monte Carlo over all tolerances at once (xoshiro128**, seeded)',
    warnings,
  };
}

/** The q-quantile of sorted values, interpolated linearly between order statistics (Hyndman–Fan type 7). */
export function quantile(sorted: readonly number[], q: number): number {
  const h = (sorted.length - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

function fmt(x: number): string {
  return Number(x.toPrecision(3)).toString();
}
