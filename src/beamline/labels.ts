/**
 * Port and state labels of a species (docs/design.md, "Port labels").
 * - No hyperfine structure (a bare spin, or an atom with I = 0): |j, m⟩, m from +j to −j, written
 *   "+1/2", "-1/2" / "+1", "0", "-1".
 * - Hyperfine species, group "each": every zero-field |F, m_F⟩, F = I+J down to |I−J|, m_F from +F to −F,
 *   written "F=2,mF=+1", "F=2,mF=0", "F=3/2,mF=+1/2".
 * - Hyperfine species, group "mJ": "mJ=+1/2", "mJ=-1/2", … for each m_J of J.
 * - A natural mixture: the union of its isotopes' labels.
 * Spins are doubled integers (j2 = 2J, i2 = 2I), as in src/species/types.ts.
 */
import type { Species } from '../species/types.ts';

/** A species as far as its labels go: a library species, or the v1 bare-spin form. */
export type LabelSpecies = Species | { readonly kind: 'bare'; readonly j2: number };

export type Group = 'mJ' | 'each';

/** A doubled half-integer m2 = 2m written with its sign: 1 → "+1/2", 2 → "+1", 0 → "0", -3 → "-3/2". */
export function mText(m2: number): string {
  if (m2 === 0) return '0';
  const sign = m2 > 0 ? '+' : '-';
  const a = Math.abs(m2);
  return a % 2 === 0 ? `${sign}${a / 2}` : `${sign}${a}/2`;
}

/** A doubled non-negative half-integer f2 = 2F written without sign: 4 → "2", 3 → "3/2". */
export function fText(f2: number): string {
  return f2 % 2 === 0 ? `${f2 / 2}` : `${f2}/2`;
}

/** m from +j to −j in steps of 1, doubled. */
function m2s(j2: number): number[] {
  const out: number[] = [];
  for (let m2 = j2; m2 >= -j2; m2 -= 2) out.push(m2);
  return out;
}

/** The (i2, j2) pairs of a species: one per isotope. */
export function spinParts(species: LabelSpecies): { i2: number; j2: number }[] {
  switch (species.kind) {
    case 'bare': return [{ i2: 0, j2: species.j2 }];
    case 'atom': return [{ i2: species.i2, j2: species.j2 }];
    case 'mixture': return species.parts.map((p) => ({ i2: p.species.i2, j2: p.species.j2 }));
  }
}

/** True when some isotope has a nuclear spin: ports and states are |F, m_F⟩ and `group`/`entry` apply. */
export function isHyperfine(species: LabelSpecies): boolean {
  return spinParts(species).some((p) => p.i2 > 0);
}

/** Labels of a bare spin j (doubled j2): "+1/2", "-1/2" / "+1", "0", "-1". */
export function bareLabels(j2: number): string[] {
  return m2s(j2).map(mText);
}

/** "F=2,mF=+1" for doubled f2, m2. */
export function fLabel(f2: number, m2: number): string {
  return `F=${fText(f2)},mF=${mText(m2)}`;
}

/** Zero-field |F, m_F⟩ labels of one isotope, F from I+J down to |I−J|, m_F from +F to −F. */
function fLabelsOf(i2: number, j2: number): { f2: number; m2: number }[] {
  const out: { f2: number; m2: number }[] = [];
  for (let f2 = i2 + j2; f2 >= Math.abs(i2 - j2); f2 -= 2) for (const m2 of m2s(f2)) out.push({ f2, m2 });
  return out;
}

/** Default group of docs/design.md: "mJ" where J = 1/2, else "each" (all isotopes of a mixture share J). */
export function defaultGroup(species: LabelSpecies): Group {
  return spinParts(species).every((p) => p.j2 === 1) ? 'mJ' : 'each';
}

/**
 * Zero-field state labels, used by oven.state (pure m, populations p): |j, m⟩ for a species without
 * hyperfine structure, else |F, m_F⟩ (union over a mixture's isotopes, F descending, m_F descending).
 */
export function stateLabels(species: LabelSpecies): string[] {
  const parts = spinParts(species);
  if (!isHyperfine(species)) {
    const j2 = Math.max(...parts.map((p) => p.j2));
    const all = new Set(parts.flatMap((p) => bareLabels(p.j2)));
    return bareLabels(j2).filter((l) => all.has(l));
  }
  const seen = new Map<string, { f2: number; m2: number }>();
  for (const p of parts) for (const s of fLabelsOf(p.i2, p.j2)) seen.set(fLabel(s.f2, s.m2), s);
  return [...seen.entries()].sort((a, b) => b[1].f2 - a[1].f2 || b[1].m2 - a[1].m2).map(([l]) => l);
}

/**
 * Port labels of a magnet (or recombiner) for this species and group; `group` defaults to
 * defaultGroup(species) and does not apply without hyperfine structure.
 */
export function portLabels(species: LabelSpecies, group?: Group): string[] {
  if (!isHyperfine(species)) return stateLabels(species);
  const g = group ?? defaultGroup(species);
  if (g === 'each') return stateLabels(species);
  const j2 = Math.max(...spinParts(species).map((p) => p.j2));
  return m2s(j2).map((m2) => `mJ=${mText(m2)}`);
}
