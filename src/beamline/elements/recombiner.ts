/**
 * recombiner: closes a magnet pair's split paths again. K = Σ_{m∈open} e^{iφ_m} P_m, ρ → K ρ K†
 * (coherent) or Σ P_m ρ P_m (incoherent). `open` names port labels of the species for its axis and group
 * (a hyperfine species sorts like a magnet: field, group, entry); `phases` {label: angle} ⊂ open,
 * missing labels 0. `coherent` defaults to true.
 */
import type { Recombiner } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { listText, quote } from '../messages.ts';
import { at, describe, full, isObj, problem, quantity, setOwn } from '../read.ts';
import type { KeyRead } from './kind.ts';
import { defineKind } from './keys.ts';
import { SORTING_KEYS, sortedLabels } from './sorting.ts';

export const recombiner = defineKind<Recombiner>({
  kind: 'recombiner',
  idPrefix: 'C',
  table: [
    { key: 'axis', shape: { type: 'axis' }, label: 'axis' },
    { key: 'open', shape: { type: 'labels' }, label: 'open ports', read: readOpen },
    { key: 'phases', shape: { type: 'angles', of: 'open' }, label: 'phase', optional: true, defaultText: '0 deg', read: readPhases },
    { key: 'coherent', shape: { type: 'bool', fallback: true }, label: 'coherent' },
    { key: 'field', shape: { type: 'quantity', dim: 'field', nonNegative: true, range: LIMITS.fieldSize, what: 'the field size', plausible: 'field' },
      label: 'field', optional: true, hyperfineOnly: true },
    ...SORTING_KEYS,
    { key: 'to', shape: { type: 'target', what: 'a recombiner' }, label: 'output' },
  ],
  // the port labels in `open` depend on the sorting: group and entry are read first
  readOrder: ['axis', 'group', 'entry', 'open', 'phases', 'coherent', 'field', 'to'],
  length: () => 0,
  defaults: (labels) => ({ axis: { roll: '0 deg' }, open: [...labels], coherent: true }),
});

/** `open`: a non-empty list of distinct port labels of the species (for its group). */
function readOpen(r: KeyRead): string[] {
  const { ctx, o, path } = r;
  const labels = sortedLabels(r);
  const op = at(path, 'open');
  const open: string[] = [];
  if (o.open === undefined) problem(ctx, op, `missing "open": the port labels the recombiner passes${labels ? ` (of ${listText(labels)})` : ''}`);
  else if (!Array.isArray(o.open)) problem(ctx, op, `expected a list of port labels, got ${describe(o.open)}`);
  else {
    if (o.open.length === 0) problem(ctx, op, 'open is empty: name at least one port label');
    for (let i = 0; i < o.open.length && !full(ctx); i++) {
      const l: unknown = o.open[i];
      if (typeof l !== 'string') problem(ctx, at(op, i), `expected a port label, got ${describe(l)}`);
      else if (labels && !labels.includes(l)) problem(ctx, at(op, i), `no port ${quote(l)} for this species and group; its ports are ${listText(labels)}`);
      else if (open.includes(l)) problem(ctx, at(op, i), `port ${quote(l)} is listed twice`);
      else open.push(l);
    }
  }
  return open;
}

/** `phases`: {port label: angle} for labels in `open` (a label left out has phase 0). */
function readPhases(r: KeyRead): Record<string, number> {
  const { ctx, o, path } = r;
  const open = (r.values.open as string[] | undefined) ?? [];
  const phases: Record<string, number> = {};
  const pp = at(path, 'phases');
  if (o.phases !== undefined) {
    if (!isObj(o.phases)) problem(ctx, pp, `expected an object {port label: angle}, got ${describe(o.phases)}`);
    else
      for (const l of Object.keys(o.phases)) {
        if (full(ctx)) break;
        if (Array.isArray(o.open) && !open.includes(l)) problem(ctx, at(pp, l), `phase for ${quote(l)}, which is not in "open"`);
        const phi = quantity(ctx, o.phases, l, 'angle', pp);
        if (phi !== undefined) setOwn(phases, l, phi);
      }
  }
  return phases;
}
