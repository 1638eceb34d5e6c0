// Undo/redo as a history of whole documents (each edit pushes the new document; documents are treated
// as immutable values). `limit` bounds the past.

export interface History<D> {
  readonly past: readonly D[];
  readonly present: D;
  readonly future: readonly D[];
}

export function historyStart<D>(doc: D): History<D> {
  return { past: [], present: doc, future: [] };
}

/** The history after an edit to `doc`: the present moves into the past, the redo list is dropped.
 *  An edit that gives back the same value (===) changes nothing. */
export function historyPush<D>(h: History<D>, doc: D, limit = 500): History<D> {
  if (doc === h.present) return h;
  const past = [...h.past, h.present];
  if (past.length > limit) past.splice(0, past.length - limit);
  return { past, present: doc, future: [] };
}

export function canUndo<D>(h: History<D>): boolean {
  return h.past.length > 0;
}

export function canRedo<D>(h: History<D>): boolean {
  return h.future.length > 0;
}

export function historyUndo<D>(h: History<D>): History<D> {
  if (h.past.length === 0) return h;
  return { past: h.past.slice(0, -1), present: h.past[h.past.length - 1], future: [h.present, ...h.future] };
}

export function historyRedo<D>(h: History<D>): History<D> {
  if (h.future.length === 0) return h;
  return { past: [...h.past, h.present], present: h.future[0], future: h.future.slice(1) };
}
