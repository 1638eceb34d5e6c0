/**
 * Compile once, evaluate many (docs/design.md, "Parameters"). `compile` reads a document once and keeps its
 * parameters — every quantity of the line by the element's id and the key ("M2.axis.roll", "F1.field.x",
 * "oven.velocity.temperature", "D1.efficiency"), with its dimension and value — and the routing. `evaluate`
 * runs the line with some parameters at other values: only the parts of the line that hold them are read again
 * (by the reader, with its bounds), every other part keeps its identity, so what the engine derived from it (the
 * oven's state, magnet sortings, velocity grids) serves every evaluation.
 */
import { formatProblem } from '../beamline/index.ts';
import { quote } from '../beamline/messages.ts';
import { type ParameterSlot, type ParameterizedLine, lineWithValues, parameterize, parameterHint, DISPLAY_UNITS } from '../beamline/parameters.ts';
import { librarySpecies } from '../beamline/validate.ts';
import { dimensionName, parseQuantity, isProblem } from '../beamline/units.ts';
import type { SpeciesResolver } from '../beamline/speciesDoc.ts';
import type { Beamline, BeamlineDoc, Problem } from '../beamline/types.ts';
import { runLine, RunError, type RunOptions } from './run.ts';
import type { RunResult } from './result.ts';
import { EvaluationSession } from './replay.ts';

export type { ParameterSlot } from '../beamline/parameters.ts';

/** A compiled line: its parameters and what every evaluation shares. */
export interface Plan {
  readonly doc: BeamlineDoc;
  readonly line: Beamline;
  /** The reader's warnings on the document as written. */
  readonly warnings: readonly string[];
  /** Every parameter, in document order. */
  readonly parameters: readonly ParameterSlot[];
  /** @internal the line as the reader holds it */
  readonly source: ParameterizedLine;
}

export type CompileResult = { ok: true; plan: Plan } | { ok: false; problems: string[] };

/** Compile a document, its text or parsed JSON (a species library other than src/species may be given). */
export function compile(input: string | object, resolver: SpeciesResolver = librarySpecies): CompileResult {
  const r = parameterize(input, resolver);
  if (!r.ok) return { ok: false, problems: r.problems.map(formatProblem) };
  const p = r.value;
  return { ok: true, plan: { doc: p.doc, line: p.line, warnings: p.warnings.map(formatProblem), parameters: p.slots, source: p } };
}

/** A parameter by its name ("M2.axis.roll") or its JSON path; a RunError naming the line's parameters when there is none. */
export function parameter(plan: Plan, name: string): ParameterSlot {
  const s = plan.source.byName.get(name);
  if (!s) throw new RunError(`no parameter ${quote(name)} in this line (${parameterHint(plan.source, name)})`);
  return s;
}

/** A value for a parameter as a user writes it ("30 deg", "2.5 mT", "0.9"), in SI; a RunError naming `what` when it cannot be read. */
export function parameterValue(slot: ParameterSlot, text: string, what: string): number {
  const r = parseQuantity(text, slot.dimension, what);
  if (isProblem(r)) throw new RunError(`${formatProblem(r)} (${slot.name} is ${dimensionName(slot.dimension)}, e.g. "1${DISPLAY_UNITS[slot.dimension].unit ? ` ${DISPLAY_UNITS[slot.dimension].unit}` : ''}")`);
  return r;
}

/** The line of `plan` with the named parameters at these SI values; a RunError naming the parameter when the reader refuses one. */
export function lineAt(plan: Plan, values: ReadonlyMap<string, number> | Readonly<Record<string, number>>): Beamline {
  const r = lineWithValues(plan.source, values);
  if (!r.ok) throw refused(plan, r.problems);
  return r.line;
}

/** The reader's refusals as one RunError, each naming its parameter. */
function refused(plan: Plan, problems: readonly Problem[]): RunError {
  const named = problems.map((p) => {
    const slot = plan.source.byName.get(p.path);
    return slot && slot.name !== p.path ? `${slot.name} (${formatProblem(p)})` : formatProblem(p);
  });
  return new RunError(named.join('; '));
}

/**
 * Run the line of `plan` with the named parameters at these SI values (none: the line as written). With an
 * EvaluationSession in `opts.session` (replay.ts), only the parts whose values differ from the session's last line
 * are read again, and the walk replays what a recorded run of the same objects did: the result is the same, bit for bit.
 */
export function evaluate(plan: Plan, values: ReadonlyMap<string, number> | Readonly<Record<string, number>> = {}, opts: RunOptions = {}): RunResult {
  let line: Beamline;
  if (opts.session instanceof EvaluationSession) {
    const r = opts.session.lineAt(plan.source, values);
    if (!r.ok) throw refused(plan, r.problems);
    line = r.line;
  } else line = lineAt(plan, values);
  const result = runLine(line, opts);
  if (plan.warnings.length) result.warnings.unshift(...plan.warnings);
  return result;
}
