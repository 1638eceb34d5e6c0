/**
 * What one element kind module provides: its key table (every key of the kind with its shape, bounds, default,
 * label for people and whether it applies to hyperfine species only, in docs/design.md "Keys by element kind"
 * order, which is also the order serialize writes), its length along the beam, and the defaults of a new element
 * of that kind in the editor. The keys, the routing rule and the reader are derived from the table (`defineKind`,
 * keys.ts): the reader, the serializer's order and plans, the inspector's fields and the setup sheet's set-point
 * rows all read the same table.
 */
import type { Element } from '../types.ts';
import type { Obj, ReadCtx } from '../read.ts';
import type { Limit } from '../limits.ts';
import type { PlausibleKind } from '../plausible.ts';
import type { Dimension } from '../units.ts';

export type ElementBody<E extends Element> = Omit<E, 'id' | 'kind' | 'gap' | 'path'>;

/** A quantity with a unit (a string such as "250 T/m", or a plain number where the dimension has none). */
export interface QuantityShape {
  readonly type: 'quantity';
  readonly dim: Dimension;
  /** Reject values below 0. */
  readonly nonNegative?: boolean;
  /** Reject values ≤ 0. */
  readonly positive?: boolean;
  /** Reject values outside [0, 1]. */
  readonly unit?: boolean;
  /** The range of limits.ts, checked after the sign. */
  readonly range?: Limit;
  /** The SI value used where the key is left out (the key is then optional). */
  readonly fallback?: number;
  /** How a message names the value ("the field size"); the key itself when absent. */
  readonly what?: string;
  /** The warning of plausible.ts for a value no lab builds. */
  readonly plausible?: PlausibleKind;
}

/** The shape of a key's value in the document. */
export type KeyShape =
  | QuantityShape
  /** An axis: {"roll"} or {"theta", "phi"}. */
  | { readonly type: 'axis' }
  /** A vector {x, y, z} of one dimension, each component in `range`; `plausible` names it in the warning. */
  | { readonly type: 'vector'; readonly dim: Dimension; readonly range?: Limit; readonly plausible?: string }
  /** A rectangle {width, height, x?, z?} (lengths; x and z offsets from the beam axis, default 0). */
  | { readonly type: 'rect' }
  /** true or false. */
  | { readonly type: 'bool'; readonly fallback?: boolean }
  /** One of a fixed set of strings. */
  | { readonly type: 'choice'; readonly options: readonly string[] }
  /** A list of port labels of the species. */
  | { readonly type: 'labels' }
  /** A map port label → angle over the labels listed at key `of` (a label left out: the key's default). */
  | { readonly type: 'angles'; readonly of: string }
  /** The output of a kind with ports: a map port label (or "*") → target. */
  | { readonly type: 'ports' }
  /** The one output of a kind: an element id or "stop"; `what` names the kind in the message ("a rotator"). */
  | { readonly type: 'target'; readonly what: string };

/** What a key's reader sees: the element object, its path, and the keys read before it. */
export interface KeyRead {
  readonly ctx: ReadCtx;
  readonly o: Obj;
  readonly path: string;
  /** Normalized values of the keys read so far (absent: not written and no default). */
  readonly values: Readonly<Record<string, unknown>>;
  /** Keys read so far whose value was refused. */
  readonly failed: ReadonlySet<string>;
}

/** A key's own reader, for a key whose reading needs more than its shape (ports routing, the sorting keys). */
export type KeyReader = (r: KeyRead, spec: KeySpec) => unknown;

/** One key of a kind. */
export interface KeySpec {
  readonly key: string;
  readonly shape: KeyShape;
  /** The key's name for people (the inspector's label). */
  readonly label: string;
  /** The document may leave the key out (a default applies, or the key is not used). */
  readonly optional?: boolean;
  /** The key applies to hyperfine species only. */
  readonly hyperfineOnly?: boolean;
  /** The default as people write it, shown where the key is left out ("1 s"); matches `fallback`. */
  readonly defaultText?: string;
  /** What an empty entry means, where it is not a default value ("every phase"). */
  readonly emptyText?: string;
  /** The unit a plain number of this key carries without writing it, in words (the setup sheet). */
  readonly implied?: string;
  /** The setup sheet prints the value the run used when the document leaves the key out. */
  readonly sheetDefault?: boolean;
  /** The key's own reader (named in the table), used instead of the reader of its shape. */
  readonly read?: KeyReader;
}

export interface KindModule<E extends Element = Element> {
  readonly kind: E['kind'];
  /** The letters a new element's id starts with in the editor (M1, M2, …). */
  readonly idPrefix: string;
  /** Every key of the kind but id, kind and gap, in docs/design.md order (the output key last). */
  readonly table: readonly KeySpec[];
  /** Kind-specific keys in docs/design.md order, without id, kind, gap and the output key (from the table). */
  readonly keys: readonly string[];
  /** "ports" (a magnet), "to" (one output) or "none" (a leaf: the detector): the routing rule (`outputsOf`; from the table). */
  readonly output: 'ports' | 'to' | 'none';
  /** The length (m) the element occupies along the beam, as the engine places it (0 for a thin element). */
  length(e: E): number;
  /** Keys that apply to hyperfine species only (from the table). */
  readonly hyperfineOnly: readonly string[];
  /** Read the kind-specific keys (the output included); problems go to ctx. */
  read(o: Obj, path: string, ctx: ReadCtx): ElementBody<E> | undefined;
  /**
   * Kind-specific keys of a new element in the editor (without id, kind and output), given the line's port labels;
   * a kind that needs a distance from the element before it gives its `gap` too (the slit).
   */
  defaults(portLabels: readonly string[]): Record<string, unknown>;
}
