/**
 * Result format v1 of docs/design.md (`spinyard run FILE --json`), with the fields this engine adds.
 * Fields may be added; none is renamed.
 */
export interface XZ {
  x: number;
  z: number;
}

export interface Profile {
  /** Axis of the detector plane the profile runs along. */
  axis: 'x' | 'z';
  /** Bin centres (m). */
  positions: number[];
  /** Flux density, fraction of the oven flux per metre along the axis (integrates to the leaf's yield). */
  density: number[];
}

export interface LeafResult {
  /** ELEMENT:PORT for every magnet passed, in order. */
  path: string[];
  /** Detector id, or "stop". */
  target: string;
  /** Fraction of the oven's flux that reaches the leaf. */
  yield: number;
  /** Signal it brings: flux × yield × efficiency (× captured, where the detector has a window), counts/s; at a stop the atoms/s it absorbs. */
  rate: number;
  /** Flux-weighted signed mean position at the leaf's plane (m). */
  displacement?: XZ;
  /** rms width at the leaf's plane (m). */
  spread?: XZ;
  /** Fraction inside its detector's window. */
  captured?: number;
  profile?: Profile;
  /** Position of the leaf's plane along the beam (m from the oven aperture). */
  plane?: number;
  /**
   * The sub-beam's centre line: the flux-weighted mean transverse position (m) of the atoms that reach the plane, at
   * y (m from the oven aperture) = 0, every plane that shapes or deflects it (slits, pole gaps, each deflecting
   * magnet's entrance and exit and points inside it) and the plane, where it equals `displacement`; straight between
   * the points (src/engine/centre-line.ts). Present where `displacement` is.
   */
  centreLine?: { y: number; x: number; z: number }[];
}

export interface CrosstalkEntry {
  /** The other leaf's path and target. */
  path: string[];
  target: string;
  /** Fraction of that leaf's flux inside this detector's window. */
  fraction: number;
  /** Its counts/s in this detector (flux × yield × fraction × efficiency). */
  rate: number;
}

export interface NeighbourVerdict {
  a: string;
  b: string;
  /** Distance between the two mean positions along the axis (m). */
  separation: number;
  /** ∫ min(p_a, p_b) of the two normalised profiles: 0 for disjoint sub-beams. */
  overlap: number;
  verdict: 'resolved' | 'overlapping';
  axis: 'x' | 'z';
}

export interface DetectorResult {
  id: string;
  yield: number;
  /** Summed leaf rates plus the background counted once (counts/s). */
  rate: number;
  counts: number;
  sigma: number;
  /** Signal rate without background (counts/s). */
  signal: number;
  background: number;
  dwell: number;
  /** S/B; absent when the detector has no background (the ratio is unbounded). */
  signalToBackground?: number;
  /** Time to measure the signal to relative precision ε with a known background: t = (S + B)/(S² ε²); `seconds` absent without signal. */
  timeToPrecision: { epsilon: number; seconds?: number };
  crosstalk?: CrosstalkEntry[];
  neighbours?: NeighbourVerdict[];
  plane?: number;
}

export interface QuadratureReport {
  /** Integrand evaluations (velocity nodes) used by all averages. */
  nodes: number;
  /** Estimated absolute error of the yields. */
  error: number;
  method: string;
}

export interface RunResult {
  format: 'spinyard.result';
  version: 1;
  leaves: LeafResult[];
  detectors: DetectorResult[];
  lost: number;
  warnings: string[];
  quadrature?: QuadratureReport;
  /** Oven flux used (atoms/s). */
  flux: number;
  /**
   * Sub-beams merged into others because their mean deflections coincided within `fraction` of their width at every
   * plane that clips or detects them (docs/design.md "Merging sub-beams"); absent when none was.
   */
  merged?: { subBeams: number; fraction: number };
  /** Velocity distribution for plots (flux density per m/s, or table weights). */
  velocity?: { speeds: number[]; density: number[]; kind: string };
  /** Element positions along the beam (m): entrance and exit. */
  positions?: Record<string, { entrance: number; exit: number }>;
  /** Run-time invariants. */
  invariants: { balance: number; maxHermiticity: number; positive: boolean };
}
