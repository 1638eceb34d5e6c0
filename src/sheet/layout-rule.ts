/**
 * The one rule that lays a line's branches out without overlap, shared by the setup sheet's side view (html.ts) and
 * the app's schematic (src/app/layout.ts): rows by routing, and marks (elements drawn at one place in one row).
 * Positions in any one unit (the sheet's cm, the app's m), compared within `tolerance`.
 * No DOM, React or node:* here.
 */

/** An element as the rule reads it: where it stands along the beam and where its outputs go. */
export interface RuleElement {
  readonly id: string;
  readonly kind: string;
  readonly entrance: number;
  readonly length: number;
  /** One entry per output: a magnet's port label (or "*"), "" for the single output of other kinds. */
  readonly routes: readonly { readonly port: string; readonly target: string }[];
}

/** A row of the drawing: one branch of the line, from where it leaves its parent row to its last exit. */
export interface BranchRow {
  /** The row it branches off (−1 for row 0 and for rows of elements the oven does not reach). */
  parent: number;
  from: number;
  to: number;
  /** Where its beam comes from: the element and the port(s) routed to the row's first element; none for row 0. */
  origin?: { id: string; ports: string[]; first: string };
}

/** Elements drawn as one mark: same row, kind, place and length (detectors side by side on one plane). */
export interface RuleMark {
  kind: string;
  ids: string[];
  row: number;
  entrance: number;
  length: number;
}

/**
 * Rows by routing: from the oven (its first element `first`), each element's first target continues its row; a
 * target at the same place as that first one (same kind, entrance and length: sibling detectors on one plane) shares
 * it; any other target opens a new row below, which starts at the element's exit. Elements the oven does not reach
 * get rows of their own, in the order of `elements`. Marks group the elements of one row at one place, in that order.
 */
export function branchLayout(elements: readonly RuleElement[], first: string, tolerance: number): {
  rowOf: Map<string, number>; rows: BranchRow[]; marks: RuleMark[];
} {
  const near = (a: number, b: number) => Math.abs(a - b) < tolerance;
  const byId = new Map(elements.map((el) => [el.id, el]));
  const rowOf = new Map<string, number>();
  const rows: BranchRow[] = [{ parent: -1, from: 0, to: 0 }];
  const place = (id: string, row: number) => {
    const el = byId.get(id);
    if (!el || rowOf.has(id)) return;
    rowOf.set(id, row);
    rows[row].to = Math.max(rows[row].to, el.entrance + el.length);
    const targets = [...new Set(el.routes.map((r) => r.target))].filter((t) => byId.has(t) && !rowOf.has(t));
    const head = targets.length ? byId.get(targets[0]) : undefined;
    for (const t of targets) {
      const child = byId.get(t);
      if (!child || rowOf.has(t)) continue;
      const same = head && (t === head.id || (child.kind === head.kind && near(child.entrance, head.entrance) && near(child.length, head.length)));
      if (same) place(t, row);
      else {
        const ports = el.routes.filter((r) => r.target === t).map((r) => r.port).filter((p) => p !== '');
        const exit = el.entrance + el.length;
        place(t, rows.push({ parent: row, from: exit, to: exit, origin: { id: el.id, ports, first: t } }) - 1);
      }
    }
  };
  place(first, 0);
  for (const el of elements) if (!rowOf.has(el.id)) place(el.id, rows.push({ parent: -1, from: el.entrance, to: el.entrance }) - 1);
  const marks: RuleMark[] = [];
  for (const el of elements) {
    const row = rowOf.get(el.id) ?? 0;
    const same = marks.find((mk) => mk.row === row && mk.kind === el.kind && near(mk.entrance, el.entrance) && near(mk.length, el.length));
    if (same) same.ids.push(el.id);
    else marks.push({ kind: el.kind, ids: [el.id], row, entrance: el.entrance, length: el.length });
  }
  return { rowOf, rows, marks };
}
