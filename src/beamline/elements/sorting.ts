/**
 * The sorting keys a magnet and a recombiner share: `group` ("mJ" | "each") and `entry`
 * ("adiabatic" | "sudden"), which apply to hyperfine species only, and the port labels they give.
 */
import { type Group, defaultGroup, isHyperfine, portLabels } from '../labels.ts';
import { choice } from '../read.ts';
import type { KeyRead, KeySpec } from './kind.ts';

export const GROUPS = ['mJ', 'each'] as const;
export const ENTRIES = ['adiabatic', 'sudden'] as const;

/** A sorting key as read: the choice, with its default filled in for a hyperfine species (left out otherwise). */
function readSortingKey(r: KeyRead, s: KeySpec): unknown {
  const options = s.key === 'group' ? GROUPS : ENTRIES;
  const v = choice(r.ctx, r.o, s.key, r.path, options);
  const sp = r.ctx.species;
  if (!sp || !isHyperfine(sp)) return undefined;
  return v ?? (s.key === 'group' ? defaultGroup(sp) : 'adiabatic');
}

/** The rows of group and entry in a kind's key table (read by their own reader: the default depends on the species). */
export const SORTING_KEYS: readonly KeySpec[] = [
  { key: 'group', shape: { type: 'choice', options: GROUPS }, label: 'ports group', optional: true, hyperfineOnly: true, read: readSortingKey },
  { key: 'entry', shape: { type: 'choice', options: ENTRIES }, label: 'entry', optional: true, hyperfineOnly: true, read: readSortingKey },
];

/** The port labels group and entry give (read before), or undefined when the species is unknown or either was refused. */
export function sortedLabels(r: KeyRead): string[] | undefined {
  const sp = r.ctx.species;
  if (!sp || r.failed.has('group') || r.failed.has('entry')) return undefined;
  return portLabels(sp, r.o.group as Group | undefined);
}
