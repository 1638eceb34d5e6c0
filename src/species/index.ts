/**
 * The species library: lookup by name, hyperfine parameters for the physics layer, vapor pressure,
 * effusive oven flux, and the text panel of `spinyard species [NAME]`.
 */
import { type HyperfineParams, hyperfineSplittingHz } from '../physics/hyperfine.ts';
import { BOLTZMANN } from '../physics/constants.ts';
import { formatHalfInteger } from '../physics/spin.ts';
import type { AtomSpecies, BareSpin, Cited, Mixture, Species, VaporBranch, VaporPressure } from './types.ts';
import { ALIASES, ATOMIC_MASS_KG, ISOTOPES, LINE_CAUTIONS, MIXTURES } from './data.ts';

export type * from './types.ts';
export { ATOMIC_MASS_KG, ISOTOPES, LINE_CAUTIONS, MIXTURES, ALIASES, VAPOR } from './data.ts';

export { BOLTZMANN };

/**
 * The library species of that name (case-sensitive): isotopes "H", "D", "Li-6" … "Cs-133", "Ag-107",
 * "He-4*", mixtures "Ag", "K", "Rb", "Li", "Cu"; aliases "Cs", "Na" (monoisotopic), "H-1", "H-2".
 */
export function lookupSpecies(name: string): Species | undefined {
  const n = ALIASES[name] ?? name;
  return ISOTOPES.find((s) => s.name === n) ?? MIXTURES.find((m) => m.name === n);
}

/** Library names: isotopes in table order, then mixtures (aliases not repeated). */
export function speciesNames(): string[] {
  return [...ISOTOPES.map((s) => s.name), ...MIXTURES.map((m) => m.name)];
}

/** The message for a name the library does not hold, listing the names it does. */
export function unknownSpeciesMessage(name: string): string {
  return `unknown species "${name}"; known species: ${speciesNames().join(', ')} (also ${Object.keys(ALIASES).join(', ')})`;
}

/** The numbers H = h A I·J (+ quadrupole) + μB(g_J J + g_I I)·B needs, from a library isotope. */
export function hyperfineParams(s: AtomSpecies): HyperfineParams {
  const p: HyperfineParams = { i2: s.i2, j2: s.j2, gJ: s.gJ.value, gI: s.gI.value, aHz: s.aHz.value };
  return s.bHz ? { ...p, bHz: s.bHz.value } : p;
}

/** A custom bare spin (docs/design.md, "Document format v1") as hyperfine parameters: H = g μB J·B. */
export function bareSpinParams(s: BareSpin): HyperfineParams {
  return { i2: 0, j2: s.j2, gJ: s.g, gI: 0, aHz: 0 };
}

const PA_PER: Readonly<Record<VaporBranch['unit'], number>> = { Pa: 1, torr: 101325 / 760, mbar: 100, atm: 101325 };

function vaporOf(s: AtomSpecies | Mixture): VaporPressure | undefined {
  return s.kind === 'atom' ? s.vapor : s.parts[0].species.vapor;
}

/**
 * Saturated vapor pressure of the species' element at temperature T (K), in Pa, from the cited
 * correlation log10(P/unit) = a + b/T + c·log10 T: the solid branch below the melting point, the liquid
 * branch above (or the only branch there is). Outside the branch's stated range the value is an
 * extrapolation and `warning` says so. A mixture has the pressure of its element.
 */
export function vaporPressurePa(s: AtomSpecies | Mixture, temperatureK: number): { pa: number; warning?: string } {
  if (!Number.isFinite(temperatureK) || temperatureK <= 0) {
    throw new RangeError(`oven temperature must be a positive number of kelvin, got ${temperatureK}`);
  }
  const v = vaporOf(s);
  if (!v) throw new Error(`no vapor-pressure correlation is stored for ${s.name}; give the oven flux directly`);
  const want = temperatureK < v.meltingK ? 'solid' : 'liquid';
  const br = v.branches.find((b) => b.phase === want) ?? v.branches[0];
  const log10p = br.a + br.b / temperatureK + br.c * Math.log10(temperatureK);
  const pa = 10 ** log10p * PA_PER[br.unit];
  let warning: string | undefined;
  if (temperatureK < br.tMin || temperatureK > br.tMax) {
    warning = `${s.name}: T = ${temperatureK} K is outside ${br.tMin}-${br.tMax} K, the range of the ${br.phase} vapor-pressure correlation (${v.source}); the pressure is extrapolated`;
  } else if (br.phase !== want) {
    warning = `${s.name}: no ${want} branch of the vapor-pressure correlation; the ${br.phase} branch is extrapolated`;
  }
  return warning ? { pa, warning } : { pa };
}

export interface EffusiveSource {
  readonly species: AtomSpecies | Mixture;
  readonly temperatureK: number;
  /** thin-walled orifice area, m² */
  readonly orificeArea: number;
}

export interface EffusiveIsotope {
  readonly name: string;
  readonly fraction: number;
  /** number density in the oven, m⁻³ */
  readonly density: number;
  /** mean speed in the oven √(8kT/πM), m/s */
  readonly meanSpeed: number;
  /** atoms leaving the orifice per second, n v̄ A/4 */
  readonly totalRate: number;
  /** forward intensity I(0) = n v̄ A/(4π), s⁻¹ sr⁻¹ */
  readonly forwardIntensity: number;
}

export interface EffusiveFlux {
  readonly pressurePa: number;
  /** total number density P/(kT), m⁻³ */
  readonly density: number;
  /** density-weighted mean speed in the oven, m/s */
  readonly meanSpeed: number;
  readonly totalRate: number;
  readonly forwardIntensity: number;
  readonly isotopes: readonly EffusiveIsotope[];
  readonly warnings: readonly string[];
}

function positive(name: string, v: number, unit: string): void {
  if (!Number.isFinite(v) || v <= 0) throw new RangeError(`${name} must be a positive number of ${unit}, got ${v}`);
}

/**
 * Effusion from a thin-walled orifice of area A at the saturated vapor pressure P of temperature T
 * (N. F. Ramsey, Molecular Beams (1956), ch. II): n = P/(kT), v̄ = √(8kT/(πM)), total rate n v̄ A/4,
 * forward intensity I(0) = n v̄ A/(4π) per steradian (cos θ distribution). Valid in the effusive regime,
 * where the mean free path in the oven exceeds the orifice size (not checked here). A mixture's
 * isotopes share the element's pressure by their abundance and are summed.
 */
export function effusiveFlux(src: EffusiveSource): EffusiveFlux {
  positive('orifice area', src.orificeArea, 'm²');
  const { pa, warning } = vaporPressurePa(src.species, src.temperatureK);
  const kT = BOLTZMANN * src.temperatureK;
  const n = pa / kT;
  const parts = src.species.kind === 'atom' ? [{ species: src.species, fraction: 1 }] : src.species.parts;
  const isotopes = parts.map(({ species, fraction }) => {
    const density = n * fraction;
    const meanSpeed = Math.sqrt((8 * kT) / (Math.PI * species.massKg.value));
    const totalRate = (density * meanSpeed * src.orificeArea) / 4;
    return { name: species.name, fraction, density, meanSpeed, totalRate, forwardIntensity: totalRate / Math.PI };
  });
  const sum = (f: (i: EffusiveIsotope) => number) => isotopes.reduce((s, i) => s + f(i), 0);
  return {
    pressurePa: pa, density: n, meanSpeed: sum((i) => i.fraction * i.meanSpeed),
    totalRate: sum((i) => i.totalRate), forwardIntensity: sum((i) => i.forwardIntensity),
    isotopes, warnings: warning ? [warning] : [],
  };
}

/**
 * Flux (atoms/s) into a collimator of area A_c a distance L from the orifice: I(0)·A_c/L², the forward
 * intensity times the collimator's solid angle (small-angle, on axis). Warns when A_c/L² > 0.01 sr,
 * where the small-angle form overestimates.
 */
export function collimatedFlux(args: EffusiveSource & { readonly collimatorArea: number; readonly distance: number }): {
  flux: number; pressurePa: number; density: number; meanSpeed: number; warnings: string[]; isotopes: readonly EffusiveIsotope[];
} {
  positive('collimator area', args.collimatorArea, 'm²');
  positive('oven-to-collimator distance', args.distance, 'm');
  const e = effusiveFlux(args);
  const omega = args.collimatorArea / (args.distance * args.distance);
  const warnings = [...e.warnings];
  if (omega > 0.01) {
    warnings.push(`collimator solid angle A_c/L² = ${omega.toPrecision(3)} sr is not small: I(0)·A_c/L² overestimates the flux`);
  }
  return { flux: e.forwardIntensity * omega, pressurePa: e.pressurePa, density: e.density, meanSpeed: e.meanSpeed, warnings, isotopes: e.isotopes };
}

// ------------------------------------------------------------------ text panel
const sig = (x: number, digits = 13) => String(Number(x.toPrecision(digits)));
const spin = (x2: number) => formatHalfInteger(x2, false);
const massInU = (s: AtomSpecies) => s.massKg.value / ATOMIC_MASS_KG;

function pad(rows: string[][]): string {
  const w = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
  return rows.map((r) => r.map((x, c) => x.padEnd(w[c])).join('  ').trimEnd()).join('\n');
}

function splittingText(s: AtomSpecies): string {
  const d = hyperfineSplittingHz(hyperfineParams(s));
  return d === 0 ? '-' : sig(d / 1e6);
}

function table(): string {
  const rows = [['name', 'I', 'J', 'g_J', 'g_I', 'A (MHz)', 'ΔE (MHz)', 'mass (u)', 'abundance']];
  for (const s of ISOTOPES) {
    rows.push([
      s.name, spin(s.i2), spin(s.j2), sig(s.gJ.value), sig(s.gI.value), s.aHz.value === 0 ? '-' : sig(s.aHz.value / 1e6),
      splittingText(s), sig(massInU(s), 12), s.abundance ? sig(s.abundance.value) : '-',
    ]);
  }
  const mix = MIXTURES.map((m) => `  ${m.name} (${m.label}): ${m.parts.map((p) => `${p.species.name} ${sig(p.fraction, 6)}`).join(' + ')}`);
  return [
    pad(rows),
    'ΔE: zero-field splitting between the two highest F levels (A(I+½) for J = ½; negative: inverted).',
    'Natural mixtures (abundances normalised to 1):',
    ...mix,
    `Also accepted: ${Object.entries(ALIASES).map(([a, n]) => `${a} = ${n}`).join(', ')}.`,
  ].join('\n');
}

function line(name: string, value: string, c: Cited): string {
  return `  ${name.padEnd(10)} ${value.padEnd(22)} [${c.status ?? '?'}] ${c.source}`;
}

function isotopePanel(s: AtomSpecies): string[] {
  const out = [`${s.name}: ${s.label}, ${s.state}, I = ${spin(s.i2)}, J = ${spin(s.j2)}`];
  out.push(line('g_J', sig(s.gJ.value), s.gJ));
  out.push(line('g_I', sig(s.gI.value), s.gI));
  out.push(line('A', `${sig(s.aHz.value / 1e6)} MHz`, s.aHz));
  if (s.bHz) out.push(line('B', `${sig(s.bHz.value / 1e6)} MHz`, s.bHz));
  else if (s.i2 > 0) out.push(`  ${'B'.padEnd(10)} none: the quadrupole term needs I ≥ 1 and J ≥ 1`);
  const d = splittingText(s);
  if (d !== '-') out.push(`  ${'ΔE'.padEnd(10)} ${`${d} MHz`.padEnd(22)} [C] ${s.j2 === 1 ? 'A(I+½)' : 'E(F=I+J) − E(F=I+J−1)'}, computed`);
  out.push(line('mass', `${sig(massInU(s), 12)} u`, s.massKg));
  if (s.abundance) out.push(line('abundance', sig(s.abundance.value), s.abundance));
  if (s.vapor) out.push(`  ${'vapor'.padEnd(10)} ${s.vapor.source}`);
  return out;
}

/**
 * The text `spinyard species [NAME]` prints: without a name, a table of every species; with a name,
 * every number with its source and status, then the species' cautions and the line cautions.
 * Throws an Error listing the known names for an unknown one.
 */
export function formatSpeciesPanel(name?: string): string {
  if (name === undefined) return table();
  const s = lookupSpecies(name);
  if (!s) throw new Error(unknownSpeciesMessage(name));
  if (s.kind === 'bare') return `${s.name}: bare spin j = ${spin(s.j2)}, g = ${s.g}`;
  const isotopes = s.kind === 'atom' ? [s] : s.parts.map((p) => p.species);
  const out: string[] = [];
  if (s.kind === 'mixture') {
    out.push(`${s.name}: ${s.label}, ${s.parts.map((p) => `${p.species.name} ${sig(p.fraction, 6)}`).join(' + ')} (abundances normalised to 1)`, '');
  }
  for (const iso of isotopes) out.push(...isotopePanel(iso), '');
  const cautions = [...new Set(isotopes.flatMap((i) => i.cautions ?? []))];
  out.push('Cautions:', ...cautions.map((c) => `  - ${c}`), 'Line cautions:', ...LINE_CAUTIONS.map((c) => `  - ${c}`));
  return out.join('\n');
}
