/**
 * parseBeamlineText / validateBeamline with the real species library of src/species (the readers
 * themselves are tested with a small stand-in library in check.test.ts and text.test.ts).
 */
import { describe, expect, it } from 'vitest';
import { portLabels, stateLabels } from '../../src/beamline/labels.ts';
import { parseBeamlineText, speciesOfRef, validateBeamline } from '../../src/beamline/validate.ts';
import { lookupSpecies, speciesNames } from '../../src/species/index.ts';
import { DESIGN_V1, completedBeamKeys } from './examples.ts';

describe('parseBeamlineText with src/species', () => {
  it('validates both reference documents of docs/design.md', () => {
    expect(parseBeamlineText(DESIGN_V1).ok).toBe(true);
    const r = validateBeamline(completedBeamKeys());
    if (!r.ok) throw new Error(JSON.stringify(r.problems));
    expect(r.line.species).toEqual({ kind: 'named', name: 'Rb-87' });
  });
  it('lists the library names for an unknown species', () => {
    const r = validateBeamline({ ...completedBeamKeys(), species: 'Unobtainium' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems[0].message).toBe(`unknown species "Unobtainium"; known: ${speciesNames().join(', ')}`);
  });
  it('normalises an alias to the library name ("Cs" → "Cs-133")', () => {
    const d = completedBeamKeys() as Record<string, any>;
    d.species = 'Cs';
    d.elements[4].ports = { 'F=4,mF=+4': 'D1', 'F=4,mF=+3': 'D2', '*': 'stop' };
    const r = validateBeamline(d);
    if (!r.ok) throw new Error(JSON.stringify(r.problems));
    expect(r.line.species).toEqual({ kind: 'named', name: 'Cs-133' });
  });
});

describe('labels of library species', () => {
  it('gives K-40 (I = 4, J = 1/2; Tiecke, Properties of Potassium, Table 1) F = 9/2 and 7/2', () => {
    const l = stateLabels(lookupSpecies('K-40')!);
    expect(l).toHaveLength(10 + 8);
    expect(l[0]).toBe('F=9/2,mF=+9/2');
    expect(l.at(-1)).toBe('F=7/2,mF=-7/2');
  });
  it('unites the isotopes of natural K (K-39, K-41 I = 3/2; K-40 I = 4)', () => {
    expect(stateLabels(lookupSpecies('K')!)).toHaveLength(5 + 3 + 10 + 8);
    expect(portLabels(lookupSpecies('K')!)).toEqual(['mJ=+1/2', 'mJ=-1/2']);
  });
});

describe('speciesOfRef', () => {
  it('gives the label species of a bare and a named line', () => {
    expect(portLabels(speciesOfRef({ kind: 'bare', j2: 2, g: 2, massKg: 1e-26 })!)).toEqual(['+1', '0', '-1']);
    expect(portLabels(speciesOfRef({ kind: 'named', name: 'Rb-87' })!, 'each')).toHaveLength(8);
    expect(speciesOfRef({ kind: 'named', name: 'Xx' })).toBeUndefined();
  });
});
