// The detector-plane view's data: the detectors of a result grouped by the plane they sit in (one plot and one scale
// per plane), each sub-beam shown as the band that holds the central 90 % of its flux along the axis its profile
// runs on (from the profile itself: an effusive beam's rms is stretched by its slow atoms' tail and overstates where
// the atoms land) and its mean ± rms across that axis, where the engine gives no profile.
import type { RunResultView } from './results.ts';

/** The share of a sub-beam's flux its band holds along the profile axis. */
export const BAND_SHARE = 0.9;

export interface PlaneBeam {
  /** Index of the leaf in the result (its colour in every table and chart). */
  leaf: number;
  name: string;
  target: string;
  /** Mean position and rms width (m). */
  mean: { x: number; z: number };
  spread?: { x: number; z: number };
  /** The band on the plane (m): [x0, x1] × [z0, z1]. */
  band: { x0: number; x1: number; z0: number; z1: number };
  /** Where the band comes from along each axis: the profile's central share, or mean ± rms. */
  bandFrom: { x: 'profile' | 'rms' | 'none'; z: 'profile' | 'rms' | 'none' };
  profile?: { axis: 'x' | 'z'; positions: readonly number[]; density: readonly number[] };
  captured?: number;
}

export interface PlaneWindow {
  id: string;
  x0: number; x1: number; z0: number; z1: number;
}

export interface DetectorPlane {
  /** Distance of the plane from the oven aperture (m), where the result gives it. */
  plane?: number;
  detectors: string[];
  windows: PlaneWindow[];
  beams: PlaneBeam[];
  /** The axis the profiles of this plane run along (the first profile's). */
  axis: 'x' | 'z';
  /** The engine's verdicts on neighbouring sub-beams, once each. */
  verdicts: { a: string; b: string; verdict: string; axis: 'x' | 'z'; separation: number; overlap: number }[];
}

/**
 * The interval holding the central `share` of a binned profile (bin centres `positions`, equally spaced, density per
 * metre): the (1 − share)/2 and (1 + share)/2 quantiles, linear within a bin. Undefined for an empty profile.
 */
export function profileInterval(positions: readonly number[], density: readonly number[], share = BAND_SHARE): [number, number] | undefined {
  const n = positions.length;
  if (n === 0 || density.length !== n) return undefined;
  const w = n > 1 ? (positions[n - 1] - positions[0]) / (n - 1) : 0;
  const mass = density.map((d) => Math.max(0, d) * w);
  const total = mass.reduce((a, b) => a + b, 0);
  if (!(total > 0)) return undefined;
  const at = (q: number): number => {
    let acc = 0;
    for (let i = 0; i < n; i++) {
      if (acc + mass[i] >= q * total) {
        const f = mass[i] > 0 ? (q * total - acc) / mass[i] : 0;
        return positions[i] - w / 2 + f * w;
      }
      acc += mass[i];
    }
    return positions[n - 1] + w / 2;
  };
  const lo = (1 - share) / 2;
  return [at(lo), at(1 - lo)];
}

type DetectorElement = { id: string; kind: string; window?: { x: number; z: number; width: number; height: number } };

/** The result's detectors grouped by plane (their leaves' `plane`, equal to 1 nm), in the order of the detectors. */
export function detectorPlanes(result: RunResultView, elements: readonly { id: string; kind: string }[]): DetectorPlane[] {
  const byId = new Map(elements.map((e) => [e.id, e as DetectorElement]));
  const groups: DetectorPlane[] = [];
  const keyOf = new Map<string, DetectorPlane>();
  for (const d of result.detectors) {
    const leaves = result.leaves.map((l, i) => ({ l, i })).filter((x) => x.l.target === d.id);
    const plane = leaves.find((x) => x.l.plane !== undefined)?.l.plane;
    const key = plane === undefined ? `detector ${d.id}` : `plane ${Math.round(plane * 1e9)}`;
    let g = keyOf.get(key);
    if (!g) {
      g = { ...(plane !== undefined ? { plane } : {}), detectors: [], windows: [], beams: [], axis: 'z', verdicts: [] };
      keyOf.set(key, g);
      groups.push(g);
    }
    g.detectors.push(d.id);
    const win = byId.get(d.id)?.window;
    if (win) g.windows.push({ id: d.id, x0: win.x - win.width / 2, x1: win.x + win.width / 2, z0: win.z - win.height / 2, z1: win.z + win.height / 2 });
    for (const { l, i } of leaves) {
      if (!l.displacement) continue;
      const mean = { x: l.displacement.x, z: l.displacement.z };
      const band = { x0: mean.x, x1: mean.x, z0: mean.z, z1: mean.z };
      const bandFrom: PlaneBeam['bandFrom'] = { x: 'none', z: 'none' };
      if (l.spread) {
        band.x0 = mean.x - l.spread.x;
        band.x1 = mean.x + l.spread.x;
        band.z0 = mean.z - l.spread.z;
        band.z1 = mean.z + l.spread.z;
        bandFrom.x = 'rms';
        bandFrom.z = 'rms';
      }
      const p = l.profile;
      const q = p ? profileInterval(p.positions, p.density) : undefined;
      if (p && q) {
        if (p.axis === 'x') [band.x0, band.x1] = q;
        else [band.z0, band.z1] = q;
        bandFrom[p.axis] = 'profile';
      }
      g.beams.push({
        leaf: i, name: l.path.join(' → '), target: l.target, mean, band, bandFrom,
        ...(l.spread ? { spread: { x: l.spread.x, z: l.spread.z } } : {}),
        ...(p ? { profile: { axis: p.axis, positions: p.positions, density: p.density } } : {}),
        ...(l.captured !== undefined ? { captured: l.captured } : {}),
      });
    }
    for (const n of d.neighbours ?? []) {
      if (!g.verdicts.some((v) => v.a === n.a && v.b === n.b)) g.verdicts.push({ a: n.a, b: n.b, verdict: n.verdict, axis: n.axis, separation: n.separation, overlap: n.overlap });
    }
  }
  for (const g of groups) g.axis = g.beams.find((b) => b.profile)?.profile!.axis ?? 'z';
  return groups;
}
