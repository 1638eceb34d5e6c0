/**
 * The sorting keys a magnet and a recombiner share: `group` ("mJ" | "each") and `entry`
 * ("adiabatic" | "sudden"), which apply to hyperfine species only, and the port labels they give.
 */
import { type Group, defaultGroup, isHyperfine, portLabels } from '../labels.ts';
import { type Obj, type ReadCtx, choice } from '../read.ts';

export const GROUPS = ['mJ', 'each'] as const;
export const ENTRIES = ['adiabatic', 'sudden'] as const;

/** group and entry as read (defaults filled in for a hyperfine species), and the port labels they give (undefined when unknown). */
export function readSorting(ctx: ReadCtx, o: Obj, path: string): {
  group?: Group; entry?: 'adiabatic' | 'sudden'; labels: string[] | undefined;
} {
  const n = ctx.problems.length;
  const group = choice(ctx, o, 'group', path, GROUPS);
  const entry = choice(ctx, o, 'entry', path, ENTRIES);
  const ok = ctx.problems.length === n;
  const sp = ctx.species;
  const labels = sp && ok ? portLabels(sp, group) : undefined;
  const out: { group?: Group; entry?: 'adiabatic' | 'sudden'; labels: string[] | undefined } = { labels };
  if (sp && isHyperfine(sp)) {
    out.group = group ?? defaultGroup(sp);
    out.entry = entry ?? 'adiabatic';
  }
  return out;
}
