/** `spinyard simulate FILE [--atoms N] [--seed S] [--json] [-o OUT]`: a simulated run of the line (src/engine/simulate.ts). */
import { compile, csvNumber, RunError } from '../engine/index.ts';
import { MAX_ATOMS, simulate, type SimulationResult } from '../engine/simulate.ts';
import type { RunResult } from '../engine/result.ts';
import { alignTable, formatDuration, formatNumber } from './format.ts';
import { formatColumn, formatCountsColumn } from '../beamline/numbers.ts';
import { costGate, outputProblem, problemsOut, wholeOption } from './common.ts';
import { type CliOutput, bad, ok } from './quick.ts';
import { progressOf } from './progress.ts';

export const SIMULATE_OPTIONS = [
  { name: 'stored', value: true },
  { name: 'atoms', value: true },
  { name: 'seed', value: true },
  { name: 'json', value: false },
  { name: 'output', value: true, short: 'o' },
  { name: 'hits', value: true },
  { name: 'accept-cost', value: false },
] as const;

const err = (m: string) => bad(`spinyard simulate: ${m}`, 'Run "spinyard simulate --help" for its use.');

export function simulateText(s: SimulationResult, run: RunResult, file: string): string {
  const out = [`Simulated run of ${s.title || '(untitled)'}  [${file}]`, `  ${s.atoms} atoms drawn (seed ${s.seed}) from an oven flux of ${formatNumber(s.flux, 4)} /s`, ''];
  const rows = [['detector', 'atoms in window', 'signal (/s) simulated', 'engine', 'difference', 'counts in dwell', 'mean x, z (mm)', 'rms x, z (mm)']];
  // by the one rule per column (src/beamline/numbers.ts): the simulated signal ± σ with σ to 2 figures and the
  // signal to its place, every other column in one count of figures and one notation
  const ds = s.detectors;
  const engine = ds.map((d) => run.detectors.find((x) => x.id === d.id));
  const signal = formatCountsColumn(ds.map((d) => ({ counts: d.signal, sigma: d.signalSigma })));
  const engineSignal = formatColumn(engine.map((e) => e?.signal), { figures: 4 }, { blank: '-' });
  const diff = formatColumn(ds.map((d, i) => (engine[i] && d.signalSigma > 0 ? (d.signal - engine[i]!.signal) / d.signalSigma : undefined)), { figures: 2 });
  const lengths = (f: (d: (typeof ds)[number]) => number | undefined) => formatColumn(ds.map((d) => { const v = f(d); return v === undefined ? undefined : v * 1e3; }), { figures: 3 });
  const [mx, mz, rx, rz] = [lengths((d) => d.mean?.x), lengths((d) => d.mean?.z), lengths((d) => d.rms?.x), lengths((d) => d.rms?.z)];
  ds.forEach((d, i) => {
    rows.push([d.id, String(d.hits), signal[i], engineSignal[i], diff[i] === '' ? '-' : `${diff[i]} σ`,
      `${d.counts} in ${formatDuration(d.dwell)}`, d.mean ? `${mx[i]}, ${mz[i]}` : '-', d.rms ? `${rx[i]}, ${rz[i]}` : '-']);
  });
  out.push(alignTable(rows, rows[0].map((_, i) => i > 0)), '');
  out.push(`Lost: ${s.lost.spin} atoms in the spin operations (no path), ${s.lost.clipped} clipped by slits, pole gaps and windows.`);
  out.push('Counts: one run of each detector\'s dwell, drawn from Poisson((signal + background) × dwell). "difference": (simulated − engine)/σ of the sampling; |difference| above about 3 in a line is worth a look.', '', `Method: ${s.method}.`);
  if (s.warnings.length) out.push('', 'Warnings', ...s.warnings.map((w) => `  - ${w}`));
  return `${out.join('\n')}\n`;
}

export function cmdSimulateWith(file: string, text: string, options: Record<string, unknown>): CliOutput {
  const atoms = wholeOption(options.atoms, 'atoms', MAX_ATOMS);
  if (typeof atoms === 'string') return err(atoms);
  const seed = wholeOption(options.seed, 'seed', 0xffffffff);
  if (typeof seed === 'string') return err(seed);
  const output = options.output;
  const outBad = outputProblem(file, output, 'a simulation');
  if (outBad) return err(outBad);
  const hitsFile = options.hits;
  if (hitsFile !== undefined && output !== undefined) return err('-o and --hits: one file per run; write the hits with --hits and the report to stdout');
  const hitsBad = outputProblem(file, hitsFile, 'the hits file');
  if (hitsBad) return err(hitsBad.replace('-o', '--hits'));
  const c = compile(text);
  if (!c.ok) return problemsOut(file, c.problems);
  const gate = costGate(file, c.plan, options['accept-cost'] === true);
  if (gate) return gate;
  // a simulation the document keeps gives the atoms and the seed, unless they are given here
  const kept = c.plan.line.simulations ?? [];
  let settings: { atoms?: number; seed?: number } = { atoms: atoms ?? undefined, seed: seed ?? undefined };
  if (options.stored !== undefined || (atoms === undefined && seed === undefined && kept.length === 1)) {
    const k = options.stored === undefined ? 1 : Number(options.stored);
    if (!Number.isInteger(k) || k < 1 || k > kept.length) {
      return bad(`spinyard simulate: --stored ${String(options.stored)}: ${file} keeps ${kept.length} simulation${kept.length === 1 ? '' : 's'}${kept.length ? ':' : ''}`, ...kept.map((m, i) => `  ${i + 1}: ${m.title || `${m.atoms} atoms, seed ${m.seed}`}`));
    }
    settings = { atoms: atoms ?? kept[k - 1].atoms, seed: seed ?? kept[k - 1].seed };
  }
  let s: SimulationResult;
  let run: RunResult | undefined;
  let hitsText = '';
  try {
    // every hit as a CSV row (mm on the detector's plane, the atom's speed), where --hits asks for them
    const rows: string[] = typeof hitsFile === 'string' ? ['detector,x [mm],z [mm],speed [m/s]'] : [];
    const onHit = typeof hitsFile === 'string'
      ? (d: string, x: number, z: number, v: number) => void rows.push(`${d},${csvNumber(x * 1e3)},${csvNumber(z * 1e3)},${csvNumber(v)}`)
      : undefined;
    // the engine's numbers beside the simulated ones: the run the atoms were drawn along
    s = simulate(c.plan, { ...settings, onHit, onProgress: progressOf('simulate'), acceptCost: true, onRun: (r) => (run = r) });
    if (typeof hitsFile === 'string') hitsText = `${rows.join('\r\n')}\r\n`;
  } catch (e) {
    if (e instanceof RunError) return err(e.message);
    throw e;
  }
  const body = options.json ? `${JSON.stringify(s, null, 2)}\n` : simulateText(s, run!, file);
  if (typeof output === 'string') return { code: 0, stdout: '', stderr: '', file: { path: output, format: 'text', html: body, input: file, what: `simulated run (${options.json ? 'JSON' : 'text'})`, command: 'simulate' } };
  if (typeof hitsFile === 'string') return { code: 0, stdout: body, stderr: '', file: { path: hitsFile, format: 'text', html: hitsText, input: file, what: `hits of the simulated run (CSV, ${s.detectors.reduce((n, d) => n + d.hits, 0)} rows)`, command: 'simulate' } };
  return ok(body);
}
