/**
 * The document's `species`: a library name ("Rb-87", natural mixtures "Rb", "K", "Ag") resolved through a
 * SpeciesResolver, or the v1 bare-spin object {spin, g, mass} with H = g μB J·B.
 */
import type { Species } from '../species/types.ts';
import type { LabelSpecies } from './labels.ts';
import { type ReadCtx, at, checkKeys, describe, isObj, problem, quantity, suggest } from './read.ts';
import type { SpeciesRef } from './types.ts';
import { isProblem, parseQuantity } from './units.ts';

/** How the beamline layer reaches the species library (src/species/index.ts by default). */
export interface SpeciesResolver {
  lookup(name: string): Species | undefined;
  names(): string[];
}

/**
 * A spin j as written ("1/2", "3/2", "1", or a JSON number 1, 0.5) → 2j, which must be a non-negative
 * integer (as QuTiP's jmat checks).
 */
export function readSpin(v: unknown, path: string): number | { path: string; message: string } {
  let j: number;
  if (typeof v === 'number') j = v;
  else if (typeof v === 'string') {
    const r = parseQuantity(v, 'dimensionless', path);
    if (isProblem(r)) return { path, message: `expected a spin such as "1/2", "1" or "3/2", got "${v}"` };
    j = r;
  } else return { path, message: `expected a spin such as "1/2", "1" or "3/2", got ${describe(v)}` };
  const j2 = Math.round(2 * j);
  if (!Number.isFinite(j) || j < 0 || Math.abs(2 * j - j2) > 1e-9) {
    return { path, message: `a spin j must have 2j a non-negative integer (0, 1/2, 1, 3/2, …), got ${typeof v === 'string' ? `"${v}"` : v}` };
  }
  return j2;
}

export function readSpecies(ctx: { problems: ReadCtx['problems']; warnings: ReadCtx['warnings'] }, v: unknown, resolver: SpeciesResolver):
  { ref: SpeciesRef; species: LabelSpecies } | undefined {
  const c: ReadCtx = { ...ctx, species: undefined };
  const p = 'species';
  if (v === undefined) return problem(c, p, 'missing "species": a library name such as "Rb-87" or a bare spin {"spin", "g", "mass"}');
  if (typeof v === 'string') {
    const s = resolver.lookup(v);
    if (!s) {
      const names = resolver.names();
      return problem(c, p, `unknown species "${v}"${suggest(v, names)}; known: ${names.join(', ')}`);
    }
    return { ref: { kind: 'named', name: s.name }, species: s };
  }
  if (!isObj(v)) return problem(c, p, `expected a species name or a bare spin {"spin", "g", "mass"}, got ${describe(v)}`);
  checkKeys(c, v, p, ['spin', 'g', 'mass'], 'a bare spin species');
  let j2: number | undefined;
  if (v.spin === undefined) problem(c, at(p, 'spin'), 'missing "spin" (e.g. "1/2")');
  else {
    const r = readSpin(v.spin, at(p, 'spin'));
    if (typeof r === 'number') j2 = r;
    else c.problems.push(r);
  }
  const g = quantity(c, v, 'g', 'dimensionless', p);
  const massKg = quantity(c, v, 'mass', 'mass', p, { positive: true, what: 'the mass' });
  if (j2 === undefined || g === undefined || massKg === undefined) return undefined;
  return { ref: { kind: 'bare', j2, g, massKg }, species: { kind: 'bare', j2 } };
}
