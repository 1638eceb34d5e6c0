/**
 * The levels listing of `spinyard levels NAME --field "0.5 T"` (docs/design.md, "Levels listing"):
 * eigenvalues of H/h (Hz; H as written, traceless) at a field B along ẑ, their μ_eff (μB, Hellmann–
 * Feynman) and both labels, sorted by energy descending (equal energies, as at B = 0: m_F descending, then F
 * descending). The listing does not depend on the axis.
 */
import { zeemanLevels } from '../physics/hyperfine.ts';
import { hyperfineParams, lookupSpecies, unknownSpeciesMessage, type AtomSpecies } from '../species/index.ts';

export interface ListedLevel {
  readonly lowField: string;
  readonly highField: string;
  /** Hz */
  readonly energy: number;
  /** μB */
  readonly moment: number;
  /** the isotope, in the combined list of a mixture only */
  readonly isotope?: string;
}

export interface IsotopeLevels {
  readonly species: string;
  /** natural abundance normalised over the mixture */
  readonly fraction: number;
  readonly levels: readonly ListedLevel[];
}

export interface LevelsListing {
  readonly species: string;
  /** T */
  readonly field: number;
  /** every level, energy descending (for a mixture all isotopes together, each with `isotope`) */
  readonly levels: readonly ListedLevel[];
  /** a mixture only: the levels of each isotope */
  readonly isotopes?: readonly IsotopeLevels[];
}

function listOne(s: AtomSpecies, fieldT: number): ListedLevel[] {
  const levels = zeemanLevels(hyperfineParams(s), fieldT, { x: 0, y: 0, z: 1 }).levels;
  const tol = 1e-12 * Math.max(...levels.map((l) => Math.abs(l.energyHz)));
  return levels
    .slice()
    .sort((a, b) => (Math.abs(a.energyHz - b.energyHz) > tol ? b.energyHz - a.energyHz : b.mF2 - a.mF2 || b.F2 - a.F2))
    .map((l) => ({ lowField: l.lowField, highField: l.highField, energy: l.energyHz, moment: l.moment }));
}

/**
 * Levels of a library species at field size fieldT (T, ≥ 0). Unknown names throw an Error that lists
 * the known ones; a negative or non-finite field throws a RangeError.
 */
export function levelsListing(speciesName: string, fieldT: number): LevelsListing {
  const s = lookupSpecies(speciesName);
  if (!s) throw new Error(unknownSpeciesMessage(speciesName));
  if (!Number.isFinite(fieldT) || fieldT < 0) throw new RangeError(`--field must be a finite field size ≥ 0 T, got ${fieldT}`);
  if (s.kind === 'atom') return { species: s.name, field: fieldT, levels: listOne(s, fieldT) };
  if (s.kind === 'bare') throw new Error(`${s.name} is a custom bare spin, not a library species`);
  const isotopes = s.parts.map((p) => ({ species: p.species.name, fraction: p.fraction, levels: listOne(p.species, fieldT) }));
  const levels = isotopes
    .flatMap((i) => i.levels.map((l) => ({ ...l, isotope: i.species })))
    .sort((a, b) => b.energy - a.energy);
  return { species: s.name, field: fieldT, levels, isotopes };
}

function tableOf(levels: readonly ListedLevel[]): string {
  const rows = [['low field', 'high field', 'E/h (MHz)', 'μ_eff (μB)']];
  for (const l of levels) {
    rows.push([l.lowField, l.highField, (l.energy / 1e6).toFixed(6), l.moment.toFixed(6)]);
  }
  const w = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
  return rows
    .map((r) => r.map((x, c) => (c >= 2 ? x.padStart(w[c]) : x.padEnd(w[c]))).join('  ').trimEnd())
    .join('\n');
}

/** Text form of a listing for the CLI: one table per isotope, energies in MHz, moments in μB. */
export function formatLevelsTable(listing: LevelsListing): string {
  const head = `${listing.species} at B = ${listing.field} T (E/h of H as written, traceless; μ_eff = −∂E/∂B)`;
  if (!listing.isotopes) return `${head}\n${tableOf(listing.levels)}`;
  return [head, ...listing.isotopes.map((i) => `\n${i.species} (fraction ${Number(i.fraction.toPrecision(6))})\n${tableOf(i.levels)}`)].join('\n');
}
