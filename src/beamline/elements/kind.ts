/**
 * What one element kind module provides: its keys (in docs/design.md "Keys by element kind" order, which is also the
 * order serialize writes), how it routes, its length along the beam, how it is read from the document, and the
 * defaults of a new element of that kind in the editor.
 */
import type { Element } from '../types.ts';
import type { Obj, ReadCtx } from '../read.ts';

export type ElementBody<E extends Element> = Omit<E, 'id' | 'kind' | 'gap' | 'path'>;

export interface KindModule<E extends Element = Element> {
  readonly kind: E['kind'];
  /** Kind-specific keys in docs/design.md order, without id, kind, gap and the output key. */
  readonly keys: readonly string[];
  /** "ports" (a magnet), "to" (one output) or "none" (a leaf: the detector): the routing rule (`outputsOf`). */
  readonly output: 'ports' | 'to' | 'none';
  /** The length (m) the element occupies along the beam, as the engine places it (0 for a thin element). */
  length(e: E): number;
  /** Keys that apply to hyperfine species only. */
  readonly hyperfineOnly: readonly string[];
  /** Read the kind-specific keys (the output included); problems go to ctx. */
  read(o: Obj, path: string, ctx: ReadCtx): ElementBody<E> | undefined;
  /**
   * Kind-specific keys of a new element in the editor (without id, kind and output), given the line's port labels;
   * a kind that needs a distance from the element before it gives its `gap` too (the slit).
   */
  defaults(portLabels: readonly string[]): Record<string, unknown>;
}
