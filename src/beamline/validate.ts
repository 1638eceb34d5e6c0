/**
 * Reading a document with the species library of src/species: parseBeamlineText (text) and
 * validateBeamline (parsed JSON). The readers themselves take the library as an argument (text.ts,
 * check.ts), so other libraries (tests, a user's species file) can be passed.
 */
import { lookupSpecies, speciesNames } from '../species/index.ts';
import { checkBeamline } from './check.ts';
import type { SpeciesResolver } from './speciesDoc.ts';
import { type ParseOptions, readBeamlineText } from './text.ts';
import type { LabelSpecies } from './labels.ts';
import type { ParseResult, SpeciesRef } from './types.ts';

/** The species library of src/species. */
export const librarySpecies: SpeciesResolver = { lookup: lookupSpecies, names: speciesNames };

/** Read a beamline from document text; every problem is reported, none thrown. */
export function parseBeamlineText(text: string, opts: ParseOptions & { resolver?: SpeciesResolver } = {}): ParseResult {
  return readBeamlineText(text, opts.resolver ?? librarySpecies, opts);
}

/** Validate a parsed JSON value as a beamline (species from src/species unless a resolver is given). */
export function validateBeamline(json: unknown, resolver: SpeciesResolver = librarySpecies): ParseResult {
  return checkBeamline(json, resolver);
}

/** The species of a normalized line, as portLabels/stateLabels take it (undefined for a name the library lacks). */
export function speciesOfRef(ref: SpeciesRef, resolver: SpeciesResolver = librarySpecies): LabelSpecies | undefined {
  return ref.kind === 'bare' ? { kind: 'bare', j2: ref.j2 } : resolver.lookup(ref.name);
}
