/**
 * A kind module from its key table: the keys the writer orders, the routing rule, the hyperfine-only keys and
 * the reader are derived here, so a key is described once. `readKeys` reads every key of a table through the
 * shared readers of read.ts (a key with its own reader in the table uses that), records each quantity for the
 * planning tools in document order, and gives the element's body, or undefined when a key was refused.
 */
import type { Element } from '../types.ts';
import { type Obj, type ReadCtx, at, axis, describe, problem, quantity, rect, target, vec, choice } from '../read.ts';
import { plausible, plausibleVector } from '../plausible.ts';
import type { ElementBody, KeyRead, KeySpec, KindModule } from './kind.ts';

/** What a kind module gives of its own; the rest comes from its table. */
export interface KindDefinition<E extends Element> {
  readonly kind: E['kind'];
  /** The letters a new element's id starts with in the editor (M1, M2, …). */
  readonly idPrefix: string;
  readonly table: readonly KeySpec[];
  /**
   * The order the reader reads the keys in, where it differs from the table's (a recombiner sorts by group and
   * entry before it reads the port labels in `open`); every key of the table, once.
   */
  readonly readOrder?: readonly string[];
  length(e: E): number;
  defaults(portLabels: readonly string[]): Record<string, unknown>;
}

/** The routing rule a table declares: its output key's shape. */
export function outputOfTable(table: readonly KeySpec[]): 'ports' | 'to' | 'none' {
  if (table.some((s) => s.shape.type === 'ports')) return 'ports';
  if (table.some((s) => s.shape.type === 'target')) return 'to';
  return 'none';
}

/** True for the output key of a kind ("to" or "ports"): routing, not a set-point. */
export function isOutputKey(s: KeySpec): boolean {
  return s.shape.type === 'ports' || s.shape.type === 'target';
}

/** True when the key may be left out of the document. */
export function isOptional(s: KeySpec): boolean {
  const sh = s.shape;
  return s.optional === true || ((sh.type === 'quantity' || sh.type === 'bool') && sh.fallback !== undefined);
}

export function defineKind<E extends Element>(def: KindDefinition<E>): KindModule<E> {
  const table = def.table;
  const order = def.readOrder ? def.readOrder.map((k) => {
    const s = table.find((x) => x.key === k);
    if (!s) throw new Error(`${def.kind}: readOrder names ${k}, which is not in its table`);
    return s;
  }) : table;
  if (order.length !== table.length || new Set(order).size !== table.length) throw new Error(`${def.kind}: readOrder must name every key of its table once`);
  return {
    kind: def.kind,
    idPrefix: def.idPrefix,
    table,
    keys: table.filter((s) => !isOutputKey(s)).map((s) => s.key),
    output: outputOfTable(table),
    hyperfineOnly: table.filter((s) => s.hyperfineOnly).map((s) => s.key),
    length: def.length,
    read: (o, path, ctx) => readKeys(order, o, path, ctx) as ElementBody<E> | undefined,
    defaults: def.defaults,
  };
}

/** The value of one key by its shape (undefined when absent without a default, or refused). */
function readShape(r: KeyRead, s: KeySpec): unknown {
  const { ctx, o, path } = r;
  const k = s.key;
  const sh = s.shape;
  const absent = o[k] === undefined && !ctx.values?.has(at(path, k));
  switch (sh.type) {
    case 'quantity': {
      const v = quantity(ctx, o, k, sh.dim, path, {
        required: !isOptional(s), fallback: sh.fallback, nonNegative: sh.nonNegative, positive: sh.positive, unit: sh.unit, range: sh.range, what: sh.what,
      });
      if (sh.plausible) plausible(ctx, at(path, k), sh.plausible, v, sh.what ?? k);
      return v;
    }
    case 'axis':
      return absent && isOptional(s) ? undefined : axis(ctx, o, k, path);
    case 'vector': {
      if (absent && isOptional(s)) return undefined;
      const v = vec(ctx, o, k, sh.dim, path, sh.range);
      if (sh.plausible) plausibleVector(ctx, at(path, k), v, sh.plausible);
      return v;
    }
    case 'rect':
      if (absent && !isOptional(s)) return problem(ctx, at(path, k), `missing ${JSON.stringify(k)}`);
      return rect(ctx, o, k, path);
    case 'bool': {
      const v = o[k];
      if (v === undefined) return absent && !isOptional(s) ? problem(ctx, at(path, k), `missing ${JSON.stringify(k)}`) : sh.fallback;
      if (typeof v !== 'boolean') return problem(ctx, at(path, k), `expected true or false, got ${describe(v)}`);
      return v;
    }
    case 'choice':
      if (absent && !isOptional(s)) return problem(ctx, at(path, k), `missing ${JSON.stringify(k)}`);
      return choice(ctx, o, k, path, sh.options);
    case 'target':
      return target(ctx, o, k, path, sh.what);
    case 'labels':
    case 'angles':
    case 'ports':
      throw new Error(`the key ${k} (${sh.type}) needs its own reader in its kind's table`);
  }
}

/**
 * Read the keys of `table` (in its order) from the element object `o` at `path`: each through its own reader or the
 * reader of its shape. The body holds every key that has a value, in the order read; undefined when a key was
 * refused (a problem was recorded while reading it) or a required key has no value.
 */
export function readKeys(table: readonly KeySpec[], o: Obj, path: string, ctx: ReadCtx): Record<string, unknown> | undefined {
  const values: Record<string, unknown> = {};
  const failed = new Set<string>();
  const r: KeyRead = { ctx, o, path, values, failed };
  for (const s of table) {
    const n = ctx.problems.length;
    const v = s.read ? s.read(r, s) : readShape(r, s);
    if (ctx.problems.length > n || (v === undefined && !isOptional(s))) failed.add(s.key);
    if (v !== undefined) values[s.key] = v;
  }
  if (failed.size > 0) return undefined;
  return values;
}
