/**
 * The spin system of a line's species: operators, Hamiltonian and the magnet's sorting of states.
 * One system per isotope; a natural mixture is run isotope by isotope and weighted by abundance.
 *
 * Hamiltonian (docs/design.md, "Hamiltonians"): H/h = A I·J (+ quadrupole) + (μB/h)(g_J J + g_I I)·B; a bare spin is
 * H = g μB J·B. The engine works in angular frequency, H/ħ = 2π·H/h (rad/s).
 */
import { BoundedCache } from '../physics/cache.ts';
import { type CMat, cmatScale, cmatZeros, cmatColumn, cmatOwn } from '../physics/cmat.ts';
import { compositeSpin, formatHalfInteger } from '../physics/spin.ts';
import { hyperfineHamiltonianHz, zeemanLevels, zeroFieldStates, mjSortCleanField, type HyperfineParams } from '../physics/hyperfine.ts';
import type { Vec3 } from '../physics/rotation.ts';
import { lookupSpecies, hyperfineParams, speciesNames } from '../species/index.ts';
import type { AtomSpecies } from '../species/types.ts';
import type { SpeciesRef } from '../beamline/types.ts';

export interface SpinSystem {
  /** Identity of the system's constants (name, I, J, g-factors, A, B, mass), for caches. */
  readonly key: string;
  readonly name: string;
  readonly params: HyperfineParams;
  /** True when ports are hyperfine |F, m_F⟩ eigenstates (I > 0). */
  readonly hyperfine: boolean;
  readonly dim: number;
  readonly massKg: number;
  /** Total angular momentum F = I + J (J for a bare spin): generator of rotations. */
  readonly F: { readonly jx: CMat; readonly jy: CMat; readonly jz: CMat };
  /** H/ħ in rad/s at field B (T). */
  hamiltonian(b: Vec3): CMat;
}

export interface WeightedSystem {
  readonly system: SpinSystem;
  readonly fraction: number;
}

export class SpeciesError extends Error {}

const systems = new BoundedCache<string, SpinSystem>('spin systems', 64);

/** One system per (name, constants, mass), kept across runs with its cache of Hamiltonians. */
function makeSystem(name: string, params: HyperfineParams, massKg: number): SpinSystem {
  const key = `${name}|${params.i2}|${params.j2}|${params.gJ}|${params.gI}|${params.aHz}|${params.bHz ?? 0}|${massKg}`;
  return systems.getOr(key, () => buildSystem(key, name, params, massKg));
}

function buildSystem(key: string, name: string, params: HyperfineParams, massKg: number): SpinSystem {
  const c = compositeSpin(params.i2, params.j2);
  const cache = new Map<string, CMat>();
  return {
    key,
    name,
    params,
    hyperfine: params.i2 > 0,
    dim: c.dim,
    massKg,
    F: c.F,
    hamiltonian(b: Vec3): CMat {
      const key = `${b.x},${b.y},${b.z}`;
      let h = cache.get(key);
      if (!h) {
        h = cmatOwn(cmatScale(hyperfineHamiltonianHz(params, b), 2 * Math.PI));
        if (cache.size > 256) cache.clear();
        cache.set(key, h);
      }
      return h;
    },
  };
}

/** The isotope systems of a line's species with their weights (1 for a single species). */
export function speciesSystems(ref: SpeciesRef): readonly WeightedSystem[] {
  // a scan's lines share their species object: its systems are looked up once (their keys format every constant)
  let hit = systemsOfRef.get(ref);
  if (!hit) {
    hit = systemsOf(ref);
    systemsOfRef.set(ref, hit);
  }
  return hit;
}
const systemsOfRef = new WeakMap<SpeciesRef, readonly WeightedSystem[]>();

function systemsOf(ref: SpeciesRef): WeightedSystem[] {
  if (ref.kind === 'bare') {
    return [{ system: makeSystem(`spin ${formatHalfInteger(ref.j2, false)}`, { i2: 0, j2: ref.j2, gJ: ref.g, gI: 0, aHz: 0 }, ref.massKg), fraction: 1 }];
  }
  const s = lookupSpecies(ref.name);
  if (!s) throw new SpeciesError(`species: unknown species "${ref.name}"; known: ${speciesNames().join(', ')}`);
  if (s.kind === 'atom') return [{ system: atomSystem(s), fraction: 1 }];
  if (s.kind === 'mixture') return s.parts.map((p) => ({ system: atomSystem(p.species), fraction: p.fraction }));
  return [{ system: makeSystem(s.name, { i2: 0, j2: s.j2, gJ: s.g, gI: 0, aHz: 0 }, s.massKg), fraction: 1 }];
}

function atomSystem(s: AtomSpecies): SpinSystem {
  return makeSystem(s.name, hyperfineParams(s), s.massKg.value);
}

/** One state a magnet sorts into a port: the projection vector, its port and its moment there. */
export interface Component {
  /** Port label (docs/design.md, "Port labels": "+1/2", "F=2,mF=+1", "mJ=+1/2"). */
  readonly port: string;
  /** |k⟩ (d×1): the zero-field state (adiabatic entry) or the eigenstate at the field (sudden entry). */
  readonly vector: CMat;
  /** μ_eff in units of μB at the magnet's field (Hellmann–Feynman). */
  readonly moment: number;
  readonly lowField: string;
  readonly highField: string;
}

export interface Sorting {
  readonly components: readonly Component[];
  readonly ports: readonly string[];
  readonly warnings: readonly string[];
}

export interface SortSpec {
  readonly axis: Vec3;
  readonly field?: number;
  readonly group?: 'mJ' | 'each';
  readonly entry?: 'adiabatic' | 'sudden';
  /** JSON path for messages. */
  readonly path: string;
}

/**
 * The states a magnet (or a recombiner) sorts the beam into (docs/design.md, "Magnet entry and exit").
 * Adiabatic entry: the zero-field |F, m_F⟩ along n̂, each continued into the eigenstate of H(B n̂) with
 * the same low-field label, which fixes its port and μ_eff. Sudden entry: the eigenstates of H(B n̂).
 * A bare spin: |j, m⟩ along n̂ with μ_eff = −g m.
 */
export function sortStates(sys: SpinSystem, spec: SortSpec): Sorting {
  const p = sys.params;
  const warnings: string[] = [];
  if (!sys.hyperfine) {
    const lv = zeemanLevels(p, spec.field ?? 0, spec.axis);
    // zeemanLevels orders by energy; ports are listed m = +j … −j
    const comps = lv.levels.map((l) => ({ port: l.lowField, vector: l.vector, moment: l.moment, lowField: l.lowField, highField: l.highField }));
    const zf = zeroFieldStates(p, spec.axis);
    const ordered = zf.labels.map((lab, i) => {
      const c = comps.find((x) => x.port === lab);
      return c ? { ...c, vector: cmatColumn(zf.vectors, i) } : { port: lab, vector: cmatColumn(zf.vectors, i), moment: 0, lowField: lab, highField: lab };
    });
    return { components: ordered, ports: ordered.map((c) => c.port), warnings };
  }
  const field = spec.field ?? 0;
  if (!(field > 0)) {
    throw new SpeciesError(`${spec.path}.field: a magnet of a hyperfine species needs a field > 0 (its size sets the eigenstates that label the ports and their moments)`);
  }
  const group = spec.group ?? (p.j2 === 1 ? 'mJ' : 'each');
  const entry = spec.entry ?? 'adiabatic';
  const lv = zeemanLevels(p, field, spec.axis);
  const portOf = (l: { lowField: string; mJ2: number }) => (group === 'each' ? l.lowField : `mJ=${formatHalfInteger(l.mJ2)}`);
  let components: Component[];
  if (entry === 'adiabatic') {
    const zf = zeroFieldStates(p, spec.axis);
    components = zf.labels.map((lab, i) => {
      const l = lv.levels.find((x) => x.lowField === lab);
      if (!l) throw new Error(`internal: no level continues ${lab}`);
      return { port: portOf(l), vector: cmatColumn(zf.vectors, i), moment: l.moment, lowField: l.lowField, highField: l.highField };
    });
  } else {
    components = lv.levels.map((l) => ({ port: portOf(l), vector: l.vector, moment: l.moment, lowField: l.lowField, highField: l.highField }));
  }
  if (group === 'mJ') {
    const byPort = new Map<string, number[]>();
    for (const c of components) byPort.set(c.port, [...(byPort.get(c.port) ?? []), c.moment]);
    const mixed = [...byPort.entries()].filter(([, ms]) => ms.some((m) => m > 1e-12) && ms.some((m) => m < -1e-12));
    if (mixed.length > 0) {
      const clean = mjSortCleanField(p);
      warnings.push(`${spec.path}: at ${fmtField(field)} the m_J sort is not clean: port${mixed.length > 1 ? 's' : ''} ${mixed.map(([k]) => k).join(', ')} hold${mixed.length > 1 ? '' : 's'} moments of both signs; the sort becomes clean above ${fmtField(clean)}`);
    }
  }
  const ports = [...new Set(components.map((c) => c.port))];
  return { components, ports, warnings };
}

function fmtField(b: number): string {
  if (b >= 1) return `${+b.toPrecision(4)} T`;
  if (b >= 1e-3) return `${+(b * 1e3).toPrecision(4)} mT`;
  return `${+(b * 1e6).toPrecision(4)} µT`;
}

/** Σ_k |k⟩⟨k| over the given components. */
export function projectorOf(dim: number, comps: readonly Component[]): CMat {
  const out = cmatZeros(dim, dim);
  for (const c of comps) {
    const v = c.vector;
    for (let i = 0; i < dim; i++) for (let j = 0; j < dim; j++) {
      out.re[i * dim + j] += v.re[i] * v.re[j] + v.im[i] * v.im[j];
      out.im[i * dim + j] += v.im[i] * v.re[j] - v.re[i] * v.im[j];
    }
  }
  return out;
}
