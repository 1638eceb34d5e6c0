/** `spinyard budget FILE [--draws N] [--seed S] [--json] [-o OUT]`: the tolerance budget of a line (src/engine/budget.ts). */
import { budgetOf, budgetSetup, compile, RunError, type BudgetResult, type BudgetSetup } from '../engine/index.ts';
import { alignTable, formatNumber } from './format.ts';
import { ROUND_OFF_DERIVATIVE_NOTE, derivativeUnit, formatColumn, valueSigmaColumns } from '../beamline/numbers.ts';
import { costGate, outputProblem, problemsOut, wholeOption, workersOption } from './common.ts';
import { type CliOutput, bad, ok } from './quick.ts';
import { progressOf } from './progress.ts';
import { availableParallelism } from 'node:os';
import { budgetParallel } from './budget-parallel.ts';
import { THREADS_WORTH_MS } from './workers.ts';
import { PARALLEL_FROM_POINTS } from './scan.ts';

export const BUDGET_OPTIONS = [
  { name: 'draws', value: true },
  { name: 'seed', value: true },
  { name: 'json', value: false },
  { name: 'output', value: true, short: 'o' },
  { name: 'accept-cost', value: false },
  { name: 'workers', value: true },
] as const;

const err = (m: string) => bad(`spinyard budget: ${m}`, 'Run "spinyard budget --help" for its use.');

function shown(v: number, t: { unit: string; factor: number }, sig = 4): string {
  const x = formatNumber(v / t.factor, sig);
  return t.unit ? `${x} ${t.unit}` : x;
}

export function budgetText(b: BudgetResult, file: string): string {
  const out: string[] = [`Tolerance budget of ${b.title || '(untitled)'}  [${file}]`,
    '  each detector\'s signal (counts/s, background excluded) with the set-points off by their tolerances', '', 'Tolerances'];
  const trows = [['parameter', 'set-point', 'tolerance', 'σ', 'derivative']];
  for (const t of b.tolerances) {
    trows.push([t.name, shown(t.value, t, 6), `±${shown(t.halfWidth, t)} ${t.distribution}${t.distribution === 'normal' ? ' (1σ)' : ''}`, shown(t.sigma, t, 3), t.error ? 'none: see the warnings' : t.method!]);
  }
  out.push(alignTable(trows, [false, true, false, true, false]).split('\n').map((l) => `  ${l}`).join('\n'), '', 'Detectors');
  // the numbers by the one rule per column (src/beamline/numbers.ts): one count of figures and one notation down
  // each column (no 275000 beside 4.34e7); a derivative no finer than its stated error
  const drows = [['detector', 'signal (/s)', 'first-order σ (/s)', 'Monte Carlo mean ± σ (/s)', '5 % … 95 % (/s)']];
  const ds = b.detectors;
  const nominal = formatColumn(ds.map((d) => d.nominal), { figures: 4 });
  const linear = formatColumn(ds.map((d) => d.linearSigma), { figures: 3 });
  const linearPct = formatColumn(ds.map((d) => (d.nominal > 0 ? (d.linearSigma / d.nominal) * 100 : undefined)), { figures: 2 });
  const mcMean = formatColumn(ds.map((d) => d.monteCarlo?.mean), { figures: 4 });
  const mcSigma = formatColumn(ds.map((d) => d.monteCarlo?.sigma), { figures: 3 });
  const quantiles = formatColumn(ds.flatMap((d) => [d.monteCarlo?.q05, d.monteCarlo?.q95]), { figures: 4 });
  ds.forEach((d, i) => {
    const mc = d.monteCarlo;
    drows.push([d.id, nominal[i], `${linear[i]}${d.nominal > 0 ? ` (${linearPct[i]} %)` : ''}`,
      mc ? `${mcMean[i]} ± ${mcSigma[i]}${d.nonlinear ? ' (not linear)' : ''}` : '-', mc ? `${quantiles[2 * i]} … ${quantiles[2 * i + 1]}` : '-']);
  });
  out.push(alignTable(drows, [false, true, true, true, true]).split('\n').map((l) => `  ${l}`).join('\n'), '');
  out.push('Which tolerance moves which detector most (first order, largest relative effect first)');
  const byName = new Map(b.tolerances.map((t) => [t.name, t]));
  const rrows = [['detector', 'tolerance', '∂S/∂p', 'σ of S (/s)', 'of S', 'share']];
  const moving = b.ranking.filter((r) => r.effect > 0);
  const shownRanks = moving.slice(0, 20).map((r) => {
    const t = byName.get(r.tolerance)!;
    return { r, t, s: t.sensitivities!.find((x) => x.detector === r.detector)! };
  });
  // as the app's panel: the derivatives of each unit in their own notation, no finer than their error, an error below
  // the round-off of its derivative (an exact one, as the signal's in the flux) written 0
  const { value: derivative, sigma: derivativeError } = valueSigmaColumns(shownRanks.map((x) => x.s.derivative * x.t.factor),
    shownRanks.map((x) => x.s.error * x.t.factor), 4, shownRanks.map((x) => derivativeUnit(x.t.unit)));
  const effect = formatColumn(shownRanks.map((x) => x.r.effect), { figures: 3 });
  const relative = formatColumn(shownRanks.map((x) => x.r.relative * 100), { figures: 2 });
  const share = formatColumn(shownRanks.map((x) => x.r.share * 100), { figures: 2 });
  shownRanks.forEach(({ r, t }, i) => {
    const unit = derivativeUnit(t.unit);
    const per = unit ? ` ${unit}` : '';
    rrows.push([r.detector, r.tolerance, `${derivative[i]} ± ${derivativeError[i]}${per}`, effect[i], `${relative[i]} %`, `${share[i]} %`]);
  });
  out.push(alignTable(rrows, [false, false, true, true, true, true]).split('\n').map((l) => `  ${l}`).join('\n'));
  if (moving.length > 20) out.push(`  … ${moving.length - 20} more in --json`);
  if (moving.length < b.ranking.length) out.push(`  (${b.ranking.length - moving.length} pairs where the tolerance does not move the detector's signal are left out)`);
  if (derivativeError.includes('0')) out.push(`  ${ROUND_OFF_DERIVATIVE_NOTE}`);
  out.push('', `Method: ${b.method}.`, `Monte Carlo: ${b.monteCarlo.draws} draws, seed ${b.monteCarlo.seed}${b.monteCarlo.refused ? `, ${b.monteCarlo.refused} refused` : ''}.`);
  if (b.warnings.length) out.push('', 'Warnings', ...b.warnings.map((w) => `  - ${w}`));
  return `${out.join('\n')}\n`;
}

export function cmdBudgetWith(file: string, text: string, options: Record<string, unknown>): CliOutput {
  const draws = wholeOption(options.draws, 'draws', 1_000_000);
  if (typeof draws === 'string') return err(draws);
  const seed = wholeOption(options.seed, 'seed', 0xffffffff);
  if (typeof seed === 'string') return err(seed);
  const output = options.output;
  const outBad = outputProblem(file, output, 'a budget');
  if (outBad) return err(outBad);
  const c = compile(text);
  if (!c.ok) return problemsOut(file, c.problems);
  const gate = costGate(file, c.plan, options['accept-cost'] === true);
  if (gate) return gate;
  const opts = { draws, seed, onProgress: progressOf('budget'), acceptCost: true };
  let setup: BudgetSetup;
  try {
    setup = budgetSetup(c.plan, opts);
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  // the evaluations (4 per tolerance, and the draws) dealt out to threads from PARALLEL_FROM_POINTS of them on
  const workers = workersOption(options.workers, setup.sets.length >= PARALLEL_FROM_POINTS ? availableParallelism() : 1);
  if (typeof workers === 'string') return err(workers);
  if (workers > 1) {
    return { code: 0, stdout: '', stderr: '', job: async () => {
      try {
        // by default the workers start only where the budget is long enough to be worth them (workers.ts)
        return deliverBudget(await budgetParallel(text, c.plan, setup, opts, workers, options.workers === undefined ? THREADS_WORTH_MS : undefined), file, options);
      } catch (e) {
        if (e instanceof RunError) return err(e.message);
        throw e;
      }
    } };
  }
  let b: BudgetResult;
  try {
    b = budgetOf(c.plan, setup, opts);
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  return deliverBudget(b, file, options);
}

function deliverBudget(b: BudgetResult, file: string, options: Record<string, unknown>): CliOutput {
  const output = options.output;
  const body = options.json ? `${JSON.stringify(b, null, 2)}\n` : budgetText(b, file);
  if (typeof output === 'string') return { code: 0, stdout: '', stderr: '', file: { path: output, format: 'text', html: body, input: file, what: `tolerance budget (${options.json ? 'JSON' : 'text'})`, command: 'budget' } };
  return ok(body);
}
