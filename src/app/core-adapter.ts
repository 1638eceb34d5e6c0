// The renderer's one door to the core (src/beamline, src/engine, src/species): every import of the
// core by src/app goes through this file, so the app depends on the core's API in one place.

import {
  parseBeamlineText,
  serializeDoc,
  parseQuantity,
  setAt,
  addElementOnPort,
  deleteElement,
  duplicateElement,
  reroute,
  renameElement,
  portLabels,
  isHyperfine,
  DISPLAY_UNITS,
  type LabelSpecies,
} from '../beamline/index.ts';
import { speciesPortLabels as docSpeciesPortLabels } from '../beamline/edits.ts';
export { outputsOf, lengthOf, KINDS } from '../beamline/elements/registry.ts';
export { changeSpecies, documentOutputs, elementOutputs, speciesIsHyperfine, DEFAULT_HYPERFINE_FIELD, type DocOutput, type SpeciesChange } from '../beamline/edits.ts';
import { runLine, compile, estimateLine, checkCost, type RunResult, type ParameterSlot } from '../engine/index.ts';
export { compile, scanParameters, scanIndices, scanPoint, scanResult, scanCsv, budget, budgetSetup, budgetOutcomes, budgetResult, csvNumber, leafName, CancelledError, RunError, MAX_SCAN_POINTS, MAX_BUDGET_DRAWS } from '../engine/index.ts';
export { CostLimitError } from '../engine/index.ts';
export type { Plan, ParameterSlot, ScanResult, ScanPoint, ScanParameterResult, BudgetResult, BudgetSetup, BudgetOutcome, BudgetTolerance, BudgetDetector, Sensitivity } from '../engine/index.ts';
export { fit, fittedDocument, fittedQuantity, readMeasurements, simulate, parameter, MAX_ATOMS, MAX_READINGS } from '../engine/index.ts';
export type { FitResult, FittedParameter, FitResidual, FreeParameter, Measurements, SimulationResult, SimulatedDetector, HitMap } from '../engine/index.ts';
export type { ScanDoc, ToleranceDoc, FitDoc, SimulationDoc } from '../beamline/types.ts';
import { buildSheet, sheetHtml } from '../sheet/index.ts';
export { durationIn } from '../sheet/index.ts';
import { lookupSpecies, speciesNames } from '../species/index.ts';
import type { BeamlineDoc, Beamline, ElementKind, Problem } from '../beamline/types.ts';

export type { BeamlineDoc, Beamline, Element, ElementDoc, ElementKind, Problem, ParseResult } from '../beamline/types.ts';
export type { Dimension } from '../beamline/units.ts';
export type { RunResult, LeafResult, DetectorResult } from '../engine/index.ts';
export { countSigma, countsIn, timeToPrecision } from '../engine/index.ts';
import type { Dimension } from '../beamline/units.ts';

export type ParsedDoc = { ok: true; doc: BeamlineDoc; line: Beamline; warnings: Problem[] } | { ok: false; problems: Problem[] };

/** Reads a document's text: the raw document and the normalized line, or every problem found. */
export function readDocument(text: string): ParsedDoc {
  const r = parseBeamlineText(text);
  return r.ok ? { ok: true, doc: r.doc, line: r.line, warnings: [...r.warnings] } : { ok: false, problems: [...r.problems] };
}

/** The document as file text (format v1, stable key order). */
export function documentText(doc: BeamlineDoc): string {
  return serializeDoc(doc);
}

/** A document value checked: its file text (as Save writes it) and what reading that text gives. */
export type CheckedDoc = ParsedDoc & { text: string };

const checked = new WeakMap<BeamlineDoc, CheckedDoc>();

/** Reads a document value (not yet in a file): validates it as the file would be, from its file text.
 *  Documents are immutable values, so the answer and the text are kept per document object: an edit
 *  serializes and validates its new document once, whoever asks after it (the edit, the view, the
 *  engine's feed, the unsaved-changes mark and autosave). */
export function checkDocument(doc: BeamlineDoc): CheckedDoc {
  let r = checked.get(doc);
  if (!r) {
    const text = documentText(doc);
    r = { ...readDocument(text), text };
    checked.set(doc, r);
  }
  return r;
}

/** One quantity in SI, or the message naming what is wrong. */
export function checkQuantity(value: unknown, dim: Dimension, path: string): { ok: true; si: number } | { ok: false; message: string } {
  const r = parseQuantity(value, dim, path);
  return typeof r === 'number' ? { ok: true, si: r } : { ok: false, message: r.message };
}

export type EditResult = { ok: true; doc: BeamlineDoc; id?: string } | { ok: false; message: string };

/** The document with the value at a JSON path ("elements[1].axis.roll") replaced; undefined removes the key. */
export function editAt(doc: BeamlineDoc, path: string, value: unknown): EditResult {
  return setAt(doc, path, value);
}

/** A new element of `kind` on `fromId`'s output `port` (null: the single output, or the oven's). */
export function editAddOnPort(doc: BeamlineDoc, line: Beamline, fromId: string, port: string | null, kind: ElementKind): EditResult {
  return addElementOnPort(doc, fromId, port, kind, undefined, kind === 'recombiner' ? magnetPortLabels(line) : []);
}

export function editDelete(doc: BeamlineDoc, id: string): EditResult {
  return deleteElement(doc, id);
}

export function editDuplicate(doc: BeamlineDoc, id: string): EditResult {
  return duplicateElement(doc, id);
}

export function editReroute(doc: BeamlineDoc, fromId: string, port: string | null, target: string): EditResult {
  return reroute(doc, fromId, port, target);
}

export function editRename(doc: BeamlineDoc, oldId: string, newId: string): EditResult {
  return renameElement(doc, oldId, newId);
}

/** The species of a normalized line as the label functions take it, when it is known. */
function labelSpecies(line: Beamline): LabelSpecies | undefined {
  const sp = line.species as unknown as { kind: string; j2?: number; name?: string };
  if (sp.kind === 'bare' && typeof sp.j2 === 'number') return { kind: 'bare', j2: sp.j2 };
  if (sp.kind === 'named' && sp.name) {
    const s = lookupSpecies(sp.name);
    return s ? (s as unknown as LabelSpecies) : undefined;
  }
  return sp.kind === 'atom' || sp.kind === 'mixture' ? (sp as unknown as LabelSpecies) : undefined;
}

/** Port labels of a magnet of this line's species (docs/design.md, "Port labels"). */
export function magnetPortLabels(line: Beamline, group?: 'mJ' | 'each'): string[] {
  const sp = labelSpecies(line);
  return sp ? portLabels(sp, group) : [];
}

/** True when the line's species has hyperfine structure (group and entry apply to its magnets). */
export function lineIsHyperfine(line: Beamline): boolean {
  const sp = labelSpecies(line);
  return sp ? isHyperfine(sp) : false;
}

/** Port labels a magnet would have with species `species` as written in a document (a library name or
 *  a bare spin {spin, g, mass}), or undefined when it is not a known species. */
export function speciesPortLabels(species: unknown, group?: 'mJ' | 'each'): string[] | undefined {
  return docSpeciesPortLabels(species, group);
}

/** Cautions the species library gives for the line's species (alkali metals, discharge sources, …). */
export function speciesCautions(line: Beamline): string[] {
  const sp = line.species as unknown as { kind: string; name?: string };
  if (sp.kind !== 'named' || !sp.name) return [];
  const s = lookupSpecies(sp.name) as unknown as { cautions?: readonly string[]; parts?: { species: { cautions?: readonly string[] } }[] } | undefined;
  const all = [...(s?.cautions ?? []), ...(s?.parts ?? []).flatMap((p) => p.species.cautions ?? [])];
  return [...new Set(all)];
}

/** Names of the species library, for the species picker. */
export function librarySpeciesNames(): string[] {
  return [...speciesNames()];
}

/** Runs the engine (runLine of src/engine/index.ts) on a normalized line (result format v1); `acceptCost` runs it even
 *  where the estimated work is above the engine's ask limit. */
export function runEngine(line: Beamline, opts?: { onProgress?: (f: number) => void; isCancelled?: () => boolean; acceptCost?: boolean }): RunResult {
  return runLine(line, opts);
}

/** The engine's estimate of a run of `line` in seconds (src/engine/cost.ts; microseconds to make); ∞ where it cannot be made. */
export function estimatedSeconds(line: Beamline): number {
  try {
    return estimateLine(line).seconds;
  } catch {
    return Infinity;
  }
}

/**
 * Throws the engine's CostLimitError where a run of `line` would be refused by its estimated cost (above the ask
 * limit without `acceptCost`, above the hard limit in any case); else returns. Only the estimate is made.
 */
export function checkRunCost(line: Beamline, acceptCost: boolean): void {
  checkCost(line, { acceptCost });
}

/**
 * The printable setup sheet (src/sheet) of a document: the line is run again here, so the sheet
 * always shows the numbers of the document it prints. Every page names the file (`fileName`, or
 * "untitled") and the hash of the document's text as Save writes it (documentText).
 */
export function setupSheetHtml(doc: BeamlineDoc, line: Beamline, fileName?: string): string {
  const result = runLine(line) as RunResult;
  const now = new Date();
  const stamp = `${now.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
  return sheetHtml(buildSheet(doc, line, result, { generatedAt: stamp, source: { fileName: fileName || 'untitled', text: documentText(doc) } }));
}

/** A document's parameters (docs/design.md, "Parameters"): name, JSON path, dimension, SI value, shown unit; an
 *  empty list when the text does not compile. Kept per text, so a view asks as often as it likes. */
export function lineParameters(text: string): readonly ParameterSlot[] {
  if (paramsFor.text === text) return paramsFor.params;
  const r = compile(text);
  const params = r.ok ? r.plan.parameters : [];
  paramsFor = { text, params };
  return params;
}
let paramsFor: { text: string; params: readonly ParameterSlot[] } = { text: '', params: [] };

/** The unit a dimension is shown in and its SI factor (SI = shown × factor), as scans and budgets report them. */
export function displayUnit(dimension: Dimension): { unit: string; factor: number } {
  return DISPLAY_UNITS[dimension];
}

// The oven's state, the velocity table and positions from the oven aperture (src/beamline/edits.ts), a measured
// velocity table from CSV, and the levels listing of the line's species (src/engine/levels.ts).
export { ovenStateOfKind, setOvenState, setVelocityTable, editVelocityRows, setPositionFromOven } from '../beamline/edits.ts';
export { readVelocityCsv, type VelocityCsv } from '../beamline/velocity-csv.ts';
export type { OvenStateDoc, QuantityDoc } from '../beamline/types.ts';
export { levelsListing } from '../engine/index.ts';

import { sha256Hex } from '../sheet/index.ts';
/** The SHA-256 (hex) of a document's text as Save writes it: the hash the setup sheet prints and the ports CSV carries. */
export function documentHash(doc: BeamlineDoc): string {
  return sha256Hex(checkDocument(doc).text);
}
