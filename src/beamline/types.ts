/**
 * The beamline document in two forms.
 * - BeamlineDoc: the JSON as written (docs/design.md "Document format v1" + "Keys by element kind"), quantities as strings.
 * - Beamline: the normalized model the engine consumes, all numbers SI
 *   (m, s, T, T/m, rad, K, Hz, kg, 1/s), defaults filled in. `path` is the JSON path in the document.
 * Lab frame: beam along +y, z up. Axis n̂(θ, φ) = (sinθ cosφ, sinθ sinφ, cosθ); roll α: n̂ = (sin α, 0, cos α).
 */

// ---------------------------------------------------------------- problems
/** One validation finding: where (JSON path, e.g. "elements[2].axis.roll") and what. */
export interface Problem {
  readonly path: string;
  readonly message: string;
}

// ---------------------------------------------------------------- normalized model
export interface Vec3 { readonly x: number; readonly y: number; readonly z: number }
/** Unit axis plus how the user wrote it ({theta,phi} or {roll}). */
export interface Axis extends Vec3 { readonly text: string }   // text e.g. "roll 60°" or "θ 30°, φ 0°"
export type SpeciesRef =
  | { kind: 'bare'; j2: number; g: number; massKg: number }     // v1 object form {spin, g, mass}
  | { kind: 'named'; name: string };                              // "Rb-87", "Ag", ...
export type Velocity =
  | { kind: 'fixed'; speed: number }
  | { kind: 'effusive'; temperature: number }
  | { kind: 'supersonic'; speed: number; ratio: number }
  | { kind: 'table'; points: readonly (readonly [number, number])[] };   // [speed m/s, weight], weights normalised to sum 1
export type OvenState =
  | { kind: 'unpolarized' }
  | { kind: 'pure'; axis: Axis; m: string }
  | { kind: 'populations'; axis: Axis; p: Readonly<Record<string, number>> }
  /** ρ over the zero-field states `basis` along the axis (row-major, d = basis.length; Hermitian, ≥ 0, trace 1). */
  | { kind: 'density'; axis: Axis; basis: readonly string[]; re: readonly number[]; im: readonly number[] };
export type Flux = { kind: 'given'; value: number } | { kind: 'vapor'; temperature: number };
export interface Rect { readonly width: number; readonly height: number; readonly x: number; readonly z: number } // x,z offsets default 0
export interface Oven { state: OvenState; flux: Flux; velocity: Velocity; aperture?: Rect; to: string; path: 'oven' }
interface Base { id: string; gap: number; path: string }                 // gap default 0
export interface Magnet extends Base { kind: 'magnet'; axis: Axis; field?: number; gradient?: number; length?: number;
  aperture?: Rect; group?: 'mJ' | 'each'; entry?: 'adiabatic' | 'sudden'; ports: Readonly<Record<string, string>> } // keys: labels or "*"
export interface Rotator extends Base { kind: 'rotator'; axis: Axis; angle: number; to: string }
export interface FieldRegion extends Base { kind: 'field'; field: Vec3; length: number; to: string }
export interface Twist extends Base { kind: 'twist'; field: number; start: Axis; end: Axis; length: number; to: string }
export interface RfFlipper extends Base { kind: 'rf'; static: Vec3; amplitude: number; frequency: number; axis: Axis; length: number;
  /** The RF phase (rad) at an atom's entry for a pulsed beam locked to the RF; absent: every phase (a continuous beam). */
  phase?: number; to: string }
export interface Recombiner extends Base { kind: 'recombiner'; axis: Axis; open: readonly string[]; phases: Readonly<Record<string, number>>;
  coherent: boolean; field?: number; group?: 'mJ' | 'each'; entry?: 'adiabatic' | 'sudden'; to: string }
export interface Slit extends Base { kind: 'slit'; width: number; height: number; x: number; z: number; to: string }
export interface Detector extends Base { kind: 'detector'; efficiency: number; background: number; dwell: number;
  window?: Rect }
export type Element = Magnet | Rotator | FieldRegion | Twist | RfFlipper | Recombiner | Slit | Detector;
export type ElementKind = Element['kind'];
/** A stored scan: one or two parameters (by name and JSON path), each from → to (SI) in `points` values. */
export interface ScanStudy { readonly title: string; readonly axes: readonly { readonly name: string; readonly path: string; readonly from: number;
  readonly to: number; readonly points: number; readonly spacing: 'linear' | 'log' }[] }
/** A set-point's tolerance: ± halfWidth (SI) about its value, uniform, or normal with σ = halfWidth. */
export interface ToleranceStudy { readonly name: string; readonly path: string; readonly halfWidth: number; readonly distribution: 'uniform' | 'normal' }
/** A kept fit: the measured counts (a CSV file relative to the document's folder), the set-points to fit (SI bounds), the oven state too. */
export interface FitStudy { readonly title: string; readonly data: string;
  readonly free: readonly { readonly name: string; readonly path: string; readonly lower?: number; readonly upper?: number }[]; readonly state: boolean }
/** A kept simulated run: atoms drawn and the seed. */
export interface SimulationStudy { readonly title: string; readonly atoms: number; readonly seed: number }
export interface Beamline { title: string; species: SpeciesRef; oven: Oven; ambient: Vec3; elements: readonly Element[];
  /** The document's kept fits (absent when it keeps none). */
  fits?: readonly FitStudy[];
  /** The document's kept simulated runs (absent when it keeps none). */
  simulations?: readonly SimulationStudy[];
  /** The document's stored scans (absent when it keeps none). */
  scans?: readonly ScanStudy[];
  /** The document's tolerances (absent when it keeps none). */
  tolerances?: readonly ToleranceStudy[] }

// ---------------------------------------------------------------- raw document (as written)
/** A quantity as written: a string with a unit, or (dimensionless only) a JSON number. */
export type QuantityDoc = string | number;
export type AxisDoc = { theta: QuantityDoc; phi: QuantityDoc } | { roll: QuantityDoc };
export interface VecDoc { x: QuantityDoc; y: QuantityDoc; z: QuantityDoc }
export interface RectDoc { width: QuantityDoc; height: QuantityDoc; x?: QuantityDoc; z?: QuantityDoc }
/** v1 bare spin: spin "1/2" (or a JSON number), g factor, mass ("106.905 u"). */
export interface BareSpinDoc { spin: string | number; g: QuantityDoc; mass: QuantityDoc }
export type SpeciesDoc = string | BareSpinDoc;
export type OvenStateDoc =
  | { kind: 'unpolarized' }
  | { kind: 'pure'; axis: AxisDoc; m: string }
  | { kind: 'populations'; axis: AxisDoc; p: Record<string, QuantityDoc> }
  | { kind: 'density'; axis: AxisDoc; basis: string[]; re: QuantityDoc[][]; im?: QuantityDoc[][] };
export type VelocityDoc =
  | { kind: 'fixed'; speed: QuantityDoc }
  | { kind: 'effusive'; temperature: QuantityDoc }
  | { kind: 'supersonic'; speed: QuantityDoc; ratio: QuantityDoc }
  | { kind: 'table'; points: [QuantityDoc, QuantityDoc][] };
/** A rate ("2e9 /s"), or an estimate from the oven reservoir temperature (Spinyard extension). */
export type FluxDoc = QuantityDoc | { kind: 'vapor'; temperature: QuantityDoc };
export interface OvenDoc { state: OvenStateDoc; flux: FluxDoc; velocity: VelocityDoc; aperture?: RectDoc; to: string }
interface BaseDoc { id: string; gap?: QuantityDoc }
export interface MagnetDoc extends BaseDoc { kind: 'magnet'; axis: AxisDoc; field?: QuantityDoc; gradient?: QuantityDoc;
  length?: QuantityDoc; aperture?: RectDoc; group?: 'mJ' | 'each'; entry?: 'adiabatic' | 'sudden'; ports: Record<string, string> }
export interface RotatorDoc extends BaseDoc { kind: 'rotator'; axis: AxisDoc; angle: QuantityDoc; to: string }
export interface FieldDoc extends BaseDoc { kind: 'field'; field: VecDoc; length: QuantityDoc; to: string }
export interface TwistDoc extends BaseDoc { kind: 'twist'; field: QuantityDoc; start: AxisDoc; end: AxisDoc; length: QuantityDoc; to: string }
export interface RfDoc extends BaseDoc { kind: 'rf'; static: VecDoc; amplitude: QuantityDoc; frequency: QuantityDoc; axis: AxisDoc;
  length: QuantityDoc; to: string }
export interface RecombinerDoc extends BaseDoc { kind: 'recombiner'; axis: AxisDoc; open: string[]; phases?: Record<string, QuantityDoc>;
  coherent?: boolean; field?: QuantityDoc; group?: 'mJ' | 'each'; entry?: 'adiabatic' | 'sudden'; to: string }
export interface SlitDoc extends BaseDoc { kind: 'slit'; width: QuantityDoc; height: QuantityDoc; x?: QuantityDoc; z?: QuantityDoc; to: string }
export interface DetectorDoc extends BaseDoc { kind: 'detector'; efficiency?: QuantityDoc; background?: QuantityDoc; dwell?: QuantityDoc;
  window?: RectDoc }
export type ElementDoc = MagnetDoc | RotatorDoc | FieldDoc | TwistDoc | RfDoc | RecombinerDoc | SlitDoc | DetectorDoc;
export interface ScanDoc { title?: string; parameters: { parameter: string; from: QuantityDoc; to: QuantityDoc; points: number; spacing?: 'linear' | 'log' }[] }
export interface ToleranceDoc { parameter: string; halfWidth: QuantityDoc; distribution?: 'uniform' | 'normal' }
export interface FitDoc { title?: string; data: string; free?: { parameter: string; lower?: QuantityDoc; upper?: QuantityDoc }[]; state?: boolean }
export interface SimulationDoc { title?: string; atoms?: number; seed?: number }
export interface BeamlineDoc {
  format: 'spinyard.beamline';
  version: number;
  title?: string;
  species: SpeciesDoc;
  ambient?: VecDoc;
  oven: OvenDoc;
  elements: ElementDoc[];
  scans?: ScanDoc[];
  tolerances?: ToleranceDoc[];
  fits?: FitDoc[];
  simulations?: SimulationDoc[];
}

/** Result of reading a document: the raw doc and the normalized line, or every problem found. */
export type ParseResult =
  | { ok: true; doc: BeamlineDoc; line: Beamline; warnings: Problem[] }
  | { ok: false; problems: Problem[] };
