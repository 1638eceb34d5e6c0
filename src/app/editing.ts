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
