/**
 * A small species library for the beamline tests, standing in for src/species (which the beamline layer
 * reaches through a SpeciesResolver). Spins, g-factors, hyperfine constants and masses from
 * ../shared/reference-data.md §1 (Steck D-line data via pylcp/ElecSus; masses AME2020); only i2, j2
 * matter for the labels tested here.
 */
import type { AtomSpecies, Mixture, Species } from '../../src/species/types.ts';
import type { SpeciesResolver } from '../../src/beamline/speciesDoc.ts';

const U = 1.6605390666e-27;
const c = (value: number, source = 'reference-data.md §1') => ({ value, source });

function atom(name: string, i2: number, j2: number, gJ: number, gI: number, aHz: number, massU: number, abundance?: number): AtomSpecies {
  return {
    kind: 'atom', name, label: name, i2, j2, gJ: c(gJ), gI: c(gI), aHz: c(aHz), massKg: c(massU * U),
    ...(abundance !== undefined ? { abundance: c(abundance) } : {}), state: j2 === 1 ? 'S1/2' : '2³S1',
  };
}

export const rb87 = atom('Rb-87', 3, 1, 2.00233113, -0.0009951414, 3417.341305452145e6, 86.909180529, 0.2783);
export const rb85 = atom('Rb-85', 5, 1, 2.00233113, -0.00029364, 1011.910813e6, 84.911789736, 0.7217);
export const cs133 = atom('Cs-133', 7, 1, 2.00254032, -0.00039885395, 2298.1579425e6, 132.905451958, 1);
export const ag107 = atom('Ag-107', 1, 1, 2.0023, 1.238e-4, 1712.512111e6, 106.9050915, 0.51839);
export const ag109 = atom('Ag-109', 1, 1, 2.0023, 1.424e-4, 1976.932075e6, 108.9047558, 0.48161);
export const he4m = atom('He-4*', 0, 2, 2.002237, 0, 0, 4.00260325413);
export const he3m = atom('He-3*', 1, 2, 2.0022, 2.3175e-3, 0, 3.01602932197);
const mix = (name: string, parts: AtomSpecies[]): Mixture => ({
  kind: 'mixture', name, label: name, parts: parts.map((s) => ({ species: s, fraction: s.abundance!.value })),
});
export const rb = mix('Rb', [rb85, rb87]);
export const ag = mix('Ag', [ag107, ag109]);

const all: Species[] = [rb87, rb85, cs133, ag107, ag109, he4m, he3m, rb, ag];

export const fakeSpecies: SpeciesResolver = {
  lookup: (n) => all.find((s) => s.name === n),
  names: () => all.map((s) => s.name),
};
