/**
 * recombiner: closes a magnet pair's split paths again. K = Σ_{m∈open} e^{iφ_m} P_m, ρ → K ρ K†
 * (coherent) or Σ P_m ρ P_m (incoherent). `open` names port labels of the species for its axis and group
 * (a hyperfine species sorts like a magnet: field, group, entry); `phases` {label: angle} ⊂ open,
 * missing labels 0. `coherent` defaults to true.
 */
import type { Recombiner } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { listText, quote } from '../messages.ts';
import { type Obj, type ReadCtx, at, axis, describe, full, isObj, problem, quantity, setOwn, target } from '../read.ts';
import type { KindModule } from './kind.ts';
import { readSorting } from './sorting.ts';
import { plausible } from '../plausible.ts';

export const recombiner: KindModule<Recombiner> = {
  kind: 'recombiner',
  keys: ['axis', 'open', 'phases', 'coherent', 'field', 'group', 'entry'],
  output: 'to',
  length: () => 0,
  hyperfineOnly: ['field', 'group', 'entry'],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const n = ctx.problems.length;
    const ax = axis(ctx, o, 'axis', path);
    const sort = readSorting(ctx, o, path);
    const labels = sort.labels;
    // open
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
    // phases
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
    let coherent = true;
    if (o.coherent !== undefined) {
      if (typeof o.coherent !== 'boolean') problem(ctx, at(path, 'coherent'), `expected true or false, got ${describe(o.coherent)}`);
      else coherent = o.coherent;
    }
    const f = quantity(ctx, o, 'field', 'field', path, { required: false, nonNegative: true, range: LIMITS.fieldSize, what: 'the field size' });
    plausible(ctx, at(path, 'field'), 'field', f, 'the field size');
    const to = target(ctx, o, 'to', path, 'a recombiner');
    if (ctx.problems.length > n || !ax || !to) return undefined;
    const out: Omit<Recombiner, 'id' | 'kind' | 'gap' | 'path'> = { axis: ax, open, phases, coherent, to };
    if (f !== undefined) out.field = f;
    if (sort.group) out.group = sort.group;
    if (sort.entry) out.entry = sort.entry;
    return out;
  },
  defaults: (labels) => ({ axis: { roll: '0 deg' }, open: [...labels], coherent: true }),
};
