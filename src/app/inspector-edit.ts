// The edits the inspector makes (a quantity entered, a choice, the species, an id, a route, an element
// added on a port), as data: the inspector runs each through the command registry as `inspector.edit`
// (app-commands.ts), like every other command, and the editor applies it with `applyInspectorEdit`. The
// document layer does the editing (src/beamline/edits.ts through the core adapter) and the validation;
// this decides what the user is told and where.

import {
  changeSpecies, checkQuantity, editAddOnPort, editAt, editRename, editReroute, DEFAULT_HYPERFINE_FIELD,
  editVelocityRows, setOvenState, setPositionFromOven, setVelocityTable,
  type Beamline, type BeamlineDoc, type ElementKind, type OvenStateDoc, type Problem, type QuantityDoc,
} from './core-adapter.ts';
import { newDocument } from './default-doc.ts';
import { getAt } from './doc-path.ts';
import { problemsFor } from './editing.ts';
import { regroupPorts } from './levels-view.ts';
import { defaultVelocity, type FieldSpec, type VelocityKind } from './fields.ts';

export type InspectorEdit =
  /** A quantity typed into a field at a document path ("elements[1].axis.roll"); "" removes an optional key. */
  | { kind: 'quantity'; path: string; text: string; spec: FieldSpec }
  /** A choice or a checkbox at a document path (undefined: the key's default). "oven.velocity" takes a kind. */
  | { kind: 'value'; path: string; value: unknown }
  /** A library species by name, or "bare spin". */
  | { kind: 'species'; value: string }
  | { kind: 'rename'; from: string; to: string }
  | { kind: 'reroute'; fromId: string; port: string | null; target: string }
  | { kind: 'addOnPort'; fromId: string; port: string | null; elementKind: string }
  /** The oven's initial state as a whole (its kind changed, or a population, an axis or the pure state). */
  | { kind: 'ovenState'; state: OvenStateDoc; what: string }
  /** The oven's velocity distribution a table of these points (a CSV imported: `source` names the file). */
  | { kind: 'velocityTable'; points: readonly (readonly [QuantityDoc, QuantityDoc])[]; source: string }
  /** A row of the velocity table added after `insert` or removed. */
  | { kind: 'velocityRows'; op: { insert: number } | { remove: number } }
  /** An element placed at a distance from the oven aperture (its gap set from where its upstream element ends). */
  | { kind: 'position'; id: string; text: string; upstreamExit: number; upstreamName: string };

/** The species choice that is not a library name. */
export const BARE_SPIN_CHOICE = 'bare spin';

/** What choosing "bare spin" writes: the bare spin of a new document (default-doc.ts). */
function bareSpin(): unknown {
  return newDocument().species;
}

/** What an edit led to. On success the new document and its label for undo/redo, the field whose
 *  message it clears, and what to select or announce; on refusal the message, where it goes (a field,
 *  keeping the entry `text`, or a dialog with `title`), and the document stays as it was. */
export type EditOutcome =
  | { ok: true; doc: BeamlineDoc; label: string; field?: string; select?: string; notice?: string }
  | { ok: false; message: string; field?: string; text?: string; title?: string };

/** Validation of a proposed document: its problems, or undefined when it may be taken. */
export type CheckFn = (doc: BeamlineDoc) => readonly Problem[] | undefined;

/** "elements[1].axis.roll" → "M2 axis.roll"; other paths as they are. */
function where(doc: BeamlineDoc, path: string): string {
  const m = /^elements\[(\d+)\]\.?(.*)$/.exec(path);
  if (!m) return path;
  const id = doc.elements[Number(m[1])]?.id ?? `element ${m[1]}`;
  return m[2] ? `${id} ${m[2]}` : id;
}

function valueText(v: unknown): string {
  if (v === undefined) return 'default';
  if (typeof v === 'boolean') return v ? 'on' : 'off';
  return typeof v === 'string' ? v : JSON.stringify(v);
}

/** What an edit does, in a few words, for Undo/Redo ("M2 axis.roll = 35 deg"). `doc` is the document it applies to. */
export function editLabel(doc: BeamlineDoc, e: InspectorEdit): string {
  switch (e.kind) {
    case 'quantity': return e.text.trim() === '' ? `${where(doc, e.path)} cleared` : `${where(doc, e.path)} = ${e.text.trim()}`;
    case 'value': return `${where(doc, e.path)} = ${valueText(e.value)}`;
    case 'species': return `species ${e.value}`;
    case 'rename': return `rename ${e.from} → ${e.to}`;
    case 'reroute': return `route ${e.fromId}${e.port === null ? '' : ` ${e.port}`} → ${e.target}`;
    case 'addOnPort': return `add a ${e.elementKind} on ${e.fromId}${e.port === null ? '' : ` ${e.port}`}`;
    case 'ovenState': return `oven state: ${e.what}`;
    case 'velocityTable': return `velocity table from ${e.source} (${e.points.length} speeds)`;
    case 'velocityRows': return 'insert' in e.op ? `velocity table: row added after row ${e.op.insert + 1}` : `velocity table: row ${e.op.remove + 1} removed`;
    case 'position': return `${e.id} at ${e.text.trim()} from the oven aperture`;
  }
}

const listed = (problems: readonly Problem[]) => problems.map((x) => `${x.path}: ${x.message}`).join('\n');
const isNumberText = (t: string) => /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(t);

/**
 * Applies inspector edit `e` to `doc` (whose normalized line is `line`) and validates the result with
 * `check`: the outcome says what to take and what to tell. Nothing is changed in place.
 */
export function applyInspectorEdit(doc: BeamlineDoc, line: Beamline, e: InspectorEdit, check: CheckFn): EditOutcome {
  const label = editLabel(doc, e);
  /** The outcome of a proposed document for a field at `field` (its entry `text`). */
  const atField = (next: BeamlineDoc, field: string, text: string, extra: { select?: string; notice?: string } = {}): EditOutcome => {
    const problems = check(next);
    return problems ? { ok: false, field, text, message: problemsFor(problems, field) } : { ok: true, doc: next, label, field, ...extra };
  };
  switch (e.kind) {
    case 'quantity': {
      const { path, text, spec } = e;
      const trimmed = text.trim();
      let value: unknown = trimmed;
      if (trimmed === '') {
        if (spec.type === 'quantity' && spec.optional) value = undefined;
        else return { ok: false, field: path, text, message: 'a value is needed here' };
      } else if (spec.type === 'quantity') {
        const q = checkQuantity(trimmed, spec.dim, path);
        if (!q.ok) return { ok: false, field: path, text, message: q.message };
        if (spec.dim === 'dimensionless' && isNumberText(trimmed)) value = Number(trimmed);
      }
      const r = editAt(doc, path, value);
      return r.ok ? atField(r.doc, path, text) : { ok: false, field: path, text, message: r.message };
    }
    case 'value': {
      const { path, value } = e;
      // a magnet's sorting changed: its ports are carried over to the new group's labels (each level keeps its
      // target, through the levels at the magnet's field), or the change is refused where they cannot be
      const g = /^elements\[(\d+)\]\.group$/.exec(path);
      const el = g ? doc.elements[Number(g[1])] : undefined;
      if (g && el?.kind === 'magnet' && (value === 'mJ' || value === 'each')) {
        const r = regroupPorts(line, el.id, value);
        if (r && !r.ok) return { ok: false, field: path, text: String(value), message: r.message };
        if (r) {
          const next = editAt(doc, path, value);
          const both = next.ok ? editAt(next.doc, `elements[${g[1]}].ports`, r.ports) : next;
          return both.ok ? atField(both.doc, path, String(value)) : { ok: false, field: path, text: String(value), message: both.message };
        }
      }
      const v = path === 'oven.velocity' ? defaultVelocity(value as VelocityKind, getAt(doc, 'oven.velocity') as Record<string, unknown>) : value;
      const r = editAt(doc, path, v);
      return r.ok ? atField(r.doc, path, String(value)) : { ok: false, field: path, text: String(value), message: r.message };
    }
    case 'species': {
      const r = changeSpecies(doc, (e.value === BARE_SPIN_CHOICE ? bareSpin() : e.value) as BeamlineDoc['species']);
      if (!r.ok) return { ok: false, field: 'species', text: e.value, message: `${e.value} does not fit this line as it is: ${r.message}` };
      const problems = check(r.doc);
      if (problems) return { ok: false, field: 'species', text: e.value, message: `${e.value} does not fit this line as it is: ${problemsFor(problems, 'species')}` };
      // a hyperfine species sorts by the eigenstates at the magnet's field: its size had to be given
      const notice = r.fieldSet.length > 0
        ? `${r.fieldSet.join(', ')}: field set to ${DEFAULT_HYPERFINE_FIELD} (a hyperfine species needs the field size at the beam); enter your magnets' set-point.`
        : undefined;
      return { ok: true, doc: r.doc, label, field: 'species', ...(notice ? { notice } : {}) };
    }
    case 'rename': {
      const field = `elements[${doc.elements.findIndex((x) => x.id === e.from)}].id`;
      const r = editRename(doc, e.from, e.to);
      return r.ok ? atField(r.doc, field, e.to, { select: e.to }) : { ok: false, field, text: e.to, message: r.message };
    }
    case 'reroute': {
      const title = `Cannot route ${e.fromId}${e.port ? ` ${e.port}` : ''} to ${e.target}`;
      const r = editReroute(doc, e.fromId, e.port, e.target);
      if (!r.ok) return { ok: false, title, message: `${e.fromId}: ${r.message}` };
      const problems = check(r.doc);
      return problems ? { ok: false, title, message: listed(problems) } : { ok: true, doc: r.doc, label };
    }
    case 'addOnPort': {
      const title = `Cannot add a ${e.elementKind}`;
      const r = editAddOnPort(doc, line, e.fromId, e.port, e.elementKind as ElementKind);
      if (!r.ok) return { ok: false, title, message: r.message };
      const problems = check(r.doc);
      return problems ? { ok: false, title, message: listed(problems) } : { ok: true, doc: r.doc, label, ...(r.id ? { select: r.id } : {}) };
    }
    case 'ovenState': {
      const r = setOvenState(doc, e.state);
      return r.ok ? atField(r.doc, 'oven.state', e.what) : { ok: false, field: 'oven.state', text: e.what, message: r.message };
    }
    case 'velocityTable': {
      const r = setVelocityTable(doc, e.points);
      if (!r.ok) return { ok: false, title: `Cannot take the velocity table of ${e.source}`, message: r.message };
      const problems = check(r.doc);
      return problems
        ? { ok: false, title: `Cannot take the velocity table of ${e.source}`, message: listed(problems) }
        : { ok: true, doc: r.doc, label, field: 'oven.velocity', notice: `Velocity table: ${e.points.length} speeds from ${e.source}.` };
    }
    case 'velocityRows': {
      const r = editVelocityRows(doc, e.op);
      return r.ok ? atField(r.doc, 'oven.velocity', '') : { ok: false, field: 'oven.velocity', text: '', message: r.message };
    }
    case 'position': {
      const i = doc.elements.findIndex((x) => x.id === e.id);
      const field = `elements[${i}].position`;
      const r = setPositionFromOven(doc, e.id, e.text, e.upstreamExit, e.upstreamName);
      return r.ok ? atField(r.doc, field, e.text) : { ok: false, field, text: e.text, message: r.message };
    }
  }
}
