// Small pure helpers of the editor: the precision entry, moving along the beam, problem messages.

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

/** Saves `text` as a download named `name` (the browser chooses where). */
export function downloadText(name: string, text: string, mime: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: mime }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.style.display = 'none';
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 30_000);
}

type PortedElement = { kind: string; ports?: Record<string, string>; group?: string; entry?: string };

/**
 * The elements with each magnet's port keys carried over to a new species by position in the label
 * lists ("+1/2" → "mJ=+1/2": the same state under the new species' names), when both lists have the
 * same length; "*" and keys not in `from` stay. Without hyperfine structure in the new species,
 * `group` and `entry` are dropped (they do not apply). Returns undefined when nothing maps.
 */
export function remapPorts<E extends PortedElement>(elements: readonly E[], from: readonly string[], to: readonly string[], toHyperfine: boolean): E[] | undefined {
  if (from.length !== to.length || from.length === 0) return undefined;
  const map = new Map(from.map((l, i) => [l, to[i]]));
  return elements.map((e) => {
    if (e.kind !== 'magnet' && e.kind !== 'recombiner') return e;
    const next: E = { ...e };
    if (e.ports) next.ports = Object.fromEntries(Object.entries(e.ports).map(([k, v]) => [map.get(k) ?? k, v]));
    if ('open' in e && Array.isArray((e as { open?: unknown }).open)) {
      (next as { open?: string[] }).open = ((e as unknown as { open: string[] }).open).map((k) => map.get(k) ?? k);
    }
    if (!toHyperfine) {
      delete next.group;
      delete next.entry;
    }
    return next;
  });
}
