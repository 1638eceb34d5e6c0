import { describe, it, expect } from 'vitest';
import { validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { runLine } from '../../src/engine/run.ts';
import { wignerSmallDFormula } from '../../src/physics/rotation.ts';
import { integrateAdaptive } from '../../src/physics/quadrature.ts';
import { zeemanLevels, zeroFieldStates } from '../../src/physics/hyperfine.ts';
import { lookupSpecies, hyperfineParams } from '../../src/species/index.ts';
import type { AtomSpecies } from '../../src/species/types.ts';

const U = 1.66053906660e-27; // CODATA 2018 atomic mass constant
const KB = 1.380649e-23;

function line(doc: Record<string, unknown>): Beamline {
  const r = validateBeamline({ format: 'spinyard.beamline', version: 1, title: 'engine test', ...doc });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}

const bare = (spin: string) => ({ spin, g: 2.00231930436, mass: '106.905 u' });
const det = (id: string) => ({ id, kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' });
const yieldOf = (r: ReturnType<typeof runLine>, id: string) => r.detectors.find((d) => d.id === id)?.yield ?? 0;

describe('runLine: standard results for ideal sorters', () => {
  it('spin 1/2: P(+ along n̂₂ | + along n̂₁) = cos²(θ₁₂/2) (standard result; Sakurai, Modern Quantum Mechanics, §1.4)', () => {
    for (const deg of [0, 25, 60, 90, 137, 180]) {
      const r = runLine(line({
        species: bare('1/2'),
        oven: { state: { kind: 'pure', axis: { theta: '0 deg', phi: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'M' },
        elements: [{ id: 'M', kind: 'magnet', axis: { theta: `${deg} deg`, phi: '30 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } }, det('D1'), det('D2')],
      }));
      const want = Math.cos((deg * Math.PI) / 360) ** 2;
      expect(Math.abs(yieldOf(r, 'D1') - want)).toBeLessThan(1e-13);
      expect(Math.abs(yieldOf(r, 'D2') - (1 - want))).toBeLessThan(1e-13);
    }
  });
  it('spin 1: P(m′ | m) = |d¹_{m′m}(θ)|² (standard result; Sakurai §3.5, Wigner d-functions)', () => {
    const th = 0.83;
    for (const m of ['+1', '0', '-1']) {
      const r = runLine(line({
        species: { spin: 1, g: 2.002237, mass: '4.0026 u' },
        oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '1000 m/s' }, to: 'M' },
        elements: [{ id: 'M', kind: 'magnet', axis: { roll: `(${th}) rad` }, ports: { '+1': 'Dp', '0': 'D0', '-1': 'Dm' } }, det('Dp'), det('D0'), det('Dm')],
      }));
      const m2 = m === '+1' ? 2 : m === '0' ? 0 : -2;
      for (const [id, mp2] of [['Dp', 2], ['D0', 0], ['Dm', -2]] as const) {
        expect(Math.abs(yieldOf(r, id) - wignerSmallDFormula(2, mp2, m2, th) ** 2)).toBeLessThan(1e-13);
      }
    }
  });
  it('the two-magnet reference document of docs/design.md gives 0.375 at D1 with rate 6.75e8 /s and σ = √counts', () => {
    const r = runLine(line({
      species: bare('1/2'),
      oven: { state: { kind: 'unpolarized' }, flux: '2e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { theta: '0 deg', phi: '0 deg' }, ports: { '+1/2': 'M2', '-1/2': 'stop' } },
        { id: 'M2', kind: 'magnet', axis: { roll: '60 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } },
        { id: 'D1', kind: 'detector', efficiency: 0.9, background: '3 /s', dwell: '10 s' },
        { id: 'D2', kind: 'detector', efficiency: 0.9, background: '3 /s', dwell: '10 s' },
      ],
    }));
    const d1 = r.detectors.find((d) => d.id === 'D1')!;
    expect(d1.yield).toBeCloseTo(0.375, 14);
    expect(r.leaves[0].rate).toBeCloseTo(6.75e8, 4);
    expect(d1.rate).toBeCloseTo(6.75e8 + 3, 4);
    expect(d1.counts).toBeCloseTo(d1.rate * 10, 2);
    expect(d1.sigma).toBeCloseTo(Math.sqrt(d1.counts), 8);
    expect(r.leaves.map((l) => l.path.join(' '))).toEqual(['M1:+1/2 M2:+1/2', 'M1:+1/2 M2:-1/2', 'M1:-1/2']);
    expect(Math.abs(r.leaves.reduce((s, l) => s + l.yield, 0) + r.lost - 1)).toBeLessThan(1e-12);
  });
  it('a coherent recombiner interferes its paths: cos²(φ/2); an incoherent one gives 1/2 (standard two-path result)', () => {
    for (const phi of [0, 1, 2.5, Math.PI]) {
      const mk = (coherent: boolean) => runLine(line({
        species: bare('1/2'),
        oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '700 m/s' }, to: 'R' },
        elements: [
          { id: 'R', kind: 'recombiner', axis: { roll: '90 deg' }, open: ['+1/2', '-1/2'], phases: { '-1/2': `(${phi}) rad` }, coherent, to: 'M' },
          { id: 'M', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } }, det('D1'), det('D2'),
        ],
      }));
      expect(Math.abs(yieldOf(mk(true), 'D1') - Math.cos(phi / 2) ** 2)).toBeLessThan(1e-13);
      expect(Math.abs(yieldOf(mk(false), 'D1') - 0.5)).toBeLessThan(1e-13);
    }
  });
  it('a recombiner with one port closed loses that port: Σ yields + lost = 1', () => {
    const r = runLine(line({
      species: bare('3/2'),
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '700 m/s' }, to: 'R' },
      elements: [
        { id: 'R', kind: 'recombiner', axis: { roll: '40 deg' }, open: ['+3/2', '-1/2'], coherent: true, to: 'D1' }, det('D1'),
      ],
    }));
    expect(yieldOf(r, 'D1')).toBeCloseTo(0.5, 14);
    expect(r.lost).toBeCloseTo(0.5, 14);
    expect(r.invariants.balance).toBeLessThan(1e-12);
  });
});

describe('runLine: velocity averages, frequency by frequency', () => {
  it('Larmor precession of a bare spin averages to ½(1 + ⟨cos ωℓ/v⟩) over the effusive beam (independent real-axis quadrature)', () => {
    const T = 1300, M = 106.905 * U, B = 2e-6, L = 0.05;
    const r = runLine(line({
      species: bare('1/2'),
      oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: `${T} K` }, to: 'F' },
      elements: [
        { id: 'F', kind: 'field', field: { x: `${B} T`, y: '0 T', z: '0 T' }, length: `${L} m`, to: 'M' },
        { id: 'M', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } }, det('D1'), det('D2'),
      ],
    }));
    const omega = 2.00231930436 * 1.39962449361e10 * 2 * Math.PI * B;
    const a = Math.sqrt((2 * KB * T) / M);
    const ref = integrateAdaptive((v) => {
      const f = (2 * v ** 3 * Math.exp(-(v * v) / (a * a))) / a ** 4;
      return [f * 0.5 * (1 + Math.cos((omega * L) / v)), 0];
    }, 1e-9, 8 * a, 1e-15, 1e-14, 20000);
    expect(Math.abs(yieldOf(r, 'D1') - ref.re)).toBeLessThan(1e-11);
    expect(r.quadrature!.error).toBeLessThan(1e-12);
  });
  it('after a sudden entry the 9.19 GHz F=3/F=4 beat of Cs averages away instead of aliasing (converged, insensitive to a 1e-9 speed scale)', () => {
    const mk = (T: number) => runLine(line({
      species: 'Cs-133',
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: `${T} K` }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', entry: 'sudden', ports: { 'mJ=+1/2': 'M2', 'mJ=-1/2': 'stop' } },
        { id: 'M2', kind: 'magnet', gap: '5 cm', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', entry: 'sudden', ports: { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' } },
        det('D1'), det('D2'),
      ],
    }));
    const r1 = mk(400), r2 = mk(400 * (1 + 2e-9)); // speeds scaled by (1 + 1e-9)
    expect(Math.abs(yieldOf(r1, 'D1') - yieldOf(r2, 'D1'))).toBeLessThan(1e-12);
    // converged value: every F coherence averaged out, i.e. the state after M1 dephased into F blocks
    const cs = lookupSpecies('Cs-133') as AtomSpecies;
    const p = hyperfineParams(cs);
    const lv = zeemanLevels(p, 0.8, { x: 0, y: 0, z: 1 });
    const zf = zeroFieldStates(p, { x: 0, y: 0, z: 1 });
    // ρ1 = Σ_{k ∈ mJ=+1/2} |e_k⟩⟨e_k| /16 ; dephase in |F, mF⟩ ; D1 = Σ_k' ⟨e_k'| ρ |e_k'⟩
    const plus = lv.levels.filter((l) => l.mJ2 === 1);
    const d = 16;
    let want = 0;
    for (const kp of plus) {
      for (const k of plus) {
        // Σ_F |⟨e_k'|F,mF⟩|² |⟨F,mF|e_k⟩|², the F-diagonal part of the overlap (mF equal)
        for (let c = 0; c < d; c++) {
          let o1r = 0, o1i = 0, o2r = 0, o2i = 0;
          for (let i = 0; i < d; i++) {
            const zr = zf.vectors.re[i * d + c], zi = zf.vectors.im[i * d + c];
            o1r += zr * kp.vector.re[i] + zi * kp.vector.im[i];
            o1i += zr * kp.vector.im[i] - zi * kp.vector.re[i];
            o2r += zr * k.vector.re[i] + zi * k.vector.im[i];
            o2i += zr * k.vector.im[i] - zi * k.vector.re[i];
          }
          want += ((o1r * o1r + o1i * o1i) * (o2r * o2r + o2i * o2i)) / 16;
        }
      }
    }
    // the undephased (aliased-to-nothing) value would be 1/2; the beat-averaged one differs by ~1e-3
    expect(Math.abs(want - 0.5)).toBeGreaterThan(1e-4);
    expect(Math.abs(yieldOf(r1, "D1") - want)).toBeLessThan(1e-12);
  });
});

describe('runLine: adiabatic and sudden magnet entry (docs/design.md, Magnet entry and exit)', () => {
  it('Rb-87 |F=1, mF=0⟩: adiabatic entry sends it wholly to mJ=-1/2; sudden entry splits it by its Breit–Rabi mixing', () => {
    const mk = (entry: string) => runLine(line({
      species: 'Rb-87',
      oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: 'F=1,mF=0' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '300 m/s' }, to: 'M' },
      elements: [{ id: 'M', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.05 T', group: 'mJ', entry, ports: { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' } }, det('D1'), det('D2')],
    }));
    expect(yieldOf(mk('adiabatic'), 'D1')).toBeLessThan(1e-15);
    // closed form (Breit & Rabi 1931): in the m_F = 0 block of J = 1/2, the upper eigenstate is
    // cos(β)|F=2,0⟩ + sin(β)|F=1,0⟩ with tan 2β = x (x = (g_J − g_I) μB B/ΔE); |F=1,0⟩ overlaps it by sin²β
    const gJ = 2.00233113, gI = -0.0009951414, dE = 6834.682610904e6, B = 0.05;
    const x = ((gJ - gI) * 1.39962449361e10 * B) / dE;
    const beta = 0.5 * Math.atan(x);
    expect(Math.abs(yieldOf(mk('sudden'), 'D1') - Math.sin(beta) ** 2)).toBeLessThan(1e-9);
  });
});

describe('runLine: field twist, from sudden to adiabatic passage', () => {
  const mk = (field: string, length: string) => runLine(line({
    species: bare('1/2'),
    oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '500 m/s' }, to: 'T' },
    elements: [
      { id: 'T', kind: 'twist', field, start: { roll: '0 deg' }, end: { roll: '90 deg' }, length, to: 'M' },
      { id: 'M', kind: 'magnet', axis: { roll: '90 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } }, det('D1'), det('D2'),
    ],
  }));
  it('a strong, long twist carries the spin along (adiabatic): P → 1', () => {
    expect(yieldOf(mk('1 mT', '10 cm'), 'D1')).toBeGreaterThan(0.9999);
  });
  it('a weak, short twist leaves it behind (sudden): P → cos²(45°) = 1/2', () => {
    expect(Math.abs(yieldOf(mk('1 nT', '1 mm'), 'D1') - 0.5)).toBeLessThan(1e-4);
  });
});

describe('runLine: field twist of a hyperfine state (the general rotating-frame path)', () => {
  // Rb-87 |F=2, m_F=+2⟩ along ẑ (the stretched state, an eigenstate at every field) into a twist ẑ → x̂,
  // analysed along x̂ state by state. Adiabatic: it follows the field, P(F=2,mF=+2 along x̂) → 1. Sudden:
  // it stays along ẑ, P = |d²₂₂(90°)|² = ((1 + cos 90°)/2)⁴ = 1/16 (PDG review, d functions).
  const mk = (field: string, length: string) => runLine(line({
    species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '500 m/s' }, to: 'M1' },
    elements: [
      { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.5 T', group: 'each', ports: { 'F=2,mF=+2': 'T', '*': 'stop' } },
      { id: 'T', kind: 'twist', field, start: { roll: '0 deg' }, end: { roll: '90 deg' }, length, to: 'M2' },
      { id: 'M2', kind: 'magnet', axis: { roll: '90 deg' }, field: '0.5 T', group: 'each', ports: { 'F=2,mF=+2': 'D1', '*': 'D2' } },
      det('D1'), det('D2'),
    ],
  }));
  it('a strong, long twist carries the stretched state along (adiabatic)', () => {
    const r = mk('1 mT', '10 cm');
    // the port holds 1/8 of the unpolarized oven (one of 8 states)
    expect(Math.abs(yieldOf(r, 'D1') - 1 / 8)).toBeLessThan(1e-6);
  });
  it('a weak, short twist leaves it behind (sudden): 1/16 of the port', () => {
    const r = mk('1 nT', '1 mm');
    expect(Math.abs(yieldOf(r, 'D1') - 1 / 8 / 16)).toBeLessThan(1e-5);
  });
});

describe('runLine: Stern–Gerlach deflection (docs/design.md: a L (L/2 + D)/v²)', () => {
  it('a bare spin at one speed is displaced by ∓ g μB G L (L/2 + D)/(2 M v²)', () => {
    const G = 800, L = 0.06, D = 0.4, v = 550, M = 106.905 * U;
    const r = runLine(line({
      species: bare('1/2'),
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: `${v} m/s` }, to: 'M' },
      elements: [
        { id: 'M', kind: 'magnet', axis: { roll: '0 deg' }, gradient: `${G} T/m`, length: `${L} m`, ports: { '+1/2': 'D1', '-1/2': 'D2' } },
        { ...det('D1'), gap: `${D} m` }, { ...det('D2'), gap: `${D} m` },
      ],
    }));
    const a = (2.00231930436 * 0.5 * 9.2740100783e-24 * G) / M;
    const want = (a * L * (L / 2 + D)) / (v * v);
    const up = r.leaves.find((l) => l.target === 'D1')!, dn = r.leaves.find((l) => l.target === 'D2')!;
    // m = +1/2 with g > 0 has μ_eff = −g μB/2: pushed toward −z for G > 0
    expect(up.displacement!.z).toBeCloseTo(-want, 12);
    expect(dn.displacement!.z).toBeCloseTo(want, 12);
    expect(up.displacement!.x).toBeCloseTo(0, 15);
  });
});
