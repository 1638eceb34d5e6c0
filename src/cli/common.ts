/** What the planning commands (scan, budget, fit, simulate) share: reading their options and saying what is wrong. */
import { costLimit, estimateLine, type Plan } from '../engine/index.ts';
import { isSameFile } from './output.ts';
import { type CliOutput, bad } from './quick.ts';

/** A document that does not read: every problem, one per line. */
export function problemsOut(file: string, problems: readonly string[], cost?: { hard: boolean }): CliOutput {
  const n = problems.length;
  if (cost) return bad(`${file}: not run: its estimated cost is above what the engine ${cost.hard ? 'starts' : 'starts without --accept-cost'}:`, ...problems.map((p) => `  ${p}`));
  return bad(`${file}: not a valid beamline (${n} problem${n === 1 ? '' : 's'}):`, ...problems.map((p) => `  ${p}`));
}

/**
 * A whole-number option from 0 to `max`: the number, undefined when absent, or the message naming it. Digits, or a
 * whole number in exponent form as a lab writes a count of atoms or draws (`1e6`, `2.5e5`).
 */
export function wholeOption(text: unknown, name: string, max: number): number | undefined | string {
  if (text === undefined) return undefined;
  const s = String(text);
  const n = Number(s);
  return /^\s*(\d+|\d+(\.\d+)?[eE]\+?\d+)\s*$/.test(s) && Number.isSafeInteger(n) && n <= max ? n : `--${name}: a whole number from 0 to ${max}, got "${s}"`;
}

/**
 * The --workers option of the planning commands: the number of threads given (1 to 256), `fallback` where it is absent,
 * or the message naming it.
 */
export function workersOption(text: unknown, fallback: number): number | string {
  if (text === undefined) return fallback;
  const w = String(text);
  return /^\s*\d+\s*$/.test(w) && Number(w) >= 1 && Number(w) <= 256 ? Number(w) : `--workers: a whole number from 1 to 256, got "${w}"`;
}

/** Why `-o OUT` cannot be written for this input (empty, or the input document itself), or undefined. */
export function outputProblem(file: string, output: unknown, what: string): string | undefined {
  if (typeof output !== 'string') return undefined;
  if (output === '') return '-o: the output file name is empty';
  if (isSameFile(file, output)) return `-o ${output} is the input document ${file}; ${what} is never written over its document`;
  return undefined;
}

/**
 * The cost gate of a planning command (scan, budget, fit, simulate): the line as written is estimated before any
 * point runs (engine/cost.ts); above the ask limit without --accept-cost, or above the refusal limits, the command
 * stops with the estimate, as `spinyard run` does. Null where it may go on.
 */
export function costGate(file: string, plan: Plan, accept: boolean): CliOutput | null {
  const limit = costLimit(estimateLine(plan.line), accept);
  return limit ? problemsOut(file, [limit.message], limit) : null;
}
