/**
 * The document's `species`: a library name ("Rb-87", natural mixtures "Rb", "K", "Ag") resolved through a
 * SpeciesResolver, or the v1 bare-spin object {spin, g, mass} with H = g μB J·B.
 */
import { MAX_J2 } from '../physics/spin.ts';
import type { Species } from '../species/types.ts';
import type { LabelSpecies } from './labels.ts';
import { LIMITS } from './limits.ts';
import { quote } from './messages.ts';
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
 * integer (as QuTiP's jmat checks) and at most MAX_J2 = 31, the engine's largest (src/physics/spin.ts): the
 * range is checked before any label or matrix of the spin is made.
 */
export function readSpin(v: unknown, path: string): number | { path: string; message: string } {
  let j: number;
  if (typeof v === 'number') j = v;
  else if (typeof v === 'string') {
    const r = parseQuantity(v, 'dimensionless', path);
    if (isProblem(r)) return { path, message: `expected a spin such as "1/2", "1" or "3/2", got ${quote(v)}` };
    j = r;
  } else return { path, message: `expected a spin such as "1/2", "1" or "3/2", got ${describe(v)}` };
  const got = typeof v === 'string' ? quote(v) : String(v);
  if (!Number.isFinite(j) || j < 0 || Math.abs(2 * j - Math.round(2 * j)) > 1e-9) {
    return { path, message: `a spin j must have 2j a non-negative integer (0, 1/2, 1, 3/2, …), got ${got}` };
  }
  const j2 = Math.round(2 * j);
  if (j2 > MAX_J2) return { path, message: `a bare spin is at most j = ${MAX_J2}/2 (2j ≤ ${MAX_J2}, the largest the engine's spin matrices take), got ${got}` };
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
      return problem(c, p, `unknown species ${quote(v)}${suggest(v, names)}; known: ${names.join(', ')}`);
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
  const g = quantity(c, v, 'g', 'dimensionless', p, { range: LIMITS.g, what: 'the g factor' });
  const massKg = quantity(c, v, 'mass', 'mass', p, { positive: true, range: LIMITS.mass, what: 'the mass' });
  if (j2 === undefined || g === undefined || massKg === undefined) return undefined;
  return { ref: { kind: 'bare', j2, g, massKg }, species: { kind: 'bare', j2 } };
}
