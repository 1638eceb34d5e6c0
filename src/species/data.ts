/**
 * The species library: ground states (and metastable He 2³S₁) with a citation on every number.
 * Status codes (types.ts): V read in the source, V2 read in a secondary copy, C computed from V/V2 values,
 * M from memory, unverified. Convention: H_Z = μB(g_J J + g_I I)·B with I, J dimensionless, so
 * g_I = −μ_I/(I μB) (Steck Eq. 20, Arimondo et al., Rev. Mod. Phys. 49, 31 (1977) signs).
 * Masses: AME2020 atomic masses (Wang et al., Chin. Phys. C 45, 030003 (2021)) × m_u = 1.66053906660e-27 kg
 * (CODATA 2018).
 * No species here has a known quadrupole constant B that applies: every alkali and Ag/Cu ground state has
 * J = ½ (no quadrupole term), He-4* has I = 0 and He-3* has I = ½.
 */
import { ATOMIC_MASS_KG } from '../physics/constants.ts';
import type { AtomSpecies, Cited, Mixture, VaporPressure } from './types.ts';

export { ATOMIC_MASS_KG };

// ------------------------------------------------------------------ sources
const STECK85 = 'D. A. Steck, "Rubidium 85 D Line Data", rev. 2.2.3 (2021), Tables 1, 2, 5, 6';
const STECK87 = 'D. A. Steck, "Rubidium 87 D Line Data" (steck.us/alkalidata)';
const PYLCP = 'JQIamo/pylcp, pylcp/atom.py (citing Steck, Gehm, Tiecke, Arimondo et al., RMP 49, 31 (1977))';
const ELECSUS = 'durham-qlm/ElecSus, libs/AtomConstants.py';
const HFS = 'M. Danielson, "Hyperfine splitting page", rubidium.dyndns.org/~magnus/physics/hyperfine (compilation)';
const TIECKE = 'T. G. Tiecke, "Properties of Potassium", v1.02 (2011), Tables 1-2';
const AME = 'AME2020 atomic mass evaluation, mass.mas20 (Wang et al., Chin. Phys. C 45, 030003 (2021)), × m_u (CODATA 2018)';
const CIAAW = 'CIAAW/IUPAC isotopic abundances, ciaaw.org';
const NISTAB = 'NIST/CIAAW isotopic compositions (as copied in a public repository table)';
const CODATA_P = 'CODATA 2018 μp/μB = 1.52103220230e-3; g_I = −μ_p/(I μB)';
const CODATA_D = 'CODATA 2018 μd/μB = 4.669754570e-4; g_I = −μ_d/(I μB)';
const SI_SECOND = 'SI definition of the second: Δν(Cs-133 hfs) = 9 192 631 770 Hz exactly; A = Δν/(I+½)';
const ALCOCK = 'C. B. Alcock, V. P. Itkin, M. K. Horrigan, Can. Metall. Q. 23, 309 (1984)';

function cited(value: number, source: string, status: Cited['status']): Cited {
  return { value, source, status };
}
function massU(u: number, status: Cited['status'] = 'V'): Cited {
  return cited(u * ATOMIC_MASS_KG, `${AME}: ${u} u`, status);
}
const MHz = 1e6;

// ------------------------------------------------------------------ vapor pressure
const TORR = 'torr' as const, ATM = 'atm' as const, MBAR = 'mbar' as const, PA = 'Pa' as const;

export const VAPOR: Readonly<Record<string, VaporPressure>> = {
  Rb: {
    meltingK: 312.46,
    source: `${ALCOCK}, as given by ${STECK85}, Eq. (1): log10 P/torr = 2.881 + 4.857 − 4215/T (solid), 2.881 + 4.312 − 4040/T (liquid), ±5 % over 298-550 K; melting point 312.46 K from memory (M)`,
    branches: [
      { phase: 'solid', a: 2.881 + 4.857, b: -4215, c: 0, unit: TORR, tMin: 298, tMax: 312.46 },
      { phase: 'liquid', a: 2.881 + 4.312, b: -4040, c: 0, unit: TORR, tMin: 312.46, tMax: 550 },
    ],
  },
  K: {
    meltingK: 336.53,
    source: `${TIECKE}, Eq. (1) (from ${ALCOCK}): log10 P/mbar = 7.9667 − 4646/T (solid, 298 K to T_m), 7.4077 − 4453/T (liquid, T_m to 600 K); melting point 336.53 K from memory (M)`,
    branches: [
      { phase: 'solid', a: 7.9667, b: -4646, c: 0, unit: MBAR, tMin: 298, tMax: 336.53 },
      { phase: 'liquid', a: 7.4077, b: -4453, c: 0, unit: MBAR, tMin: 336.53, tMax: 600 },
    ],
  },
  Cs: {
    meltingK: 301.65,
    source: `${ALCOCK}, as coded in durham-qlm/ElecSus libs/numberDensityEqs.py (V2): log10 P/atm = 4.711 − 3999/T (solid), 8.232 − 4062/T − 1.3359 log10 T (liquid); T_m = 301.65 K; upper limit 550 K from memory (M)`,
    branches: [
      { phase: 'solid', a: 4.711, b: -3999, c: 0, unit: ATM, tMin: 298, tMax: 301.65 },
      { phase: 'liquid', a: 8.232, b: -4062, c: -1.3359, unit: ATM, tMin: 301.65, tMax: 550 },
    ],
  },
  Na: {
    meltingK: 370.95,
    source: `${ALCOCK}, as coded in durham-qlm/ElecSus libs/numberDensityEqs.py (V2): log10 P/atm = 5.298 − 5603/T (solid), 8.400 − 5634/T − 1.1748 log10 T (liquid); T_m = 370.95 K; upper limit 700 K from memory (M)`,
    branches: [
      { phase: 'solid', a: 5.298, b: -5603, c: 0, unit: ATM, tMin: 298, tMax: 370.95 },
      { phase: 'liquid', a: 8.400, b: -5634, c: -1.1748, unit: ATM, tMin: 370.95, tMax: 700 },
    ],
  },
  Li: {
    meltingK: 453.65,
    source: 'CRC Handbook vapor-pressure equations as copied in Wikipedia "Vapor pressures of the elements (data page)" (V2): log10 P/Pa = 10.673 − 8310/T (solid, 298 K to T_m), 10.061 − 8023/T (liquid, T_m to 1000 K); T_m = 453.65 K from memory (M)',
    branches: [
      { phase: 'solid', a: 10.673, b: -8310, c: 0, unit: PA, tMin: 298, tMax: 453.65 },
      { phase: 'liquid', a: 10.061, b: -8023, c: 0, unit: PA, tMin: 453.65, tMax: 1000 },
    ],
  },
  Ag: {
    meltingK: 1234.93,
    source: 'Fit (C, ≤ 0.022 dex) log10 P/Pa = 10.598 − 13570/T to the CRC vapor-pressure points of silver (1 Pa at 1283 K … 10⁵ Pa at 2433 K, V2, Wikipedia silver infobox); boiling point 2433 K (Arblaster, J. Phase Equilib. Diffus. 36, 573 (2015), V); no solid branch found; T_m = 1234.93 K from memory (M)',
    branches: [{ phase: 'liquid', a: 10.598, b: -13570, c: 0, unit: PA, tMin: 1283, tMax: 2433 }],
  },
};

// ------------------------------------------------------------------ cautions (own words, after NRC "Prudent Practices in the Laboratory" (2011) ch. 7 and lab safety manuals)
const ALKALI =
  'Alkali metal: reacts with water and moisture, releasing hydrogen that can ignite; store and load it under mineral oil or dry inert gas, never work alone, keep a Class D dry-powder extinguisher at hand (no water, no CO₂), wear eye protection and a flame-resistant coat.';
const IGNITES_IN_AIR = 'Can ignite spontaneously in air: handle only in an inert-gas glove box or under oil.';
const VIOLENT_WATER = 'Reacts with water explosively.';
const HOT_OVEN =
  'Hot oven: touching the oven or its shields burns; let it cool fully, then vent the chamber with dry inert gas before opening.';
const SILVER_OVEN =
  'Silver oven near 1300 K: radiant heat and hot surfaces burn; water-cool the shields, let the oven cool fully and vent with dry inert gas before opening.';
const DISCHARGE_SOURCE =
  'Produced in a gas discharge: its supply carries lethal high voltage (see the line cautions); flammable hydrogen cylinders follow the local gas rules.';
const HE_DISCHARGE =
  'Metastable helium comes from a gas discharge whose supply carries lethal high voltage (see the line cautions).';
const LOCAL = 'These notes summarise common practice; local safety rules and licensed practice take precedence.';

/** Cautions for the whole line (shown on every setup sheet), in our own words after §6 of the reference data. */
export const LINE_CAUTIONS: readonly string[] = [
  'Strong magnets: people with pacemakers or other implants stay outside the posted 0.5 mT (5 G) line; ferromagnetic tools become projectiles near the magnets (use non-magnetic tools where the field exceeds about 3 mT); keep fingers clear of pinch points between poles and yokes.',
  'Vacuum: glass parts and viewports can implode; inspect them, fit shields or tape, and use vacuum-rated parts only.',
  'High voltage (ionisation and hot-wire detectors, electron multipliers, discharge sources): treat any supply above about 50 V as lethal; use interlocks and a lockable disconnect, let capacitors bleed and apply a grounding hook before touching.',
  LOCAL,
];

const alkali = (...extra: string[]) => [ALKALI, ...extra, HOT_OVEN, LOCAL];

// ------------------------------------------------------------------ isotopes
const GJ_H = cited(2.0022838, 'g_e(1 − α²/3) for the hydrogen 1s state, from memory (M)', 'M');
const GJ_LI = cited(2.0023010, `${PYLCP} (V2)`, 'V2');
const GJ_K = cited(2.00229421, `${PYLCP}; ${TIECKE}`, 'V2');
const GJ_RB = cited(2.00233113, `${STECK85}: 2.00233113(20) (the 5²S1/2 value, shared by both isotopes)`, 'V');
const GJ_AG = cited(2.0023, 'free-electron value ≈ 2.0023 for the 5s state, from memory (M)', 'M');
const GJ_CU = cited(2.0023, 'free-electron value ≈ 2.0023 for the 4s state, from memory (M)', 'M');
const NO_NUCLEAR = cited(0, 'nucleus without spin (I = 0)', 'V');

export const ISOTOPES: readonly AtomSpecies[] = [
  {
    kind: 'atom', name: 'H', label: 'hydrogen-1', state: '1²S1/2', i2: 1, j2: 1,
    gJ: GJ_H,
    gI: cited(-3.0420644046e-3, CODATA_P, 'C'),
    aHz: cited(1420.405751768 * MHz, `${HFS}: ΔE = A(I+½) = 1420.405751768 MHz`, 'V2'),
    massKg: massU(1.007825031898),
    abundance: cited(0.999885, `${NISTAB}: 0.999885(70)`, 'V2'),
    cautions: [DISCHARGE_SOURCE, LOCAL],
  },
  {
    kind: 'atom', name: 'D', label: 'deuterium (hydrogen-2)', state: '1²S1/2', i2: 2, j2: 1,
    gJ: GJ_H,
    gI: cited(-4.669754570e-4, CODATA_D, 'C'),
    aHz: cited((327.3843525222 * MHz) / 1.5, `${HFS}: ΔE = 327.3843525222(17) MHz (V2); A = ΔE/(I+½) (C)`, 'C'),
    massKg: massU(2.014101777844),
    abundance: cited(0.000115, `${NISTAB}: 0.000115(70)`, 'V2'),
    cautions: [DISCHARGE_SOURCE, LOCAL],
  },
  {
    kind: 'atom', name: 'Li-6', label: 'lithium-6', state: '2²S1/2', i2: 2, j2: 1,
    gJ: GJ_LI,
    gI: cited(-0.0004476540, `${PYLCP} (V2)`, 'V2'),
    aHz: cited(152.1368407 * MHz, `${PYLCP}: A = 152.1368407 MHz (V2); ${HFS} lists ΔE = 228.2052590(30) MHz`, 'V2'),
    massKg: massU(6.0151228874),
    abundance: cited(0.0759, `${NISTAB}: 0.0759(4)`, 'V2'),
    vapor: VAPOR.Li, cautions: alkali(),
  },
  {
    kind: 'atom', name: 'Li-7', label: 'lithium-7', state: '2²S1/2', i2: 3, j2: 1,
    gJ: GJ_LI,
    gI: cited(-0.0011822130, `${PYLCP} (V2)`, 'V2'),
    aHz: cited(401.7520433 * MHz, `${PYLCP}: A = 401.7520433 MHz; ${HFS}: ΔE = 803.5040866(10) MHz`, 'V2'),
    massKg: massU(7.0160034343),
    abundance: cited(0.9241, `${NISTAB}: 0.9241(4)`, 'V2'),
    vapor: VAPOR.Li, cautions: alkali(),
  },
  {
    kind: 'atom', name: 'Na-23', label: 'sodium-23', state: '3²S1/2', i2: 3, j2: 1,
    gJ: cited(2.00229600, `${PYLCP}; ${ELECSUS} (V2)`, 'V2'),
    gI: cited(-0.00080461080, `${PYLCP}; ${ELECSUS} (V2)`, 'V2'),
    aHz: cited(885.8130644 * MHz, `${PYLCP}; ${ELECSUS}: A = 885.8130644 MHz (ΔE = 1771.6261288(10) MHz)`, 'V2'),
    massKg: massU(22.9897692820),
    abundance: cited(1, `${CIAAW} sodium: monoisotopic`, 'V'),
    vapor: VAPOR.Na, cautions: alkali(),
  },
  {
    kind: 'atom', name: 'K-39', label: 'potassium-39', state: '4²S1/2', i2: 3, j2: 1,
    gJ: GJ_K,
    gI: cited(-0.00014193489, `${PYLCP}; ${TIECKE}`, 'V2'),
    aHz: cited(230.8598601 * MHz, `${TIECKE}: A = 230.8598601 MHz (ΔE = 461.7197202(14) MHz)`, 'V2'),
    massKg: massU(38.9637064848),
    abundance: cited(0.932581, `${TIECKE}: 0.932581(44)`, 'V2'),
    vapor: VAPOR.K, cautions: alkali(IGNITES_IN_AIR),
  },
  {
    kind: 'atom', name: 'K-40', label: 'potassium-40', state: '4²S1/2', i2: 8, j2: 1,
    gJ: GJ_K,
    gI: cited(0.000176490, `${PYLCP}; ${TIECKE} (positive: μ_I < 0)`, 'V2'),
    aHz: cited(-285.7308 * MHz, `${TIECKE}: A = −285.7308 MHz (inverted structure, ΔE = A(I+½) = −1285.789 MHz, C)`, 'V2'),
    massKg: massU(39.963998165),
    abundance: cited(0.000117, `${TIECKE}: 0.000117(1)`, 'V2'),
    vapor: VAPOR.K, cautions: alkali(IGNITES_IN_AIR, 'K-40 is weakly radioactive (β⁻, EC; half-life 1.25e9 years, from memory): enriched samples fall under local radiation-protection rules.'),
  },
  {
    kind: 'atom', name: 'K-41', label: 'potassium-41', state: '4²S1/2', i2: 3, j2: 1,
    gJ: GJ_K,
    gI: cited(-0.00007790600, `${PYLCP}; ${TIECKE}`, 'V2'),
    aHz: cited(127.0069352 * MHz, `${TIECKE}: A = 127.0069352 MHz (A(I+½) = 254.0138704 MHz, C; ${HFS} lists 254.0138720(20) MHz, a 1.6 kHz difference)`, 'V2'),
    massKg: massU(40.9618252561),
    abundance: cited(0.067302, `${TIECKE}: 0.067302(44)`, 'V2'),
    vapor: VAPOR.K, cautions: alkali(IGNITES_IN_AIR),
  },
  {
    kind: 'atom', name: 'Rb-85', label: 'rubidium-85', state: '5²S1/2', i2: 5, j2: 1,
    gJ: GJ_RB,
    gI: cited(-0.00029364000, `${STECK85}: −0.00029364000(60)`, 'V'),
    aHz: cited(1011.9108130 * MHz, `${STECK85}: A = 1.011 910 813 0(20) GHz (ΔE = 3.035 732 439 0(60) GHz)`, 'V'),
    massKg: massU(84.911789736),
    abundance: cited(0.7217, `${CIAAW} rubidium: 0.7217(2)`, 'V'),
    vapor: VAPOR.Rb, cautions: alkali(IGNITES_IN_AIR, VIOLENT_WATER),
  },
  {
    kind: 'atom', name: 'Rb-87', label: 'rubidium-87', state: '5²S1/2', i2: 3, j2: 1,
    gJ: GJ_RB,
    gI: cited(-0.0009951414, `${STECK87} (V2: ${PYLCP}; ${ELECSUS})`, 'V2'),
    aHz: cited(3417.341305452145 * MHz, `${STECK87}: A = 3.417 341 305 452 145 GHz, ΔE = 6.834 682 610 904 GHz (V2: ${PYLCP}; ${ELECSUS})`, 'V2'),
    massKg: massU(86.909180529),
    abundance: cited(0.2783, `${CIAAW} rubidium: 0.2783(2)`, 'V'),
    vapor: VAPOR.Rb, cautions: alkali(IGNITES_IN_AIR, VIOLENT_WATER, 'Rb-87 is weakly radioactive (β⁻, half-life 4.9e10 years, from memory): natural rubidium needs no special handling for it.'),
  },
  {
    kind: 'atom', name: 'Cs-133', label: 'caesium-133', state: '6²S1/2', i2: 7, j2: 1,
    gJ: cited(2.00254032, `D. A. Steck, "Cesium D Line Data" (V2: ${PYLCP}; ${ELECSUS})`, 'V2'),
    gI: cited(-0.00039885395, `D. A. Steck, "Cesium D Line Data" (V2: ${PYLCP}; ${ELECSUS})`, 'V2'),
    aHz: cited(9192631770 / 4, `${SI_SECOND}: A = 2298.1579425 MHz (V2: ${PYLCP}; ${HFS})`, 'V2'),
    massKg: massU(132.905451958),
    abundance: cited(1, 'monoisotopic (NIST/CIAAW)', 'V2'),
    vapor: VAPOR.Cs, cautions: alkali(IGNITES_IN_AIR, VIOLENT_WATER, 'Melts at 28.5 °C: a warm lab liquefies it.'),
  },
  {
    kind: 'atom', name: 'Ag-107', label: 'silver-107', state: '5²S1/2', i2: 1, j2: 1,
    gJ: GJ_AG,
    gI: cited(1.238e-4, 'computed from μ_I = −0.11368 μN (from memory, M): g_I = −μ_I/(I μB)', 'C'),
    aHz: cited(-1712.512111 * MHz, `${HFS}: |ΔE| = |A|(I+½) = 1712.512111(18) MHz; sign negative (inverted, F=0 above F=1) because μ_I < 0 (the Fermi contact term has the sign of μ_I; computed from the μ_I sign, which is from memory, M)`, 'C'),
    massKg: massU(106.9050915),
    abundance: cited(0.51839, `${NISTAB}: 0.51839(8)`, 'V2'),
    vapor: VAPOR.Ag, cautions: [SILVER_OVEN, LOCAL],
  },
  {
    kind: 'atom', name: 'Ag-109', label: 'silver-109', state: '5²S1/2', i2: 1, j2: 1,
    gJ: GJ_AG,
    gI: cited(1.424e-4, 'computed from μ_I = −0.13069 μN (from memory, M): g_I = −μ_I/(I μB)', 'C'),
    aHz: cited(-1976.932075 * MHz, `${HFS}: |ΔE| = |A|(I+½) = 1976.932075(7) MHz; sign negative (inverted, F=0 above F=1) because μ_I < 0 (the Fermi contact term has the sign of μ_I; computed from the μ_I sign, which is from memory, M)`, 'C'),
    massKg: massU(108.9047558),
    abundance: cited(0.48161, `${NISTAB}: 0.48161(8)`, 'V2'),
    vapor: VAPOR.Ag, cautions: [SILVER_OVEN, LOCAL],
  },
  {
    kind: 'atom', name: 'Cu-63', label: 'copper-63', state: '4²S1/2', i2: 3, j2: 1,
    gJ: GJ_CU,
    gI: cited(-8.07e-4, 'computed from μ_I = +2.2233 μN (from memory, M): g_I = −μ_I/(I μB)', 'C'),
    aHz: cited((11735.83 * MHz) / 2, `${HFS}: ΔE = 11735.83(1) MHz (V2); A = ΔE/(I+½) (C)`, 'C'),
    massKg: massU(62.92959712),
    abundance: cited(0.6915, `${NISTAB}: 0.6915(15)`, 'V2'),
    cautions: [HOT_OVEN, LOCAL],
  },
  {
    kind: 'atom', name: 'Cu-65', label: 'copper-65', state: '4²S1/2', i2: 3, j2: 1,
    gJ: GJ_CU,
    gI: cited(-8.65e-4, 'computed from μ_I = +2.3817 μN (from memory, M): g_I = −μ_I/(I μB)', 'C'),
    aHz: cited((12568.81 * MHz) / 2, `${HFS}: ΔE = 12568.81(1) MHz (V2); A = ΔE/(I+½) (C)`, 'C'),
    massKg: massU(64.92778948),
    abundance: cited(0.3085, `${NISTAB}: 0.3085(15)`, 'V2'),
    cautions: [HOT_OVEN, LOCAL],
  },
  {
    kind: 'atom', name: 'He-4*', label: 'helium-4, metastable', state: '2³S1', i2: 0, j2: 2,
    gJ: cited(2.002237, 'g_J of He 2³S₁, from memory (M)', 'M'),
    gI: NO_NUCLEAR,
    aHz: cited(0, 'nucleus without spin: no hyperfine structure', 'V'),
    massKg: massU(4.00260325413),
    abundance: cited(0.99999866, `${NISTAB}: 0.99999866(3)`, 'V2'),
    cautions: [HE_DISCHARGE, LOCAL],
  },
  {
    kind: 'atom', name: 'He-3*', label: 'helium-3, metastable', state: '2³S1', i2: 1, j2: 2,
    gJ: cited(2.0022, 'g_J ≈ 2.0022 of He 2³S₁, from memory (M)', 'M'),
    gI: cited(2.3175e-3, 'computed from μ_I = −2.12762 μN (from memory, M): g_I = −μ_I/(I μB)', 'C'),
    aHz: cited((-6739.70 * MHz) / 1.5, 'F=3/2 ↔ F=1/2 splitting 6739.70 MHz with F = 3/2 lowest, from memory (M); A = −ΔE/(I+J) (C): inverted', 'M'),
    massKg: massU(3.01602932197),
    abundance: cited(1.34e-6, `${NISTAB}: 1.34(3)e-6`, 'V2'),
    cautions: [HE_DISCHARGE, LOCAL],
  },
];

const byName = (n: string) => ISOTOPES.find((s) => s.name === n)!;

function mixture(name: string, label: string, names: readonly string[]): Mixture {
  const parts = names.map((n) => ({ species: byName(n), raw: byName(n).abundance!.value }));
  const sum = parts.reduce((s, p) => s + p.raw, 0);
  return { kind: 'mixture', name, label, parts: parts.map((p) => ({ species: p.species, fraction: p.raw / sum })) };
}

/** Natural mixtures: isotopes weighted by their abundance, normalised to sum 1. */
export const MIXTURES: readonly Mixture[] = [
  mixture('Ag', 'natural silver', ['Ag-107', 'Ag-109']),
  mixture('K', 'natural potassium', ['K-39', 'K-40', 'K-41']),
  mixture('Rb', 'natural rubidium', ['Rb-85', 'Rb-87']),
  mixture('Li', 'natural lithium', ['Li-6', 'Li-7']),
  mixture('Cu', 'natural copper', ['Cu-63', 'Cu-65']),
];

/** Monoisotopic elements and the hydrogen isotopes under their other names. */
export const ALIASES: Readonly<Record<string, string>> = { Cs: 'Cs-133', Na: 'Na-23', 'H-1': 'H', 'H-2': 'D' };
