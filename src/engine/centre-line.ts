/**
 * Each sub-beam's centre line: the flux-weighted mean transverse position (x, z) of the atoms that reach the leaf's
 * plane, along the beam. It is sampled at the oven aperture (y = 0), at every plane where something shapes or
 * deflects the sub-beam (the collimating slit, the strips of later slits and pole gaps, the entrance and exit of each
 * deflecting magnet, with points inside the magnet where the path bends) and at the leaf's plane. Between these points
 * the line is straight (trajectories drift in straight lines outside the magnets), so a drawing places any other
 * element on it by linear interpolation.
 *
 * The model is the detector plane's (subbeam.ts): at each speed node the transmitted (p, q) polygon of each axis
 * (p on the oven aperture, q on the collimating slit; at plane y the trajectory is at α(y) p + β(y) q), and the
 * magnets' kicks, which deflect as a/v² along n̂. The mean at y over the atoms kept is
 *   Σ_v w t (α(y) ⟨p⟩_v + β(y) ⟨q⟩_v) / Σ_v w t  +  C(y) ⟨1/v²⟩,   C(y) = Σ_k c_k(y) n̂_k,
 * with c_k(y) = a s²/2 at s inside magnet k and a L (L/2 + D) at D after its exit (uniform acceleration while inside,
 * a straight line after). ⟨1/v²⟩ over the transmitted flux is read off the leaf's mean on its plane (the detector
 * plane's own average, exact over the whole distribution where nothing clips), so the centre line ends on the leaf's
 * displacement. Only where the kicks cancel on the plane (C = 0 there) is it the spin-weighted ⟨1/v²⟩ of the whole
 * distribution (what reaches the plane then is not told apart by its speed there).
 */
import { momentsFlat, planeCoefficients } from './geometry.ts';
import { specTraceMoment } from './average.ts';
import { type AxisNodes, type FineGeo, type Kick, NO_NODES } from './subbeam.ts';

export interface CentrePoint {
  /** Along the beam, m from the oven aperture. */
  y: number;
  /** Flux-weighted mean transverse position (m). */
  x: number;
  z: number;
}

/** Inner points sampled inside a deflecting magnet (the chord of a parabola over a quarter of it is within 1/16 of its sag). */
const INSIDE = 3;
const SAME_Y = 1e-12;

/**
 * The deflection numerator of one kick at plane y (deflection = numerator/v² along n̂): 0 before the magnet's entrance,
 * a s²/2 at s inside it, a L (L/2 + D) at D after its exit (as deflection() in subbeam.ts from the exit on).
 */
export function kickNumerator(k: Kick, y: number): number {
  if (!(y < k.exitY - SAME_Y)) return k.accel * k.length * (k.length / 2 + (y - k.exitY));
  const s = y - (k.exitY - k.length);
  return s > 0 ? (k.accel * s * s) / 2 : 0;
}

/** The transmitted-flux means ⟨p⟩, ⟨q⟩ of one axis over the nodes, each node weighted by w t. */
interface AxisMean {
  readonly ax: AxisNodes;
  p: number;
  q: number;
}

/** What the centre line of one sub-beam (one FineGeo) needs: the geometric means and ⟨1/v²⟩ of the flux kept. */
interface CentreModel {
  readonly geo: FineGeo;
  readonly x: AxisMean | null;
  readonly z: AxisMean | null;
  readonly m2: number;
}

const mom = new Float64Array(6);

function axisMeans(ax: AxisNodes, j: number): [number, number] {
  const i = ax.fixed ? 0 : j;
  if (ax.len[i] < 3) return [0, 0];
  momentsFlat(ax.pool, ax.off[i], ax.len[i], mom);
  return mom[0] !== 0 ? [mom[1] / mom[0], mom[2] / mom[0]] : [0, 0];
}

function geometricAt(a: AxisMean | null, y: number): number {
  if (!a) return 0;
  const [al, be] = planeCoefficients(a.ax.c, y);
  return al * a.p + be * a.q;
}

function kicksAt(kicks: readonly Kick[], y: number): { x: number; z: number } {
  let x = 0, z = 0;
  for (const k of kicks) {
    const c = kickNumerator(k, y);
    x += c * k.n.x;
    z += c * k.n.z;
  }
  return { x, z };
}

/** ⟨1/v²⟩ of the whole distribution weighted by the path's spin yield (the fallback where the kicks cancel on the plane). */
function wholeInverseSquare(g: FineGeo): number {
  const f = g.fine;
  if (f.grid) {
    let s = 0, w = 0;
    for (let k = 0; k < f.grid.speeds.length; k++) {
      const wk = f.grid.weights[k] * Math.max(0, f.grid.traces[k]);
      w += wk;
      s += wk / (f.grid.speeds[k] * f.grid.speeds[k]);
    }
    return w > 0 ? s / w : 0;
  }
  if (f.spec && f.moment2Cache && f.fraction > 0 && f.yieldSpin > 0) {
    const m = specTraceMoment(f.spec, f.dist, 2, f.moment2Cache) / (f.yieldSpin / f.fraction);
    return Number.isFinite(m) ? m : 0;
  }
  return 0;
}

function modelOf(g: FineGeo): CentreModel {
  const ns = g.nodes;
  if (ns === NO_NODES || ns.count === 0 || !ns.x || !ns.z) return { geo: g, x: null, z: null, m2: 0 };
  const ax = ns.x, az = ns.z;
  const mx: AxisMean = { ax, p: 0, q: 0 }, mz: AxisMean = { ax: az, p: 0, q: 0 };
  // a fixed axis has one polygon for every node: its means once
  const fx = ax.fixed ? axisMeans(ax, 0) : null, fz = az.fixed ? axisMeans(az, 0) : null;
  let tSum = 0;
  for (let j = 0; j < ns.count; j++) {
    const t = ns.w[j] * ax.tr[ax.fixed ? 0 : j] * az.tr[az.fixed ? 0 : j];
    if (t === 0) continue;
    tSum += t;
    if (!fx) {
      const [px, qx] = axisMeans(ax, j);
      mx.p += t * px; mx.q += t * qx;
    }
    if (!fz) {
      const [pz, qz] = axisMeans(az, j);
      mz.p += t * pz; mz.q += t * qz;
    }
  }
  if (!(tSum > 0)) return { geo: g, x: null, z: null, m2: 0 };
  if (fx) { mx.p = fx[0]; mx.q = fx[1]; } else { mx.p /= tSum; mx.q /= tSum; }
  if (fz) { mz.p = fz[0]; mz.q = fz[1]; } else { mz.p /= tSum; mz.q /= tSum; }
  const plane = g.fine.plane;
  const c = kicksAt(g.fine.track.kicks, plane);
  const cc = c.x * c.x + c.z * c.z;
  let m2 = 0;
  if (cc > 0) {
    // the leaf's mean on its plane is the geometric mean there plus C(plane) ⟨1/v²⟩
    const dx = g.mean.x - geometricAt(mx, plane), dz = g.mean.z - geometricAt(mz, plane);
    m2 = (dx * c.x + dz * c.z) / cc;
  } else if (g.fine.track.kicks.length > 0) m2 = wholeInverseSquare(g);
  return { geo: g, x: mx, z: mz, m2 };
}

function modelAt(m: CentreModel, y: number): { x: number; z: number } {
  if (!m.x || !m.z) return { x: 0, z: 0 };
  const c = kicksAt(m.geo.fine.track.kicks, y);
  return { x: geometricAt(m.x, y) + c.x * m.m2, z: geometricAt(m.z, y) + c.z * m.m2 };
}

/** The centre line of one sub-beam (one path's geometry) at plane y. */
export function centreAt(g: FineGeo, y: number): { x: number; z: number } {
  return modelAt(modelOf(g), y);
}

/** The planes a sub-beam's centre line is sampled at (see the module doc), sorted, up to its plane. */
export function centreStations(gs: readonly FineGeo[], plane: number): number[] {
  const ys: number[] = [0, plane];
  for (const g of gs) {
    const t = g.fine.track;
    if (t.collimator) ys.push(t.collimator.y);
    for (const s of t.strips) ys.push(s.y);
    for (const k of t.kicks) {
      const entry = k.exitY - k.length;
      ys.push(entry, k.exitY);
      for (let i = 1; i <= INSIDE; i++) ys.push(entry + (k.length * i) / (INSIDE + 1));
    }
  }
  ys.sort((a, b) => a - b);
  const out: number[] = [];
  for (const y of ys) {
    if (!(y >= 0) || y > plane + SAME_Y) continue;
    if (out.length > 0 && y - out[out.length - 1] <= SAME_Y) continue;
    out.push(y);
  }
  // the plane itself ends the line, exactly
  if (out.length > 0 && plane - out[out.length - 1] <= SAME_Y) out[out.length - 1] = plane;
  return out;
}

/**
 * A leaf's centre line: the mean over its sub-beams (paths of one leaf: isotopes, sorted states of one port) weighted
 * by each one's transmitted yield, divided by `w` (the leaf's yield, as its displacement is), at its stations.
 */
export function leafCentreLine(gs: readonly FineGeo[], plane: number, w: number): CentrePoint[] {
  const models = gs.map(modelOf);
  return centreStations(gs, plane).map((y) => {
    let x = 0, z = 0;
    for (const m of models) {
      const c = modelAt(m, y);
      x += m.geo.yieldGeo * c.x;
      z += m.geo.yieldGeo * c.z;
    }
    return { y, x: x / w, z: z / w };
  });
}

/** A leaf's centre line at any plane y (as leafCentreLine, without its stations). */
export function leafCentreAt(gs: readonly FineGeo[], w: number, y: number): { x: number; z: number } {
  let x = 0, z = 0;
  for (const g of gs) {
    const c = centreAt(g, y);
    x += g.yieldGeo * c.x;
    z += g.yieldGeo * c.z;
  }
  return { x: x / w, z: z / w };
}
