/** Text in, result out: read a document, validate it, run it; every problem as "path: message". */
import { parseBeamlineText, formatProblem } from '../beamline/index.ts';
import type { Beamline, BeamlineDoc } from '../beamline/types.ts';
import { runLine, RunError, type RunOptions } from './run.ts';
import type { RunResult } from './result.ts';
import { CostLimitError } from './cost.ts';

export type DocumentRun =
  | { ok: true; doc: BeamlineDoc; line: Beamline; result: RunResult }
  | { ok: false; problems: string[]; cost?: CostLimitError };

export function runDocumentText(text: string, opts: RunOptions = {}): DocumentRun {
  const parsed = parseBeamlineText(text);
  if (!parsed.ok) return { ok: false, problems: parsed.problems.map(formatProblem) };
  try {
    const result = runLine(parsed.line, opts);
    result.warnings.unshift(...parsed.warnings.map(formatProblem));
    return { ok: true, doc: parsed.doc, line: parsed.line, result };
  } catch (err) {
    if (err instanceof CostLimitError) return { ok: false, problems: [err.message], cost: err };
    if (err instanceof RunError) return { ok: false, problems: [err.message] };
    throw err;
  }
}
