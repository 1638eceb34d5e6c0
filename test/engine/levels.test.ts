import { describe, it, expect } from 'vitest';
import { levelsListing, formatLevelsTable } from '../../src/engine/levels.ts';
import { MU_B_OVER_H } from '../../src/physics/hyperfine.ts';

describe('levelsListing', () => {
  it('has the shape of docs/design.md "Levels listing" and reproduces its Rb-87 0.5 T example (project contract)', () => {
    const l = levelsListing('Rb-87', 0.5);
    expect(Object.keys(l)).toEqual(['species', 'field', 'levels']);
    expect(l.species).toBe('Rb-87');
    expect(l.field).toBe(0.5);
    expect(l.levels).toHaveLength(8);
    expect(Object.keys(l.levels[0])).toEqual(['lowField', 'highField', 'energy', 'moment']);
    expect(l.levels[0].lowField).toBe('F=2,mF=+2');
    expect(l.levels[0].highField).toBe('mJ=+1/2,mI=+3/2');
    expect(l.levels[0].energy).toBeCloseTo(9.55883903e9, -1);
    expect(l.levels[0].moment).toBeCloseTo(-0.99967, 5);
  });
  it('is sorted by energy descending, with trace zero (H as written is traceless)', () => {
    for (const name of ['Cs-133', 'K-40', 'Na-23', 'He-4*']) {
      for (const b of [0, 1e-4, 0.3, 2]) {
        const lv = levelsListing(name, b).levels;
        for (let k = 1; k < lv.length; k++) expect(lv[k].energy).toBeLessThanOrEqual(lv[k - 1].energy + 1e-3);
        const sum = lv.reduce((s, x) => s + x.energy, 0);
        expect(Math.abs(sum)).toBeLessThanOrEqual(1e-12 * lv.length * Math.max(...lv.map((x) => Math.abs(x.energy))));
      }
    }
  });
  it('at B = 0 lists F descending, m_F descending, with moments −g_F m_F', () => {
    const lv = levelsListing('Rb-87', 0).levels;
    expect(lv.map((x) => x.lowField)).toEqual(['F=2,mF=+2', 'F=2,mF=+1', 'F=2,mF=0', 'F=2,mF=-1', 'F=2,mF=-2', 'F=1,mF=+1', 'F=1,mF=0', 'F=1,mF=-1']);
    expect(lv[0].moment).toBeCloseTo(-(2.00233113 - 3 * 0.0009951414) / 2, 12); // −g_F·2, g_F(2) = (g_J + 3g_I)/4
  });
  it('a bare-spin-like atom (He-4*, I = 0): labels "+1", "0", "-1" and E = g_J μB m B', () => {
    const lv = levelsListing('He-4*', 0.1).levels;
    expect(lv.map((x) => x.lowField)).toEqual(['+1', '0', '-1']);
    expect(lv[0].energy).toBeCloseTo(2.002237 * MU_B_OVER_H * 0.1, 3);
  });
  it('a mixture lists each isotope under `isotopes` and all levels together, tagged by isotope', () => {
    const l = levelsListing('Rb', 0.5);
    expect(l.isotopes!.map((i) => [i.species, i.fraction])).toEqual([['Rb-85', 0.7217], ['Rb-87', 0.2783]]);
    expect(l.isotopes![0].levels).toHaveLength(12);
    expect(l.levels).toHaveLength(20);
    expect(l.levels[0].isotope).toBe('Rb-87');
    expect(l.isotopes![1].levels).toEqual(levelsListing('Rb-87', 0.5).levels);
  });
  it('names the problem for an unknown species or a bad field', () => {
    expect(() => levelsListing('Rb-86', 0.5)).toThrow(/unknown species "Rb-86"; known species: .*Rb-87/);
    expect(() => levelsListing('Rb-87', -0.5)).toThrow(/--field must be a finite field size ≥ 0 T, got -0.5/);
    expect(() => levelsListing('Rb-87', Number.NaN)).toThrow(/--field/);
  });
});

describe('formatLevelsTable', () => {
  it('prints one row per level with both labels, E/h in MHz and μ_eff', () => {
    const t = formatLevelsTable(levelsListing('Rb-87', 0.5));
    const lines = t.split('\n');
    expect(lines[0]).toMatch(/^Rb-87 at B = 0.5 T/);
    expect(lines[2].split(/\s+/)).toEqual(['F=2,mF=+2', 'mJ=+1/2,mI=+3/2', '9558.839032', '-0.999673']);
    expect(lines).toHaveLength(10);
    expect(formatLevelsTable(levelsListing('K', 0.01))).toMatch(/K-40 \(fraction 0\.000117\)/);
  });
});
