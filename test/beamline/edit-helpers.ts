// What the tests of document edits share: frozen documents (an edit must not change the one it is given), the
// document of an accepted edit, and a check that the reader takes it.
import { checkBeamline, formatProblem } from '../../src/beamline/check.ts';
import type { EditResult } from '../../src/beamline/edits.ts';
import type { BeamlineDoc } from '../../src/beamline/types.ts';
import { fakeSpecies } from './fakeSpecies.ts';

export function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object') {
    Object.values(o).forEach(deepFreeze);
    Object.freeze(o);
  }
  return o;
}

/** The document of an accepted edit; a refusal fails the test with its message. */
export function done(r: EditResult): BeamlineDoc {
  if (!r.ok) throw new Error(r.message);
  return r.doc;
}

/** The reader's result for the document (with the test species); problems fail the test. */
export function valid(doc: BeamlineDoc) {
  const r = checkBeamline(doc, fakeSpecies);
  if (!r.ok) throw new Error(r.problems.map(formatProblem).join('\n'));
  return r;
}
