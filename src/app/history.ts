// Undo/redo as a history of whole documents (each edit pushes the new document; documents are treated
// as immutable values). Each document is kept with the label of the edit that made it ("M2 axis.roll =
// 35 deg"), so Undo and Redo can say what they undo and redo. `limit` bounds the past.

export interface History<D> {
  readonly past: readonly D[];
  readonly present: D;
  readonly future: readonly D[];
  /** The label of the edit that made each document: pastLabels[i] of past[i], and so on ('' when none). */
  readonly pastLabels: readonly string[];
  readonly presentLabel: string;
  readonly futureLabels: readonly string[];
}

export function historyStart<D>(doc: D, label = ''): History<D> {
  return { past: [], present: doc, future: [], pastLabels: [], presentLabel: label, futureLabels: [] };
}

export interface PushOptions {
  /** What the edit did, for the undo and redo commands. */
  label?: string;
  /** Past documents kept (default 500). */
  limit?: number;
}

/** The history after an edit to `doc`: the present moves into the past, the redo list is dropped.
 *  An edit that gives back the same value (===) changes nothing. `opts` a number is the limit. */
export function historyPush<D>(h: History<D>, doc: D, opts: number | PushOptions = {}): History<D> {
  if (doc === h.present) return h;
  const { label = '', limit = 500 } = typeof opts === 'number' ? { limit: opts } : opts;
  const past = [...h.past, h.present];
  const pastLabels = [...h.pastLabels, h.presentLabel];
  if (past.length > limit) {
    past.splice(0, past.length - limit);
    pastLabels.splice(0, pastLabels.length - limit);
  }
  return { past, present: doc, future: [], pastLabels, presentLabel: label, futureLabels: [] };
}

export function canUndo<D>(h: History<D>): boolean {
  return h.past.length > 0;
}

export function canRedo<D>(h: History<D>): boolean {
  return h.future.length > 0;
}

/** The label of the edit Undo would take back ('' when it has none or there is nothing to undo). */
export function undoLabel<D>(h: History<D>): string {
  return canUndo(h) ? h.presentLabel : '';
}

/** The label of the edit Redo would make again ('' when none). */
export function redoLabel<D>(h: History<D>): string {
  return canRedo(h) ? (h.futureLabels[0] ?? '') : '';
}

export function historyUndo<D>(h: History<D>): History<D> {
  if (h.past.length === 0) return h;
  return {
    past: h.past.slice(0, -1), present: h.past[h.past.length - 1], future: [h.present, ...h.future],
    pastLabels: h.pastLabels.slice(0, -1), presentLabel: h.pastLabels[h.pastLabels.length - 1] ?? '', futureLabels: [h.presentLabel, ...h.futureLabels],
  };
}

export function historyRedo<D>(h: History<D>): History<D> {
  if (h.future.length === 0) return h;
  return {
    past: [...h.past, h.present], present: h.future[0], future: h.future.slice(1),
    pastLabels: [...h.pastLabels, h.presentLabel], presentLabel: h.futureLabels[0] ?? '', futureLabels: h.futureLabels.slice(1),
  };
}
