/** `spinyard budget FILE [--draws N] [--seed S] [--json] [-o OUT]`: the tolerance budget of a line (src/engine/budget.ts). */
import { budget, compile, RunError, type BudgetResult } from '../engine/index.ts';
import { alignTable, formatNumber } from './format.ts';
import { outputProblem, problemsOut, wholeOption } from './common.ts';
import { type CliOutput, bad, ok } from './quick.ts';

export const BUDGET_OPTIONS = [
  { name: 'draws', value: true },
  { name: 'seed', value: true },
  { name: 'json', value: false },
  { name: 'output', value: true, short: 'o' },
] as const;

const err = (m: string) => bad(`spinyard budget: ${m}`, 'Run "spinyard budget --help" for its use.');
const pct = (x: number) => `${formatNumber(x * 100, 2)} %`;

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
  const drows = [['detector', 'signal (/s)', 'first-order σ (/s)', 'Monte Carlo mean ± σ (/s)', '5 % … 95 % (/s)']];
  for (const d of b.detectors) {
    const mc = d.monteCarlo;
    drows.push([d.id, formatNumber(d.nominal, 4), `${formatNumber(d.linearSigma, 3)}${d.nominal > 0 ? ` (${pct(d.linearSigma / d.nominal)})` : ''}`,
      mc ? `${formatNumber(mc.mean, 4)} ± ${formatNumber(mc.sigma, 3)}${d.nonlinear ? ' (not linear)' : ''}` : '-', mc ? `${formatNumber(mc.q05, 4)} … ${formatNumber(mc.q95, 4)}` : '-']);
  }
  out.push(alignTable(drows, [false, true, true, true, true]).split('\n').map((l) => `  ${l}`).join('\n'), '');
  out.push('Which tolerance moves which detector most (first order, largest relative effect first)');
  const byName = new Map(b.tolerances.map((t) => [t.name, t]));
  const rrows = [['detector', 'tolerance', '∂S/∂p', 'σ of S (/s)', 'of S', 'share']];
  const moving = b.ranking.filter((r) => r.effect > 0);
  for (const r of moving.slice(0, 20)) {
    const t = byName.get(r.tolerance)!;
    const s = t.sensitivities!.find((x) => x.detector === r.detector)!;
    const per = t.unit ? ` /s per ${t.unit}` : ' /s';
    rrows.push([r.detector, r.tolerance, `${formatNumber(s.derivative * t.factor, 4)} ± ${formatNumber(s.error * t.factor, 2)}${per}`, formatNumber(r.effect, 3), pct(r.relative), pct(r.share)]);
  }
  out.push(alignTable(rrows, [false, false, true, true, true, true]).split('\n').map((l) => `  ${l}`).join('\n'));
  if (moving.length > 20) out.push(`  … ${moving.length - 20} more in --json`);
  if (moving.length < b.ranking.length) out.push(`  (${b.ranking.length - moving.length} pairs where the tolerance does not move the detector's signal are left out)`);
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
  let b: BudgetResult;
  try {
    b = budget(c.plan, { draws, seed });
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  const body = options.json ? `${JSON.stringify(b, null, 2)}\n` : budgetText(b, file);
  if (typeof output === 'string') return { code: 0, stdout: '', stderr: '', file: { path: output, format: 'text', html: body, input: file, what: `tolerance budget (${options.json ? 'JSON' : 'text'})`, command: 'budget' } };
  return ok(body);
}
