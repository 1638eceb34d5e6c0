/** Shared helpers of the beamline validation tests (stand-in species library, fixtures). */
import { checkBeamline, formatProblem } from '../../src/beamline/check.ts';
import type { ParseResult, Problem } from '../../src/beamline/types.ts';
import { completedBeamKeys } from './examples.ts';
import { fakeSpecies } from './fakeSpecies.ts';

export const check = (doc: unknown) => checkBeamline(doc, fakeSpecies);
export function problems(doc: unknown): Problem[] {
  const r = check(doc);
  if (r.ok) throw new Error('expected problems, the document validated');
  return r.problems;
}
export function lines(doc: unknown): string[] {
  return problems(doc).map(formatProblem);
}
export function ok(r: ParseResult) {
  if (!r.ok) throw new Error(r.problems.map(formatProblem).join('\n'));
  return r;
}
/** The Rb-87 reference document of docs/design.md, completed with its header and D2. */
export const rbLine = () => completedBeamKeys() as Record<string, any>;
