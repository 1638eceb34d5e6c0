import { describe, it, expect } from 'vitest';
import { ISOTOPES, MIXTURES, LINE_CAUTIONS, ATOMIC_MASS_KG, VAPOR } from '../../src/species/data.ts';
import { hyperfineSplittingHz } from '../../src/physics/hyperfine.ts';
import { hyperfineParams } from '../../src/species/index.ts';

/**
 * The table of ../shared/reference-data.md §1, written out by hand: [name, 2I, 2J, g_J, g_I, A (MHz),
 * ΔE (MHz) or null, mass (u), abundance, status note]. Primary sources as named there: HFS = Danielson's
 * hyperfine splitting compilation (V2), PL = pylcp atom.py (V2, citing Steck/Gehm/Tiecke/Arimondo),
 * TK = Tiecke, Properties of Potassium; S85 = Steck, Rubidium 85 D Line Data (V); masses AME2020 (V);
 * g_J of H, D, Ag, Cu, He* and the μ_I behind g_I of Ag, Cu, He-3* are from memory (M) in the table.
 */
const TABLE: [string, number, number, number, number, number, number | null, number, number][] = [
  ['H', 1, 1, 2.0022838, -3.0420644e-3, 1420.405751768, 1420.405751768, 1.007825031898, 0.999885], // HFS V2; g_J M; g_I C
  ['D', 2, 1, 2.0022838, -4.66975457e-4, 218.2562350, 327.3843525222, 2.014101777844, 0.000115], // HFS V2; A C
  ['Li-6', 2, 1, 2.0023010, -0.0004476540, 152.1368407, 228.2052590, 6.0151228874, 0.0759], // PL, HFS V2
  ['Li-7', 3, 1, 2.0023010, -0.0011822130, 401.7520433, 803.5040866, 7.0160034343, 0.9241], // PL, HFS V2
  ['Na-23', 3, 1, 2.00229600, -0.00080461080, 885.8130644, 1771.6261288, 22.9897692820, 1], // PL/ES V2; x V (CIAAW)
  ['K-39', 3, 1, 2.00229421, -0.00014193489, 230.8598601, 461.7197202, 38.9637064848, 0.932581], // PL, TK
  ['K-40', 8, 1, 2.00229421, 0.000176490, -285.7308, -1285.789, 39.963998165, 0.000117], // PL, TK; ΔE C
  ['K-41', 3, 1, 2.00229421, -0.00007790600, 127.0069352, 254.0138704, 40.9618252561, 0.067302], // PL, TK; ΔE C
  ['Rb-85', 5, 1, 2.00233113, -0.00029364000, 1011.9108130, 3035.7324390, 84.911789736, 0.7217], // S85, CIAAW: V
  ['Rb-87', 3, 1, 2.00233113, -0.0009951414, 3417.341305452145, 6834.682610904, 86.909180529, 0.2783], // PL/ES V2
  ['Cs-133', 7, 1, 2.00254032, -0.00039885395, 2298.1579425, 9192.631770, 132.905451958, 1], // PL/ES, HFS V2; SI second
  ['Ag-107', 1, 1, 2.0023, 1.238e-4, -1712.512111, -1712.512111, 106.9050915, 0.51839], // HFS V2 (|ΔE|); sign C from μ_I < 0; g_J M; g_I C
  ['Ag-109', 1, 1, 2.0023, 1.424e-4, -1976.932075, -1976.932075, 108.9047558, 0.48161], // HFS V2 (|ΔE|); sign C from μ_I < 0; g_J M; g_I C
  ['Cu-63', 3, 1, 2.0023, -8.07e-4, 5867.915, 11735.83, 62.92959712, 0.6915], // HFS V2; A C
  ['Cu-65', 3, 1, 2.0023, -8.65e-4, 6284.405, 12568.81, 64.92778948, 0.3085], // HFS V2; A C
  ['He-4*', 0, 2, 2.002237, 0, 0, null, 4.00260325413, 0.99999866], // AME; g_J M
  ['He-3*', 1, 2, 2.0022, 2.3175e-3, -6739.70 / 1.5, -6739.70, 3.01602932197, 1.34e-6], // AME; splitting M (F=3/2 lowest)
];

describe('species data (reference-data.md §1)', () => {
  it('holds every species of the table, and only those', () => {
    expect(ISOTOPES.map((s) => s.name)).toEqual(TABLE.map((r) => r[0]));
  });
  for (const [name, i2, j2, gJ, gI, aMHz, dEMHz, massU, x] of TABLE) {
    it(`${name}: I, J, g_J, g_I, A, mass, abundance as tabulated`, () => {
      const s = ISOTOPES.find((t) => t.name === name)!;
      expect(s.i2).toBe(i2);
      expect(s.j2).toBe(j2);
      expect(s.gJ.value).toBe(gJ);
      expect(Math.abs(s.gI.value - gI)).toBeLessThanOrEqual(2e-8 * Math.abs(gI)); // the table rounds H's g_I to 8 digits
      expect(Math.abs(s.aHz.value / 1e6 - aMHz)).toBeLessThanOrEqual(1e-9 * Math.abs(aMHz) + 1e-12);
      expect(Math.abs(s.massKg.value / ATOMIC_MASS_KG - massU)).toBeLessThan(1e-13 * massU);
      expect(s.abundance!.value).toBe(x);
      for (const c of [s.gJ, s.gI, s.aHz, s.massKg, s.abundance!]) {
        expect(c.source.length).toBeGreaterThan(10);
        expect(['V', 'V2', 'C', 'M']).toContain(c.status);
      }
      expect(s.bHz).toBeUndefined();
      if (dEMHz !== null) {
        // ΔE = A(I+½) for J = ½; A(I+J) for He-3*. Li-6: PL's A and HFS's ΔE differ by 2 kHz (1e-5 relative);
        // K-40 ΔE is given to 4 digits after the point in the table.
        const tol = name === 'Li-6' ? 1e-5 : name === 'K-40' ? 5e-7 : 1e-12;
        expect(Math.abs(hyperfineSplittingHz(hyperfineParams(s)) / 1e6 - dEMHz)).toBeLessThanOrEqual(tol * Math.abs(dEMHz));
      }
    });
  }
  it('ΔE = A(I+½): Cs-133 9 192 631 770 Hz exactly (SI second), H 1 420 405 751.768 Hz, Rb-87 6 834 682 610.904 Hz (Steck)', () => {
    const dE = (n: string) => hyperfineSplittingHz(hyperfineParams(ISOTOPES.find((s) => s.name === n)!));
    expect(dE('Cs-133')).toBe(9192631770);
    expect(Math.abs(dE('H') - 1420405751.768)).toBeLessThan(1e-6);
    expect(Math.abs(dE('Rb-87') - 6834682610.904)).toBeLessThan(5e-4); // quoted to 1 mHz
  });
  it('mixtures are the natural isotope sets with fractions summing to 1', () => {
    const mix = Object.fromEntries(MIXTURES.map((m) => [m.name, m]));
    expect(Object.keys(mix).sort()).toEqual(['Ag', 'Cu', 'K', 'Li', 'Rb']);
    for (const m of MIXTURES) expect(Math.abs(m.parts.reduce((s, p) => s + p.fraction, 0) - 1)).toBeLessThan(1e-15);
    // abundances of reference-data.md §1 (CIAAW for Rb, V; others V2), renormalised
    expect(mix.Rb.parts.map((p) => [p.species.name, p.fraction])).toEqual([['Rb-85', 0.7217], ['Rb-87', 0.2783]]);
    const ag = mix.Ag.parts.map((p) => p.fraction);
    expect(ag[0]).toBeCloseTo(0.51839 / (0.51839 + 0.48161), 15);
    const k = mix.K.parts.map((p) => p.fraction);
    const ks = 0.932581 + 0.000117 + 0.067302;
    [0.932581, 0.000117, 0.067302].forEach((x, i) => expect(k[i]).toBeCloseTo(x / ks, 15));
  });
  it('vapor correlations exist for Rb, K, Cs, Na, Li, Ag with sources; alkali isotopes carry alkali cautions', () => {
    for (const el of ['Rb', 'K', 'Cs', 'Na', 'Li', 'Ag']) expect(VAPOR[el].source.length).toBeGreaterThan(20);
    for (const s of ISOTOPES.filter((t) => /^(Li|Na|K|Rb|Cs)-/.test(t.name))) {
      expect(s.cautions!.some((c) => /Alkali metal/.test(c))).toBe(true);
      expect(s.cautions!.some((c) => /Hot oven/.test(c))).toBe(true);
    }
    expect(LINE_CAUTIONS.some((c) => /0\.5 mT/.test(c))).toBe(true);
    expect(LINE_CAUTIONS.some((c) => /implode/.test(c))).toBe(true);
    expect(LINE_CAUTIONS.some((c) => /50 V/.test(c))).toBe(true);
    expect(LINE_CAUTIONS.some((c) => /local safety rules/.test(c))).toBe(true);
  });
});
