// Small pure helpers of the editor: the precision entry, moving along the beam, problem messages.
// (The species change, with its port labels carried over, is changeSpecies of src/beamline/edits.ts.)

/** A relative precision from "1 %", "0.5%", "0.01" (a fraction) or "1e-3"; undefined when not in (0, 1). */
export function parseEps(text: string): number | undefined {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)\s*(%?)\s*$/i.exec(text);
  if (!m) return undefined;
  const v = Number(m[1]) / (m[2] ? 100 : 1);
  return v > 0 && v < 1 ? v : undefined;
}

/**
 * The gap after moving an element `dm` m along the beam (+ downstream), as a quantity string in mm;
 * undefined when the gap would become negative. Rounded to 1 µm so repeated moves do not accumulate
 * float noise.
 */
export function moveGap(gapM: number, dm: number): string | undefined {
  const next = Math.round((gapM + dm) * 1e6) / 1e6;
  if (next < 0) return undefined;
  return `${Number((next * 1e3).toFixed(3))} mm`;
}

/** The message for a refused edit at `path`: the problems at or under that path first, else all. */
export function problemsFor(problems: readonly { path: string; message: string }[], path: string): string {
  const here = problems.filter((p) => p.path === path || p.path.startsWith(`${path}.`) || p.path.startsWith(`${path}[`));
  const list = here.length > 0 ? here : problems;
  return list.map((p) => (p.path === path ? p.message : `${p.path || '(line)'}: ${p.message}`)).join('; ');
}

/**
 * What the document in the window was last saved as: `new` (never saved: a new document or a sample),
 * `saved` (its file text at the last open or save) or `recovered` (a draft recovered after a crash, whose
 * work was never saved to a file).
 */
export type SavedState = { readonly kind: 'new' } | { readonly kind: 'saved'; readonly text: string } | { readonly kind: 'recovered' };

/**
 * True when the window holds work that is not in a file: a new document once it has been edited (undo back
 * to the start makes it clean again), a saved one whose text differs from the file's, and a recovered
 * draft until it is saved (undo cannot reach a saved state of it).
 */
export function documentDirty(saved: SavedState, text: string, undoable: number): boolean {
  switch (saved.kind) {
    case 'new':
      return undoable > 0;
    case 'saved':
      return text !== saved.text;
    case 'recovered':
      return true;
  }
}
