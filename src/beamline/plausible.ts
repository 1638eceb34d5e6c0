/**
 * Plausibility of set-points: values the reader accepts (they lie inside limits.ts, so the engine computes with
 * them) but that no laboratory builds. Each gives a warning with its reason, never an error: the document still
 * reads and runs as written. The figures are common practice; where a figure is from memory, the message says so.
 * Called by the readers where each quantity is read (oven.ts, elements/*.ts), through `plausible`.
 */
import { formatValue } from './numbers.ts';
import { type ReadCtx, warn } from './read.ts';

export interface Plausibility {
  /** Largest value a lab builds (SI); a larger magnitude gets the warning. */
  readonly max?: number;
  /** A value of exactly 0 gets the warning (a detector that counts nothing). */
  readonly zero?: boolean;
  /** The value in the unit a person reads ("12 T"). */
  readonly shown: (x: number) => string;
  /** Why the value is implausible: what labs build, and where the figure is from. */
  readonly reason: string;
}

const num = (x: number) => formatValue(x, 4);

export const PLAUSIBLE = {
  /** magnetic fields at the beam: magnet, recombiner, twist, field region, RF static field and amplitude */
  field: {
    max: 10,
    shown: (x: number) => `${num(x)} T`,
    reason: 'gradient magnets with iron pole pieces saturate near 2 T and superconducting magnets reach about 10–20 T at the beam (common practice; figures from memory)',
  },
  /** field gradients of Stern–Gerlach magnets */
  gradient: {
    max: 1e4,
    shown: (x: number) => `${num(x)} T/m`,
    reason: 'Stern–Gerlach magnets give 10²–10⁴ T/m (common practice)',
  },
  /** oven (reservoir) temperatures */
  temperature: {
    max: 2500,
    shown: (x: number) => `${num(x)} K`,
    reason: 'oven crucibles of molybdenum, tantalum or tungsten run below about 2500 K (from memory)',
  },
  /** the oven's flux into the line */
  flux: {
    max: 1e18,
    shown: (x: number) => `${num(x)} /s`,
    reason: 'the brightest atomic beams carry about 1e19–1e20 atoms/s per steradian at the source, and a collimated beam in a line far less (from memory)',
  },
  /** a detector's counting dwell */
  dwell: {
    max: 86400,
    shown: (x: number) => `${num(x)} s (${num(x / 86400)} d)`,
    reason: 'a counting dwell lasts seconds to hours; a beam and a detector are rarely stable over more than a day (common practice)',
  },
  /** a detector's efficiency */
  efficiency: {
    zero: true,
    shown: (x: number) => num(x),
    reason: 'a detector with efficiency 0 counts nothing: its signal is 0 and no counting time reaches a precision',
  },
} as const satisfies Record<string, Plausibility>;

export type PlausibleKind = keyof typeof PLAUSIBLE;

/** The warning for `value` (SI) at `path` when it lies outside what a lab builds; `what` names it ("the field size"). */
export function plausible(ctx: ReadCtx, path: string, kind: PlausibleKind, value: number | undefined, what: string): void {
  if (value === undefined || !Number.isFinite(value)) return;
  const p: Plausibility = PLAUSIBLE[kind];
  if (p.zero && value === 0) {
    warn(ctx, path, `${what} is 0: ${p.reason}; the line is computed as written`);
    return;
  }
  if (p.max !== undefined && Math.abs(value) > p.max) {
    warn(ctx, path, `${what} of ${p.shown(value)} is above ${p.shown(p.max).replace(/ \(.*\)$/, '')}: ${p.reason}; check the unit and the exponent (the line is computed as written)`);
  }
}

/** The same check on the size of a field vector ({x, y, z} in T). */
export function plausibleVector(ctx: ReadCtx, path: string, v: { x: number; y: number; z: number } | undefined, what: string): void {
  if (v) plausible(ctx, path, 'field', Math.hypot(v.x, v.y, v.z), what);
}
