import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import {
  lookupSpecies, speciesNames, hyperfineParams, bareSpinParams, vaporPressurePa, effusiveFlux, collimatedFlux,
  formatSpeciesPanel, unknownSpeciesMessage, BOLTZMANN, type AtomSpecies, type Mixture,
} from '../../src/species/index.ts';

const atom = (n: string) => lookupSpecies(n) as AtomSpecies;
const TORR = 101325 / 760;

describe('lookupSpecies / speciesNames', () => {
  it('finds isotopes and mixtures by their case-sensitive names; "Cs" and "Na" are the monoisotopic elements', () => {
    expect(lookupSpecies('Rb-87')?.kind).toBe('atom');
    expect(lookupSpecies('Rb')?.kind).toBe('mixture');
    expect(lookupSpecies('Cs')).toBe(lookupSpecies('Cs-133'));
    expect(lookupSpecies('Na')).toBe(lookupSpecies('Na-23'));
    expect(lookupSpecies('H-2')).toBe(lookupSpecies('D'));
    expect(lookupSpecies('He-4*')?.name).toBe('He-4*');
  });
  it('returns undefined for an unknown or wrongly cased name', () => {
    expect(lookupSpecies('rb-87')).toBeUndefined();
    expect(lookupSpecies('Rb87')).toBeUndefined();
    expect(lookupSpecies('Xe-129')).toBeUndefined();
    expect(unknownSpeciesMessage('Xe-129')).toMatch(/unknown species "Xe-129"; known species: H, D, Li-6/);
  });
  it('lists every isotope and mixture once', () => {
    const names = speciesNames();
    expect(new Set(names).size).toBe(names.length);
    for (const n of ['H', 'D', 'Li-6', 'Li-7', 'Na-23', 'K-39', 'K-40', 'K-41', 'Rb-85', 'Rb-87', 'Cs-133', 'Ag-107', 'Ag-109', 'He-4*', 'Ag', 'K', 'Rb']) {
      expect(names).toContain(n);
    }
    for (const n of names) expect(lookupSpecies(n)?.name).toBe(n);
  });
});

describe('hyperfineParams', () => {
  it('carries 2I, 2J, g_J, g_I, A of the data file', () => {
    expect(hyperfineParams(atom('Rb-87'))).toEqual({ i2: 3, j2: 1, gJ: 2.00233113, gI: -0.0009951414, aHz: 3417.341305452145e6 });
    // the NumPy/QuTiP fixtures of test/reference/breit_rabi.py were made with the library's numbers
    for (const n of ['Rb-87', 'Cs-133', 'Na-23']) {
      const fx = JSON.parse(readFileSync(fileURLToPath(new URL(`../fixtures/species/levels_${n}.json`, import.meta.url)), 'utf8'));
      expect(fx.params).toEqual(hyperfineParams(atom(n)));
    }
    expect(bareSpinParams({ kind: 'bare', name: 'custom', j2: 1, g: 2.0023, massKg: 1e-25 })).toEqual({ i2: 0, j2: 1, gJ: 2.0023, gI: 0, aHz: 0 });
  });
});

describe('vaporPressurePa (check points of reference-data.md §2)', () => {
  it('Rb: 3.92(20)e-7 torr at 25 °C within the stated ±5 % (Steck, Rubidium 85 D Line Data; Alcock 1984)', () => {
    const { pa, warning } = vaporPressurePa(atom('Rb-87'), 298.15);
    expect(Math.abs(pa / TORR / 3.92e-7 - 1)).toBeLessThan(0.05);
    expect(pa / TORR).toBeCloseTo(3.99e-7, 9); // the equation itself gives 3.99e-7 torr (reference-data.md)
    expect(warning).toBeUndefined();
    // the mixture has the element's pressure
    expect(vaporPressurePa(lookupSpecies('Rb') as Mixture, 298.15).pa).toBe(pa);
  });
  it('K: 1.3e-8 mbar at 293 K (Tiecke, Properties of Potassium), with a warning: 293 K is below the 298 K range', () => {
    const { pa, warning } = vaporPressurePa(atom('K-39'), 293);
    expect(Math.abs(pa / 100 / 1.3e-8 - 1)).toBeLessThan(0.04); // quoted to 2 digits
    expect(warning).toMatch(/outside 298-336.53 K/);
  });
  it('Li: 1 Pa at 797 K (CRC via Wikipedia, V2)', () => {
    expect(Math.abs(vaporPressurePa(atom('Li-7'), 797).pa - 1)).toBeLessThan(0.02); // 1 Pa quoted to 1 digit; eq. gives 0.987
  });
  it('Cs 1.51e-6 torr and Na 2.43e-11 torr at 25 °C (computed in reference-data.md from the Alcock equations)', () => {
    expect(vaporPressurePa(atom('Cs-133'), 298.15).pa / TORR).toBeCloseTo(1.51e-6, 8);
    expect(Math.abs(vaporPressurePa(atom('Na-23'), 298.15).pa / TORR / 2.43e-11 - 1)).toBeLessThan(0.005);
  });
  it('Ag: 1 Pa at 1283 K … 1e5 Pa at 2433 K within the fit\'s 0.022 dex (CRC points, V2)', () => {
    const pts: [number, number][] = [[1283, 1], [1413, 10], [1575, 100], [1782, 1e3], [2055, 1e4], [2433, 1e5]];
    for (const [t, p] of pts) expect(Math.abs(Math.log10(vaporPressurePa(atom('Ag-107'), t).pa / p))).toBeLessThan(0.022);
    expect(vaporPressurePa(atom('Ag-107'), 1200).warning).toMatch(/extrapolated/);
  });
  it('uses the liquid branch above the melting point (Rb 400 K: 7.193 − 4040/T torr)', () => {
    expect(vaporPressurePa(atom('Rb-85'), 400).pa).toBeCloseTo(10 ** (7.193 - 4040 / 400) * TORR, 12);
  });
  it('rejects a non-positive temperature and a species without a correlation', () => {
    expect(() => vaporPressurePa(atom('Rb-87'), -3)).toThrow(/oven temperature must be a positive number of kelvin, got -3/);
    expect(() => vaporPressurePa(atom('H'), 300)).toThrow(/no vapor-pressure correlation is stored for H/);
  });
});

describe('effusiveFlux / collimatedFlux (Ramsey, Molecular Beams, ch. II, thin orifice)', () => {
  it('n = P/kT, v̄ = √(8kT/πM), total n v̄ A/4, I(0) = n v̄ A/(4π), flux I(0) A_c/L²', () => {
    const s = atom('Cs-133');
    const T = 400, A = 1e-6, Ac = 1e-8, L = 0.5;
    const P = vaporPressurePa(s, T).pa;
    const n = P / (BOLTZMANN * T);
    const v = Math.sqrt((8 * BOLTZMANN * T) / (Math.PI * 132.905451958 * 1.66053906660e-27));
    const e = effusiveFlux({ species: s, temperatureK: T, orificeArea: A });
    expect(e.density).toBeCloseTo(n, -8);
    expect(e.meanSpeed / v).toBeCloseTo(1, 14);
    expect(e.totalRate / ((n * v * A) / 4)).toBeCloseTo(1, 14);
    expect(e.forwardIntensity / ((n * v * A) / (4 * Math.PI))).toBeCloseTo(1, 14);
    const c = collimatedFlux({ species: s, temperatureK: T, orificeArea: A, collimatorArea: Ac, distance: L });
    expect(c.flux / (((n * v * A) / (4 * Math.PI)) * (Ac / (L * L)))).toBeCloseTo(1, 14);
    expect(c.warnings).toEqual([]);
    // Cs at 400 K: v̄ ≈ 253 m/s (√(8kT/πM), common practice order of magnitude)
    expect(v).toBeGreaterThan(250);
    expect(v).toBeLessThan(256);
  });
  it('a mixture shares the element pressure by abundance', () => {
    const rb = lookupSpecies('Rb') as Mixture;
    const e = effusiveFlux({ species: rb, temperatureK: 420, orificeArea: 2e-6 });
    const one85 = effusiveFlux({ species: atom('Rb-85'), temperatureK: 420, orificeArea: 2e-6 });
    const one87 = effusiveFlux({ species: atom('Rb-87'), temperatureK: 420, orificeArea: 2e-6 });
    expect(e.isotopes.map((i) => i.name)).toEqual(['Rb-85', 'Rb-87']);
    expect(e.totalRate / (0.7217 * one85.totalRate + 0.2783 * one87.totalRate)).toBeCloseTo(1, 14);
    expect(e.pressurePa).toBe(one85.pressurePa);
  });
  it('warns for a large collimator solid angle and out-of-range temperature; rejects bad geometry', () => {
    const c = collimatedFlux({ species: atom('Rb-87'), temperatureK: 600, orificeArea: 1e-6, collimatorArea: 1e-3, distance: 0.1 });
    expect(c.warnings.some((w) => /solid angle/.test(w))).toBe(true);
    expect(c.warnings.some((w) => /outside 312.46-550 K/.test(w))).toBe(true);
    expect(() => collimatedFlux({ species: atom('Rb-87'), temperatureK: 400, orificeArea: 1e-6, collimatorArea: 1e-8, distance: 0 })).toThrow(/oven-to-collimator distance must be a positive number of m/);
    expect(() => effusiveFlux({ species: atom('Rb-87'), temperatureK: 400, orificeArea: -1 })).toThrow(/orifice area must be a positive/);
  });
});

describe('formatSpeciesPanel', () => {
  it('without a name: one row per isotope with I, J, g_J, g_I, A, ΔE, mass, abundance, and the mixtures', () => {
    const t = formatSpeciesPanel();
    const row = t.split('\n').find((l) => l.startsWith('Cs-133 '))!;
    expect(row.split(/\s+/)).toEqual(['Cs-133', '7/2', '1/2', '2.00254032', '-0.00039885395', '2298.1579425', '9192.63177', '132.905451958', '1']);
    expect(t).toMatch(/Rb \(natural rubidium\): Rb-85 0\.7217 \+ Rb-87 0\.2783/);
  });
  it('with a name: every number with its source, the cautions and the line cautions', () => {
    const p = formatSpeciesPanel('K-40');
    expect(p).toMatch(/A\s+-285\.7308 MHz\s+\[V2\] T\. G\. Tiecke/);
    expect(p).toMatch(/ΔE\s+-1285\.7886 MHz/);
    expect(p).toMatch(/mass\s+39\.963998165 u\s+\[V\] AME2020/);
    expect(p).toMatch(/Class D/);
    expect(p).toMatch(/Line cautions:[\s\S]*0\.5 mT/);
    expect(formatSpeciesPanel('Ag')).toMatch(/Ag-107[\s\S]*Ag-109[\s\S]*Silver oven/);
  });
  it('an unknown name throws a message listing the known names', () => {
    expect(() => formatSpeciesPanel('Kr-84')).toThrow(/unknown species "Kr-84"; known species: .*Rb-87/);
  });
});
