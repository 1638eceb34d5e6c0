/**
 * The ranges the reader accepts for the document's quantities (docs/design.md, "Keys by element kind"):
 * physically generous, so that any line a lab builds reads, and narrow enough that no accepted value makes the engine
 * compute a number that is not finite (a speed of 1e-297 m/s squares to 0 in 1/v², a speed ratio of
 * 1e-300 divides a speed into ∞). Each message names the range it checks.
 */
import { ATOMIC_MASS_UNIT_KG } from './units.ts';

/** A range in SI units, and how a message says it ("between 0.1 m/s and 1e6 m/s"). */
export interface Limit {
  /** Smallest value accepted (SI). */
  readonly min?: number;
  /** Largest value accepted (SI); with `abs`, the largest magnitude. */
  readonly max?: number;
  /** The bound is on |value| (signed quantities: gradients, field components, offsets, g). */
  readonly abs?: boolean;
  /** The range as a message writes it after "must be". */
  readonly text: string;
}

export const LIMITS = {
  /** gap, length: ≥ 0 (checked first), up to a kilometre. */
  distance: { max: 1e3, text: 'at most 1000 m' },
  /** x, z offsets of a slit or rectangle from the beam axis. */
  offset: { max: 1e3, abs: true, text: 'within ±1000 m' },
  /** widths and heights: down to 1 nm, the engine's narrowest opening (it widens a point source or a pencil slit to 1 nm). */
  size: { min: 1e-9, max: 1e3, text: 'between 1 nm and 1000 m' },
  /** speeds: from a slowed beam to a 1 keV hydrogen beam (√(2E/M) = 4.4e5 m/s); below 1e6 m/s the transit time L/v needs no relativistic correction (v/c < 0.4 %). */
  speed: { min: 0.1, max: 1e6, text: 'between 0.1 m/s and 1e6 m/s' },
  /** temperatures: from a sub-kelvin cryogenic source to far above any oven. */
  temperature: { min: 0.1, max: 1e5, text: 'between 0.1 K and 1e5 K' },
  /** the supersonic speed ratio S = u/α: near-effusive (S ≈ 1) to the coldest free jets (S of a few hundred, from memory). */
  ratio: { min: 0.5, max: 1e4, text: 'between 0.5 and 1e4' },
  /** a bare spin's g factor (electron 2.0023, atoms below 4, nuclei and molecules far less). */
  g: { max: 1e3, abs: true, text: 'within ±1000' },
  /** a bare spin's mass: from below the electron's (5.5e-4 u) to large clusters. */
  mass: { min: 1e-4 * ATOMIC_MASS_UNIT_KG, max: 1e9 * ATOMIC_MASS_UNIT_KG, text: 'between 1e-4 u and 1e9 u' },
  /** field components (ambient, field region, static field of an RF flipper): above any laboratory magnet (about 45 T dc, 100 T pulsed, from memory). */
  field: { max: 1e3, abs: true, text: 'within ±1000 T' },
  /** field sizes (magnet, recombiner, twist, RF amplitude): ≥ 0 (checked first). */
  fieldSize: { max: 1e3, text: 'at most 1000 T' },
  /** gradients, signed along the magnet's axis: Stern–Gerlach magnets give 10²–10⁴ T/m (common practice). */
  gradient: { max: 1e6, abs: true, text: 'within ±1e6 T/m' },
  /** RF frequencies: ≥ 0 (checked first), up to optical frequencies. */
  frequency: { max: 1e15, text: 'at most 1e15 Hz' },
  /** the oven's flux: ≥ 0 (checked first); the brightest supersonic beams give about 1e19–1e20 /s sr (from memory). */
  flux: { max: 1e30, text: 'at most 1e30 /s' },
  /** a detector's background rate: ≥ 0 (checked first). */
  background: { max: 1e15, text: 'at most 1e15 /s' },
  /** a detector's dwell: > 0 (checked first), up to about 30 years. */
  dwell: { max: 1e9, text: 'at most 1e9 s' },
} as const satisfies Record<string, Limit>;

/**
 * Smallest distance (m) from the oven aperture to the first slit of a path: the engine draws each trajectory
 * through a point of the aperture and a point of that slit, dividing by their distance.
 */
export const FIRST_SLIT_MIN_DISTANCE = 1e-6;

/** True when `n` lies in the limit's range. */
export function within(n: number, l: Limit): boolean {
  const x = l.abs ? Math.abs(n) : n;
  return (l.min === undefined || x >= l.min) && (l.max === undefined || x <= l.max);
}
