// The Breit–Rabi levels of the line's species at its magnets' fields, with each magnet's sorted ports marked:
// what the levels panel shows. The energies and moments are the engine's levels listing (src/engine/levels.ts,
// the same as `spinyard levels`); a level's port is its label as the magnet sorts it — the low-field label
// |F, m_F⟩ for group "each", "mJ=…" of its high-field label for group "mJ" — and its target is where the
// magnet routes that port ("*" for the ports not listed, else stop), the reader's routing rule.
import { levelsListing, magnetPortLabels, type Beamline } from './core-adapter.ts';

export interface LevelRow {
  /** the isotope, for a mixture */
  isotope?: string;
  lowField: string;
  highField: string;
  /** E/h, Hz */
  energy: number;
  /** μ_eff, μB */
  moment: number;
  /** the port the magnet sorts this level into, and where that port goes ("stop" absorbs it) */
  port: string;
  target: string;
}

export interface MagnetLevels {
  id: string;
  /** T */
  field: number;
  group: 'mJ' | 'each';
  rows: LevelRow[];
}

export type LevelsView =
  | { ok: true; species: string; magnets: MagnetLevels[]; /** magnets without a field size (no levels to show) */ noField: string[] }
  | { ok: false; message: string };

type ListedLevel = ReturnType<typeof levelsListing>['levels'][number];

/** The port a level is sorted into by a magnet of `group`. */
export function portOfLevel(level: { lowField: string; highField: string }, group: 'mJ' | 'each'): string {
  return group === 'mJ' ? level.highField.split(',')[0] : level.lowField;
}

/** Where a magnet's port goes: its own entry, else "*", else stop. */
function targetOf(ports: Readonly<Record<string, string>>, port: string): string {
  return ports[port] ?? ports['*'] ?? 'stop';
}

/** The levels of the line's species at each magnet's field, every level with its port and target. */
export function levelsView(line: Beamline): LevelsView {
  const sp = line.species as { kind: string; name?: string };
  if (sp.kind !== 'named' || !sp.name) {
    return { ok: false, message: 'a bare spin has no hyperfine structure: its levels are E = g μB m B, one per m, each sorted into its own port' };
  }
  const magnets: MagnetLevels[] = [];
  const noField: string[] = [];
  // a magnet without a group sorts as the engine's default: by m_J where J = 1/2, else by eigenstate
  const defaultGroup: 'mJ' | 'each' = magnetPortLabels(line)[0]?.startsWith('mJ=') ? 'mJ' : 'each';
  for (const e of line.elements) {
    if (e.kind !== 'magnet') continue;
    if (e.field === undefined || !Number.isFinite(e.field)) {
      noField.push(e.id);
      continue;
    }
    const group = e.group ?? defaultGroup;
    let listing: ReturnType<typeof levelsListing>;
    try {
      listing = levelsListing(sp.name, e.field);
    } catch (err) {
      return { ok: false, message: (err as Error).message };
    }
    const rows = listing.levels.map((l: ListedLevel) => {
      const port = portOfLevel(l, group);
      return { ...(l.isotope ? { isotope: l.isotope } : {}), lowField: l.lowField, highField: l.highField, energy: l.energy, moment: l.moment, port, target: targetOf(e.ports, port) };
    });
    magnets.push({ id: e.id, field: e.field, group, rows });
  }
  return { ok: true, species: sp.name, magnets, noField };
}

/**
 * The Breit–Rabi diagram from 0 to `maxField` (T) in `points` + 1 equally spaced fields: one curve per level
 * (by its low-field label, and isotope for a mixture), E/h in Hz.
 */
export function breitRabiCurves(species: string, maxField: number, points = 80): BreitRabiCurves {
  const key = `${species}|${maxField}|${points}`;
  const hit = curveCache.get(key);
  if (hit) return hit;
  const made = makeCurves(species, maxField, points);
  curveCache.set(key, made);
  // the last few diagrams only (one per magnet selected in turn, a species tried and another)
  if (curveCache.size > CURVE_CACHE_SIZE) curveCache.delete(curveCache.keys().next().value!);
  return made;
}

export type BreitRabiCurves = { fields: number[]; curves: { name: string; energy: number[] }[] };
const CURVE_CACHE_SIZE = 8;
const curveCache = new Map<string, BreitRabiCurves>();

function makeCurves(species: string, maxField: number, points: number): BreitRabiCurves {
  const fields = Array.from({ length: points + 1 }, (_, i) => (maxField * i) / points);
  const curves = new Map<string, number[]>();
  for (const b of fields) {
    for (const l of levelsListing(species, b).levels) {
      const key = l.isotope ? `${l.isotope} ${l.lowField}` : l.lowField;
      const c = curves.get(key) ?? [];
      c.push(l.energy);
      curves.set(key, c);
    }
  }
  return { fields, curves: [...curves].map(([name, energy]) => ({ name, energy })) };
}

export type Regrouped = { ok: true; ports: Record<string, string> } | { ok: false; message: string };

/**
 * A magnet's ports carried over to sorting by `group` (docs/design.md, "Port labels"): each level keeps the target
 * it has now, found through the levels at the magnet's field — sorting by eigenstate, every |F, m_F⟩ goes where its
 * m_J port went; sorting by m_J, each m_J port goes where all its eigenstates went, and a split that m_J sorting
 * cannot keep (two eigenstates of one m_J to different targets) is refused, naming them. Ports ending at a stop
 * are written as "*" → stop. Undefined where there is nothing to carry over (the same group, a bare spin, a
 * mixture, a magnet without a field).
 */
export function regroupPorts(line: Beamline, id: string, group: 'mJ' | 'each'): Regrouped | undefined {
  const view = levelsView(line);
  if (!view.ok) return undefined;
  const m = view.magnets.find((x) => x.id === id);
  if (!m || m.group === group || m.rows.some((r) => r.isotope)) return undefined;
  const to = new Map<string, { target: string; levels: string[] }[]>();
  for (const r of m.rows) {
    const port = portOfLevel(r, group);
    const list = to.get(port) ?? [];
    const same = list.find((x) => x.target === r.target);
    if (same) same.levels.push(r.lowField);
    else list.push({ target: r.target, levels: [r.lowField] });
    to.set(port, list);
  }
  const split = [...to].filter(([, list]) => list.length > 1);
  if (split.length > 0) {
    const [port, list] = split[0];
    return {
      ok: false,
      message: `sorting ${id} by m_J would put ${list.map((x) => `${x.levels.join(', ')} (to ${x.target})`).join(' and ')} into one port ${port}: route them to one target first`,
    };
  }
  const ports: Record<string, string> = {};
  let stopped = false;
  for (const [port, [only]] of to) {
    if (only.target === 'stop') stopped = true;
    else ports[port] = only.target;
  }
  if (stopped) ports['*'] = 'stop';
  return { ok: true, ports };
}
