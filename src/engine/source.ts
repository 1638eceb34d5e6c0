/**
 * The source: the oven's velocity distribution (one object per set-point, so what is kept with it serves
 * every run), its initial spin state, its flux (given, or estimated from the vapor pressure through the
 * first slit), the velocity plot of the result and the check that a velocity table resolves the phases.
 */
import { BoundedCache, IdentityCache } from '../physics/cache.ts';
import { type CMat, cmatZeros } from '../physics/cmat.ts';
import { densityUnpolarized } from '../physics/density.ts';
import { zeroFieldStates } from '../physics/hyperfine.ts';
import {
  effusiveDistribution, supersonicDistribution, tableDistribution, densityAt, speedRange,
  type VelocityDistribution,
} from '../physics/velocity.ts';
import { collimatedFlux, lookupSpecies } from '../species/index.ts';
import type { Beamline, Rect } from '../beamline/types.ts';
import { lengthOf, outputsOf } from '../beamline/elements/registry.ts';
import type { SpinSystem } from './system.ts';
import { specInitial, specPhaseWeights, type SpecState } from './spectral.ts';
import type { RunResult } from './result.ts';
import type { FinePath } from './detector-plane.ts';
import { RunError } from './errors.ts';

const distCache = new IdentityCache<object, Map<number, VelocityDistribution>>('velocity distributions of tables');
const distByValue = new BoundedCache<string, VelocityDistribution>('velocity distributions', 64);

/**
 * One distribution object per velocity set-point and mass, so that what is kept with it (grids,
 * panels) serves every run: a table by its object, the others by their values (a document read again
 * after an edit elsewhere keeps them).
 */
export function distributionFor(line: Beamline, sys: SpinSystem): VelocityDistribution {
  const v = line.oven.velocity;
  if (v.kind !== 'table') {
    const key = `${v.kind}|${v.kind === 'fixed' ? v.speed : v.kind === 'effusive' ? v.temperature : `${v.speed}|${v.ratio}`}|${sys.massKg}`;
    return distByValue.getOr(key, () => makeDistribution(line, sys));
  }
  let byMass = distCache.get(v);
  if (!byMass) {
    byMass = new Map();
    distCache.set(v, byMass);
  }
  let d = byMass.get(sys.massKg);
  if (!d) {
    d = makeDistribution(line, sys);
    byMass.set(sys.massKg, d);
  }
  return d;
}

function makeDistribution(line: Beamline, sys: SpinSystem): VelocityDistribution {
  const v = line.oven.velocity;
  switch (v.kind) {
    case 'fixed': return { kind: 'fixed', speed: v.speed };
    case 'effusive': return effusiveDistribution(v.temperature, sys.massKg);
    case 'supersonic': return supersonicDistribution(v.speed, v.ratio);
    case 'table': return tableDistribution(v.points);
  }
}

export const initialSpecs = new IdentityCache<object, Map<string, SpecState>>('oven states');

/** The oven's state as a spectral state, one object per oven and system (so runs can share a prefix). */
export function initialSpec(line: Beamline, sys: SpinSystem): SpecState {
  let bySys = initialSpecs.get(line.oven);
  if (!bySys) initialSpecs.set(line.oven, (bySys = new Map()));
  let st = bySys.get(sys.key);
  if (!st) {
    st = specInitial(initialState(line, sys));
    bySys.set(sys.key, st);
  }
  return st;
}

function initialState(line: Beamline, sys: SpinSystem): CMat {
  const st = line.oven.state;
  const d = sys.dim;
  if (st.kind === 'unpolarized') return densityUnpolarized(d);
  const zf = zeroFieldStates(sys.params, st.axis);
  const rho = cmatZeros(d, d);
  const add = (label: string, p: number) => {
    const i = zf.labels.indexOf(label);
    if (i < 0) throw new RunError(`oven.state: "${label}" is not a state of ${sys.name} (states: ${zf.labels.join(', ')})`);
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      const ar = zf.vectors.re[a * d + i], ai = zf.vectors.im[a * d + i];
      const br = zf.vectors.re[b * d + i], bi = -zf.vectors.im[b * d + i];
      rho.re[a * d + b] += p * (ar * br - ai * bi);
      rho.im[a * d + b] += p * (ar * bi + ai * br);
    }
  };
  if (st.kind === 'pure') add(st.m, 1);
  else if (st.kind === 'density') {
    // ρ = Σ_ab ρ_ab |a⟩⟨b| over the zero-field states |a⟩ along the axis (the columns of zf.vectors)
    const n = st.basis.length;
    const cols = st.basis.map((label) => {
      const i = zf.labels.indexOf(label);
      if (i < 0) throw new RunError(`oven.state.basis: "${label}" is not a state of ${sys.name} (states: ${zf.labels.join(', ')})`);
      return i;
    });
    const vr = zf.vectors.re, vi = zf.vectors.im;
    for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) {
      const pr = st.re[a * n + b], pi = st.im[a * n + b];
      if (pr === 0 && pi === 0) continue;
      const ia = cols[a], ib = cols[b];
      for (let r = 0; r < d; r++) {
        // (ρ_ab u_a)_r
        const ur = vr[r * d + ia], ui = vi[r * d + ia];
        const xr = pr * ur - pi * ui, xi = pr * ui + pi * ur;
        for (let c = 0; c < d; c++) {
          // × conj(u_b)_c
          const wr = vr[c * d + ib], wi = -vi[c * d + ib];
          rho.re[r * d + c] += xr * wr - xi * wi;
          rho.im[r * d + c] += xr * wi + xi * wr;
        }
      }
    }
  } else {
    const total = Object.values(st.p).reduce((s, x) => s + x, 0);
    for (const [k, p] of Object.entries(st.p)) add(k, p / total);
  }
  return rho;
}

export function resolveFlux(line: Beamline, warnings: Set<string>): number {
  const f = line.oven.flux;
  if (f.kind === 'given') return f.value;
  const ref = line.species;
  const sp = ref.kind === 'named' ? lookupSpecies(ref.name) : undefined;
  if (!sp || sp.kind === 'bare') throw new RunError('oven.flux: a vapor-pressure estimate needs a library species with a vapor-pressure correlation');
  const ap = line.oven.aperture;
  if (!ap) throw new RunError('oven.flux: a vapor-pressure estimate needs the oven aperture (oven.aperture: the orifice)');
  const first = firstSlit(line);
  if (!first) throw new RunError('oven.flux: a vapor-pressure estimate needs a collimating slit after the oven (its area and distance set the solid angle)');
  try {
    const r = collimatedFlux({ species: sp, temperatureK: f.temperature, orificeArea: ap.width * ap.height, collimatorArea: first.rect.width * first.rect.height, distance: first.y });
    for (const w of r.warnings) warnings.add(`oven.flux: ${w}`);
    return r.flux;
  } catch (err) {
    throw new RunError(`oven.flux: ${(err as Error).message}`);
  }
}

function firstSlit(line: Beamline): { rect: Rect; y: number } | null {
  const byId = new Map(line.elements.map((e) => [e.id, e]));
  let id = line.oven.to;
  let y = 0;
  for (let guard = 0; guard < 1000 && id !== 'stop'; guard++) {
    const e = byId.get(id);
    if (!e) return null;
    y += e.gap;
    if (e.kind === 'slit') return { rect: { width: e.width, height: e.height, x: e.x, z: e.z }, y };
    y += lengthOf(e);
    // along the first output (a magnet's first port); a leaf has none
    const first = outputsOf(e)[0];
    if (!first) return null;
    id = first.target;
  }
  return null;
}

export function velocityPlot(d: VelocityDistribution): RunResult['velocity'] {
  if (d.kind === 'fixed') return { speeds: [d.speed], density: [1], kind: 'fixed' };
  if (d.kind === 'table') return { speeds: [...d.speeds], density: [...d.weights], kind: 'table' };
  const [lo, hi] = speedRange(d);
  const speeds = Array.from({ length: 121 }, (_, i) => lo + ((hi - lo) * i) / 120);
  return { speeds, density: speeds.map((v) => densityAt(d, v)), kind: d.kind };
}

/**
 * docs/design.md, "Velocity distributions": warn when a phase steps by more than π between neighbouring tabulated speeds. The warning
 * says how much of the yield rides on such terms (trace weight × table weight of the pairs concerned).
 */
export function checkTable(line: Beamline, leaves: FinePath[], warnings: Set<string>): void {
  const pts = line.oven.velocity.kind === 'table' ? line.oven.velocity.points : [];
  if (pts.length < 2) return;
  const total = pts.reduce((s, p) => s + p[1], 0);
  let worst = 0, weight = 0;
  for (const l of leaves) {
    for (const { phi, weight: w } of l.spec ? specPhaseWeights(l.spec) : []) {
      for (let k = 1; k < pts.length; k++) {
        const step = phi * Math.abs(1 / pts[k - 1][0] - 1 / pts[k][0]);
        if (step > Math.PI) {
          worst = Math.max(worst, step);
          weight = Math.max(weight, w * (pts[k - 1][1] + pts[k][1]) / total);
        }
      }
    }
  }
  if (worst > Math.PI && weight > 1e-9) warnings.add(`oven.velocity.points: a phase steps by up to ${worst.toExponential(2)} rad between neighbouring tabulated speeds (more than π) on terms that carry up to ${weight.toExponential(1)} of a yield: the table cannot resolve them, and its average is the table's, not the beam's`);
}
