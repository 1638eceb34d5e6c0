// What the tests of inspector edits share: the document layer's check, the line of a valid document, and an edit
// applied as the app applies it.
import { checkDocument, type Beamline, type BeamlineDoc } from '../../src/app/core-adapter.ts';
import { applyInspectorEdit, type InspectorEdit } from '../../src/app/inspector-edit.ts';

export const check = (d: BeamlineDoc) => {
  const r = checkDocument(d);
  return r.ok ? undefined : r.problems;
};

export const lineOf = (d: BeamlineDoc): Beamline => {
  const r = checkDocument(d);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
};

export const apply = (d: BeamlineDoc, e: InspectorEdit) => applyInspectorEdit(d, lineOf(d), e, check);
