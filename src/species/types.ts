/**
 * Species data as the engine uses it. Every number in the library carries its source (see data.ts).
 * Spins are stored doubled (i2 = 2I, j2 = 2J) so that half-integers stay exact integers.
 * Hamiltonian convention (docs/design.md, "Hamiltonians"; Steck Eq. 20): H = h·A·I·J + h·B·(quadrupole) + μB (g_J J + g_I I)·B,
 * I and J dimensionless, so g_I = −μ_I/(I μB).
 */
export interface Cited<T = number> {
  readonly value: T;
  /** Where the number was read: author, title, table/equation, year. */
  readonly source: string;
  /** How far it was checked: 'V' read in source, 'V2' secondary copy, 'C' computed, 'M' from memory. */
  readonly status?: 'V' | 'V2' | 'C' | 'M';
}

/** One isotope (or a custom bare spin) in one electronic state. */
export interface AtomSpecies {
  readonly kind: 'atom';
  /** Library name, e.g. "Rb-87", "He-4*" */
  readonly name: string;
  readonly label: string;
  /** 2I (nuclear spin doubled); 0 for a nucleus without spin. */
  readonly i2: number;
  /** 2J (electronic angular momentum doubled). */
  readonly j2: number;
  readonly gJ: Cited;
  /** Nuclear g-factor in units of μB (sign convention above); 0 when i2 = 0. */
  readonly gI: Cited;
  /** Magnetic dipole hyperfine constant A in Hz (0 when i2 = 0). */
  readonly aHz: Cited;
  /** Electric quadrupole hyperfine constant B in Hz, where J ≥ 1 and it is known. */
  readonly bHz?: Cited;
  /** Atomic mass in kg. */
  readonly massKg: Cited;
  /** Natural abundance (fraction), where it applies. */
  readonly abundance?: Cited;
  /** Electronic state, e.g. "5²S1/2". */
  readonly state: string;
  /** Vapor-pressure correlation of the element, where known (for oven flux estimates). */
  readonly vapor?: VaporPressure;
  /** Cautions a setup sheet must show for this species (alkali metals, hot ovens, ...). */
  readonly cautions?: readonly string[];
}

/** A custom bare spin of docs/design.md format v1: H = g μB J·B. */
export interface BareSpin {
  readonly kind: 'bare';
  readonly name: string;
  readonly j2: number;
  readonly g: number;
  readonly massKg: number;
}

/** A natural mixture: isotopes computed one by one and weighted by abundance. */
export interface Mixture {
  readonly kind: 'mixture';
  readonly name: string;
  readonly label: string;
  readonly parts: readonly { readonly species: AtomSpecies; readonly fraction: number }[];
}

/** log10(P/unit) = a + b/T + c·log10(T), valid in [tMin, tMax] K; one branch per phase. */
export interface VaporBranch {
  readonly phase: 'solid' | 'liquid';
  readonly a: number;
  readonly b: number;
  readonly c: number;
  /** Unit of P in the correlation, converted to Pa by the library. */
  readonly unit: 'Pa' | 'torr' | 'atm' | 'mbar';
  readonly tMin: number;
  readonly tMax: number;
}
export interface VaporPressure {
  readonly branches: readonly VaporBranch[];
  /** Melting point in K. */
  readonly meltingK: number;
  readonly source: string;
}

export type Species = AtomSpecies | BareSpin | Mixture;
