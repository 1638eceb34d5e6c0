/**
 * The setup sheet of one beamline as plain data: what the bench needs on paper before the line is
 * aligned (species and its constants with sources, oven, every element at its place along the beam with
 * its set-points as the document wrote them, the expected leaves and detector counts, warnings and
 * cautions, sign-off lines), and the file it belongs to (its name and the SHA-256 of its text). Lengths on the
 * sheet: element positions (entrance and exit, measured from the oven aperture) in cm, detector-plane
 * positions in mm.
 * No DOM, React or node:* here: the app's renderer and the CLI both build it.
 */
import { KINDS, isKind, outputsOf } from '../beamline/elements/registry.ts';
import { isOutputKey } from '../beamline/elements/keys.ts';
import type { KeySpec } from '../beamline/elements/kind.ts';
import { DISPLAY_UNITS } from '../beamline/parameters.ts';
import { ATOMIC_MASS_UNIT_KG } from '../beamline/units.ts';
import type { AxisDoc, Beamline, BeamlineDoc, ElementDoc, OvenStateDoc, QuantityDoc, VelocityDoc } from '../beamline/types.ts';
import type { RunResult } from '../engine/result.ts';
import { budget } from '../engine/budget.ts';
import { compile } from '../engine/plan.ts';
import { RunError } from '../engine/errors.ts';
import { formatHalfInteger } from '../physics/spin.ts';
import { LINE_CAUTIONS, lookupSpecies } from '../species/index.ts';
import type { AtomSpecies, Cited } from '../species/types.ts';
import { sha256Hex } from './sha256.ts';
import { formatValue } from '../beamline/numbers.ts';

/** One number of the species with where it was read. */
export interface SheetConstant {
  name: string;
  value: string;
  source: string;
}

export interface SheetSpecies {
  /** Library name ("Rb-87", "Ag") or "bare spin 1/2". */
  name: string;
  label: string;
  /** Nuclear spin I and electronic angular momentum J as written in physics ("3/2", "1/2"). */
  I: string;
  J: string;
  constants: SheetConstant[];
  /** For a natural mixture: its isotopes with their abundance fractions. */
  parts?: { name: string; I: string; J: string; fraction: number; constants: SheetConstant[] }[];
}

export interface SheetOven {
  /** The initial spin state, in words ("unpolarized", "pure m = +1/2 along roll 0 deg", …). */
  state: string;
  /** Velocity distribution: kind and its parameters as written. */
  velocity: { kind: string; parameters: { name: string; value: string; implied?: string }[] };
  /** Flux as the document wrote it ("5e8 /s", or the reservoir temperature of a vapour estimate). */
  fluxWritten: string;
  /** Flux the run used, atoms/s. */
  flux: number;
  /** Oven aperture as written ("1 mm × 0.05 mm"), when given. */
  aperture?: string;
  /** The first element (its id). */
  to: string;
}

export interface SheetSetPoint {
  /** The document key ("gap", "axis", "field", "gradient", "aperture", "angle", …). */
  name: string;
  /** Its value as the document wrote it (or, for a default, as the run used it, in the document's units). */
  value: string;
  /** The unit a plain number carries without writing it, in words ("fraction of arrivals counted"). */
  implied?: string;
  /** Not written in the document: the default value the run used. */
  default?: boolean;
}

export interface SheetElement {
  id: string;
  kind: string;
  /** Entrance along the beam from the oven aperture (cm); undefined when the run gave no positions. */
  entranceCm?: number;
  /** Exit along the beam from the oven aperture (cm). */
  exitCm?: number;
  /** exit − entrance (cm). */
  lengthCm?: number;
  setPoints: SheetSetPoint[];
  /** Where its output goes: one row per port of a magnet ("+1/2" → "M2"), one row with port "" otherwise. */
  routes: { port: string; target: string }[];
}

export interface SheetLeaf {
  path: string[];
  target: string;
  yield: number;
  /** counts/s (or atoms/s absorbed at a stop). */
  rate: number;
  /** Mean displacement at the leaf's plane (mm). */
  displacementMm?: { x: number; z: number };
  /** rms spread at the leaf's plane (mm). */
  spreadMm?: { x: number; z: number };
  captured?: number;
}

export interface SheetDetector {
  id: string;
  yield: number;
  /** counts/s, background included once. */
  rate: number;
  /** counts/s of the beam alone (rate − background). */
  signal: number;
  /** counts/s of the background as the detector's set-point gives it. */
  background: number;
  counts: number;
  sigma: number;
  /** s */
  dwell: number;
  /** S/B; absent without background (unbounded). */
  signalToBackground?: number;
  /** Time to the relative precision `epsilon` on the signal (s); absent without signal. */
  timeToPrecision?: number;
  epsilon: number;
}

/** The document the sheet was printed from: its file name and the SHA-256 (hex) of its UTF-8 text. */
export interface SheetSource {
  fileName: string;
  sha256: string;
}

export interface SheetModel {
  title: string;
  generatedAt?: string;
  /** The file the sheet belongs to; absent for an unsaved document. */
  source?: SheetSource;
  species: SheetSpecies;
  oven: SheetOven;
  /** In beam order: by entrance, then document order. */
  elements: SheetElement[];
  /** Total drawn length of the line from the oven aperture to the last exit (cm). */
  lineLengthCm: number;
  leaves: SheetLeaf[];
  detectors: SheetDetector[];
  /** Fraction of the oven flux lost (apertures, slits). */
  lost: number;
  warnings: string[];
  /** "method, N nodes, estimated error E", when the run reports one. */
  quadrature?: string;
  /** The run's estimated absolute error of the yields (its quadrature), when above 0: the tables print no finer. */
  yieldError?: number;
  /** Species cautions then line cautions, each once. */
  cautions: string[];
  /** The closing line that defers to local rules. */
  deference: string;
  /** One sign-off line per caution area that applies to this line ("Magnets and fields checked (…)"). */
  signOff: string[];
  /** The five largest entries of the line's first-order tolerance budget, where the document keeps tolerances. */
  tolerances?: SheetTolerance[];
  /** Why the budget could not be made, where the document keeps tolerances. */
  tolerancesNote?: string;
}

/** One (detector, tolerance) pair of the budget: how much that tolerance alone moves that detector's signal. */
export interface SheetTolerance {
  detector: string;
  parameter: string;
  /** "±0.5 deg uniform". */
  tolerance: string;
  /** σ of the signal from this tolerance, counts/s, to first order. */
  effect: number;
  /** effect / the detector's signal. */
  relative: number;
  /** Share of the detector's first-order variance. */
  share: number;
}

/** Entries of the budget the sheet prints. */
export const SHEET_TOLERANCES = 5;

/** The five largest entries of the first-order budget (no Monte Carlo: `spinyard budget` has it). */
function tolerancesOf(doc: BeamlineDoc): { rows?: SheetTolerance[]; note?: string } {
  const c = compile(doc);
  if (!c.ok) return { note: c.problems[0] };
  try {
    const b = budget(c.plan, { draws: 0 });
    const byName = new Map(b.tolerances.map((t) => [t.name, t]));
    const rows = b.ranking.filter((r) => r.effect > 0).slice(0, SHEET_TOLERANCES).map((r) => {
      const t = byName.get(r.tolerance)!;
      const h = Number((t.halfWidth / t.factor).toPrecision(4));
      const ht = Math.abs(h) >= 1e5 || (h !== 0 && Math.abs(h) < 1e-3) ? h.toExponential().replace('e+', 'e') : String(h);
      return { detector: r.detector, parameter: r.tolerance, tolerance: `±${ht}${t.unit ? ` ${t.unit}` : ''} ${t.distribution}`, effect: r.effect, relative: r.relative, share: r.share };
    });
    return { rows };
  } catch (e) {
    if (e instanceof RunError) return { note: e.message };
    throw e;
  }
}

export const DEFERENCE = 'These notes summarise common practice; local rules and licensed practice take precedence.';

/** A bare spin has no library cautions, but its beam still comes from a hot oven of some real species. */
export const BARE_SPIN_CAUTION =
  'Bare spin: this line stands for a real species from a hot oven. Treat the oven and its shields as hot until they have cooled fully, vent with dry inert gas before opening, and follow the cautions of that species (spinyard species NAME).';

/** The library's own closing notice of every caution list; the sheet says it once, as DEFERENCE. */
const isNotice = (c: string) => c.startsWith('These notes summarise common practice');

// ------------------------------------------------------------------ writing values as the document did
const q = (v: QuantityDoc | undefined): string => (v === undefined ? '' : String(v));

function axisText(a: AxisDoc): string {
  return 'roll' in a ? `roll ${q(a.roll)}` : `θ ${q(a.theta)}, φ ${q(a.phi)}`;
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Any document value in one line: axes as "roll 60 deg", vectors as "(x, y, z)", rectangles as "w × h". */
export function writtenValue(v: unknown): string {
  if (v === undefined || v === null) return '';
  if (typeof v === 'string' || typeof v === 'number') return String(v);
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (Array.isArray(v)) return v.map(writtenValue).join(', ');
  if (isRecord(v)) {
    if ('roll' in v || ('theta' in v && 'phi' in v)) return axisText(v as AxisDoc);
    if ('width' in v && 'height' in v) {
      const at = ['x', 'z'].filter((k) => k in v).map((k) => `${k} ${writtenValue(v[k])}`);
      return `${writtenValue(v.width)} × ${writtenValue(v.height)}${at.length ? ` at ${at.join(', ')}` : ''}`;
    }
    if ('x' in v && 'y' in v && 'z' in v && Object.keys(v).length === 3) return `(${writtenValue(v.x)}, ${writtenValue(v.y)}, ${writtenValue(v.z)})`;
    return Object.entries(v).map(([k, x]) => `${k}: ${writtenValue(x)}`).join('; ');
  }
  return String(v);
}

function stateText(s: OvenStateDoc): string {
  if (s.kind === 'unpolarized') return 'unpolarized';
  if (s.kind === 'pure') return `pure ${s.m} along ${axisText(s.axis)}`;
  if (s.kind === 'density') {
    const row = (r: number) => s.basis.map((_, c) => `${q(s.re[r]?.[c] ?? 0)}${s.im?.[r]?.[c] !== undefined && Number(s.im[r][c]) !== 0 ? ` ${Number(s.im[r][c]) < 0 ? '−' : '+'} ${q(Math.abs(Number(s.im[r][c])))}i` : ''}`).join(', ');
    return `density matrix over ${s.basis.join(', ')} along ${axisText(s.axis)}: rows ${s.basis.map((_, r) => `(${row(r)})`).join(', ')}`;
  }
  return `populations ${Object.entries(s.p).map(([k, p]) => `${k}: ${q(p)}`).join(', ')} along ${axisText(s.axis)}`;
}

function velocityOf(v: VelocityDoc): SheetOven['velocity'] {
  if (v.kind === 'table') {
    return { kind: 'table', parameters: [{ name: 'points', value: v.points.map(([s, w]) => `${q(s)}: ${q(w)}`).join(', '), implied: 'speed: relative weight' }] };
  }
  const parameters = Object.entries(v).filter(([k]) => k !== 'kind').map(([name, x]) => {
    const p: SheetOven['velocity']['parameters'][number] = { name, value: writtenValue(x) };
    if (name === 'ratio' && isPlainNumber(x)) p.implied = 'speed ratio, no unit';
    return p;
  });
  return { kind: v.kind, parameters };
}

// ------------------------------------------------------------------ species
const MASS_U = (kg: number) => kg / ATOMIC_MASS_UNIT_KG;

function cited(name: string, c: Cited, unit: string, scale = 1, sig = 10): SheetConstant {
  return { name, value: `${Number((c.value * scale).toPrecision(sig))}${unit ? ` ${unit}` : ''}`, source: c.source };
}

function atomConstants(s: AtomSpecies): SheetConstant[] {
  const out = [cited('g_J', s.gJ, '')];
  if (s.i2 > 0) out.push(cited('g_I', s.gI, ''), cited('A', s.aHz, 'MHz', 1e-6, 13));
  if (s.bHz) out.push(cited('B (quadrupole)', s.bHz, 'MHz', 1e-6));
  out.push({ name: 'mass', value: `${Number(MASS_U(s.massKg.value).toPrecision(12))} u`, source: s.massKg.source });
  if (s.abundance) out.push(cited('abundance', s.abundance, ''));
  return out;
}

function speciesOf(doc: BeamlineDoc, line: Beamline): { species: SheetSpecies; isotopes: AtomSpecies[] } {
  const ref = line.species;
  if (ref.kind === 'bare') {
    const written = typeof doc.species === 'object' ? doc.species : undefined;
    const spin = formatHalfInteger(ref.j2, false);
    return {
      species: {
        name: `bare spin ${spin}`, label: 'bare spin (H = g μB J·B)', I: '0', J: spin,
        constants: [
          { name: 'g', value: written ? q(written.g) : String(ref.g), source: 'as written in the document' },
          { name: 'mass', value: written ? q(written.mass) : `${Number(MASS_U(ref.massKg).toPrecision(8))} u`, source: 'as written in the document' },
        ],
      },
      isotopes: [],
    };
  }
  const s = lookupSpecies(ref.name);
  if (!s || s.kind === 'bare') {
    return { species: { name: ref.name, label: ref.name, I: '?', J: '?', constants: [] }, isotopes: [] };
  }
  if (s.kind === 'atom') {
    return {
      species: { name: s.name, label: `${s.label}, ${s.state}`, I: formatHalfInteger(s.i2, false), J: formatHalfInteger(s.j2, false), constants: atomConstants(s) },
      isotopes: [s],
    };
  }
  const parts = s.parts.map((p) => ({
    name: p.species.name, I: formatHalfInteger(p.species.i2, false), J: formatHalfInteger(p.species.j2, false),
    fraction: p.fraction, constants: atomConstants(p.species),
  }));
  const same = (k: 'I' | 'J') => (new Set(parts.map((p) => p[k])).size === 1 ? parts[0][k] : parts.map((p) => p[k]).join(' / '));
  return {
    species: { name: s.name, label: `${s.label} (natural mixture)`, I: same('I'), J: same('J'), constants: [], parts },
    isotopes: s.parts.map((p) => p.species),
  };
}

// ------------------------------------------------------------------ elements
/** Keys of an element that are not set-points: its name, its kind and its routing (the routes have their own rows). */
const NOT_SET_POINTS = new Set(['id', 'kind', 'ports', 'to']);

const plain = (x: number) => String(Number(x.toPrecision(6)));

/** A JSON number or a string of a number alone: a value whose unit is implied (a string with a unit says its own). */
function isPlainNumber(v: unknown): boolean {
  return typeof v === 'number' || (typeof v === 'string' && /^\s*[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?\s*$/i.test(v));
}

/** A written key's row: its value as written, and the unit a plain number carries in words where its key table says one. */
function setPointOf(spec: KeySpec | undefined, name: string, v: unknown): SheetSetPoint {
  const sp: SheetSetPoint = { name, value: writtenValue(v) };
  if (spec?.implied && isPlainNumber(v)) sp.implied = spec.implied;
  return sp;
}

/** The row of a key the document leaves out and its table marks for the sheet: the value the run used, in its dimension's display unit. */
function defaultRow(s: KeySpec, norm: Readonly<Record<string, unknown>> | undefined): SheetSetPoint | undefined {
  const v = norm?.[s.key];
  if (s.shape.type !== 'quantity' || typeof v !== 'number' || !Number.isFinite(v)) return undefined;
  const u = DISPLAY_UNITS[s.shape.dim];
  const row: SheetSetPoint = { name: s.key, value: u.unit ? `${plain(v / u.factor)} ${u.unit}` : plain(v), default: true };
  if (s.implied) row.implied = s.implied;
  return row;
}

/**
 * The set-point rows of an element from its kind's key table: the gap, then each key in the table's order as written,
 * or the value the run used where the table says the sheet prints a left-out key's default; a written key the table
 * does not know (an unknown kind's) follows in the document's order, so nothing written is left off.
 */
function setPointsOf(e: ElementDoc, norm: Beamline['elements'][number] | undefined): SheetSetPoint[] {
  const written = e as unknown as Readonly<Record<string, unknown>>;
  const table = isKind(e.kind) ? KINDS[e.kind].table.filter((s) => !isOutputKey(s)) : [];
  const rows: SheetSetPoint[] = [];
  if (written.gap !== undefined) rows.push(setPointOf(undefined, 'gap', written.gap));
  for (const s of table) {
    if (written[s.key] !== undefined) rows.push(setPointOf(s, s.key, written[s.key]));
    else if (s.sheetDefault) {
      const d = defaultRow(s, norm as Readonly<Record<string, unknown>> | undefined);
      if (d) rows.push(d);
    }
  }
  const known = new Set(['gap', ...table.map((s) => s.key)]);
  for (const [name, v] of Object.entries(written)) if (!NOT_SET_POINTS.has(name) && !known.has(name) && v !== undefined) rows.push(setPointOf(undefined, name, v));
  return rows;
}

function elementOf(e: ElementDoc, pos: { entrance: number; exit: number } | undefined, norm: Beamline['elements'][number] | undefined): SheetElement {
  const setPoints = setPointsOf(e, norm);
  const routes = outputsOf(e).map((o) => ({ port: o.port ?? '', target: o.target }));
  const out: SheetElement = { id: e.id, kind: e.kind, setPoints, routes };
  if (pos) {
    out.entranceCm = pos.entrance * 100;
    out.exitCm = pos.exit * 100;
    out.lengthCm = (pos.exit - pos.entrance) * 100;
  }
  return out;
}

const xzMm = (v: { x: number; z: number } | undefined) => (v ? { x: v.x * 1e3, z: v.z * 1e3 } : undefined);

// ------------------------------------------------------------------ sign-off
const FIELD_KINDS = new Set(['magnet', 'recombiner', 'field', 'twist', 'rf']);

/**
 * One line per caution area that applies: magnets and fields (an element that makes a field), vacuum and
 * oven (every line), alkali metal (a species with the library's alkali caution), high voltage (a detector,
 * or a species whose source the library says is a high-voltage discharge).
 */
function signOffOf(doc: BeamlineDoc, speciesCautions: readonly string[]): string[] {
  const out: string[] = [];
  if (doc.elements.some((e) => FIELD_KINDS.has(e.kind))) out.push('Magnets and fields checked (posted 0.5 mT line, non-magnetic tools, pinch points)');
  out.push('Vacuum and oven checked (viewports, shields, oven cooled before venting)');
  if (speciesCautions.some((c) => c.startsWith('Alkali metal'))) out.push('Alkali metal handling checked (under oil or dry inert gas, Class D extinguisher at hand)');
  if (doc.elements.some((e) => e.kind === 'detector') || speciesCautions.some((c) => /high voltage/i.test(c))) {
    out.push('High voltage checked (interlocks, lockable disconnect, grounding hook)');
  }
  return out;
}

/**
 * The setup sheet of the beamline `doc` (as written) / `line` (normalized) with the run `result`.
 * `generatedAt` is printed as given (the caller's clock; the model reads none).
 */
export function buildSheet(doc: BeamlineDoc, line: Beamline, result: RunResult,
  opts: { generatedAt?: string; source?: { fileName: string; text: string } } = {}): SheetModel {
  const { species, isotopes } = speciesOf(doc, line);
  const positions = result.positions ?? {};
  const order = new Map(doc.elements.map((e, i) => [e.id, i]));
  const elements = doc.elements
    .map((e) => elementOf(e, positions[e.id], line.elements.find((n) => n.id === e.id)))
    .sort((a, b) => (a.entranceCm ?? 0) - (b.entranceCm ?? 0) || (order.get(a.id) ?? 0) - (order.get(b.id) ?? 0));
  const ends = Object.values(positions).map((p) => p.exit * 100);
  const flux = doc.oven.flux;
  const oven: SheetOven = {
    state: stateText(doc.oven.state),
    velocity: velocityOf(doc.oven.velocity),
    fluxWritten: typeof flux === 'object' ? `vapour-pressure estimate at ${q(flux.temperature)}` : q(flux),
    flux: result.flux,
    to: doc.oven.to,
  };
  if (doc.oven.aperture) oven.aperture = writtenValue(doc.oven.aperture);
  const speciesCautions = line.species.kind === 'bare' ? [BARE_SPIN_CAUTION] : isotopes.flatMap((s) => s.cautions ?? []);
  const all = [...speciesCautions, ...LINE_CAUTIONS];
  const model: SheetModel = {
    title: line.title || doc.title || '(untitled beamline)',
    species,
    oven,
    elements,
    lineLengthCm: Math.max(0, ...ends),
    leaves: result.leaves.map((l) => {
      const leaf: SheetLeaf = { path: [...l.path], target: l.target, yield: l.yield, rate: l.rate };
      if (l.displacement) leaf.displacementMm = xzMm(l.displacement);
      if (l.spread) leaf.spreadMm = xzMm(l.spread);
      if (l.captured !== undefined) leaf.captured = l.captured;
      return leaf;
    }),
    detectors: result.detectors.map((d) => ({
      id: d.id, yield: d.yield, rate: d.rate, signal: d.signal, background: d.background, counts: d.counts, sigma: d.sigma, dwell: d.dwell,
      signalToBackground: d.signalToBackground, timeToPrecision: d.timeToPrecision.seconds, epsilon: d.timeToPrecision.epsilon,
    })),
    lost: result.lost,
    warnings: [...new Set(result.warnings)],
    cautions: [...new Set(all.filter((c) => !isNotice(c)))],
    deference: DEFERENCE,
    signOff: signOffOf(doc, speciesCautions),
  };
  if (opts.generatedAt !== undefined) model.generatedAt = opts.generatedAt;
  if (opts.source) model.source = { fileName: opts.source.fileName, sha256: sha256Hex(opts.source.text) };
  const qd = result.quadrature;
  if (qd) model.quadrature = qd.nodes > 0 ? `${qd.method}, ${qd.nodes} nodes, estimated error ${formatValue(qd.error, 2)}` : qd.method;
  if (qd && qd.error > 0 && Number.isFinite(qd.error)) model.yieldError = qd.error;
  if (line.tolerances?.length) {
    const t = tolerancesOf(doc);
    if (t.rows) model.tolerances = t.rows;
    if (t.note) model.tolerancesNote = t.note;
  }
  return model;
}
