/**
 * Landau–Zener / Majorana checks of the field twist (docs/design.md, "Field twist": the exact rotating-frame solution; issue 3).
 *
 * A bare spin-1/2 (g = 2.00231930436, CODATA 2018 |g_e|) leaves a polariser along n̂1 = ẑ, crosses a twist of
 * field B turning by θ about ŷ over ℓ at speed v, and is analysed along n̂2 (the twist's end). With
 * ω0 = gμB B/ħ and Ω = θ v/ℓ the adiabaticity parameter is κ = ω0/Ω, and P_flip is the probability of
 * leaving along −n̂2. Checked here:
 * - the sudden limit (κ → 0: the state does not move, P(+n̂2) = cos²(θ/2), the textbook spin-1/2
 *   projection, e.g. Sakurai, Modern Quantum Mechanics §1.4 — standard result) and the adiabatic limit
 *   (κ → ∞: the spin follows, P_flip → 0);
 * - the Rabi formula for a field of constant size turning at a constant rate (I. I. Rabi, Phys. Rev. 51,
 *   652 (1937); standard result, quoted from memory): P_flip = sin²(√(ω0² + Ω²) t/2) / (1 + κ²);
 * - QuTiP sesolve of the lab-frame B(t) = B (cos Ωt n̂1 + sin Ωt n̂⊥) (fixtures t-twist-*.json of
 *   test/reference/lines.py), to 1e-9;
 * - Majorana's linear sweep B = (B⊥, 0, Ḃt): P_flip = exp(−π γ B⊥²/(2|Ḃ|)) (reference-data.md §5:
 *   Majorana 1932, from Landau–Zener; IUPAC Gold Book LT07409). The engine has no linear-sweep element, so
 *   QuTiP integrates the sweep (fixture majorana-sweep.json) and is compared with the closed formula: that
 *   validates the reference script. The engine's twist is a different field shape; only its regime is
 *   compared: at the same adiabaticity parameter (κ = γB⊥²/|Ḃ| for the sweep) both are nearly sudden for
 *   κ ≪ 1 and both nearly adiabatic for κ ≫ 1. The twist's flip decays as a power (≤ 1/(1+κ²)), the sweep's
 *   exponentially; the test says so and checks no more than that.
 * - spin j: P(m → m′) = |d^j_{m′m}(β)|² with sin²(β/2) = P_flip (Bloch & Rabi, Rev. Mod. Phys. 17, 237
 *   (1945); from memory, reference-data.md §5 "M"), with d^1 and d^{3/2} from the PDG review "Clebsch-Gordan
 *   coefficients, spherical harmonics, and d functions" (reference-data.md §3), against the engine's twist
 *   for j = 1 and 3/2 given its spin-1/2 result at the same parameters.
 */
import { describe, it, expect } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runDocumentText } from '../../src/engine/index.ts';
import type { RunResult } from '../../src/engine/index.ts';

const DIR = join(dirname(fileURLToPath(import.meta.url)), '..', 'fixtures', 'engine');
const G = 2.00231930436;
const MU_B = 9.2740100783e-24; // J/T, CODATA 2018
const HBAR = 6.62607015e-34 / (2 * Math.PI); // J s, exact h
const GAMMA = (G * MU_B) / HBAR; // rad s⁻¹ T⁻¹

const LENGTH = 0.02; // m
const SPEED = 500; // m/s

const SPIN_LABELS: Record<string, string[]> = {
  '1/2': ['+1/2', '-1/2'],
  '1': ['+1', '0', '-1'],
  '3/2': ['+3/2', '+1/2', '-1/2', '-3/2'],
};

/** Oven |j m⟩ along ẑ → twist ẑ → n̂2 (roll θ) → analyser along n̂2 with one detector per port. */
function twistDoc(spin: string, m: string, field: number, theta: number): string {
  const labels = SPIN_LABELS[spin];
  const ports = Object.fromEntries(labels.map((l, i) => [l, `D${i}`]));
  return JSON.stringify({
    format: 'spinyard.beamline',
    version: 1,
    title: 'Bench T: field twist between crossed polarisers',
    species: { spin, g: G, mass: '106.905 u' },
    oven: {
      state: { kind: 'pure', axis: { roll: '0 rad' }, m },
      flux: '1e9 /s',
      velocity: { kind: 'fixed', speed: `${SPEED} m/s` },
      to: 'T1',
    },
    elements: [
      { id: 'T1', kind: 'twist', field: `${field} T`, start: { roll: '0 rad' }, end: { roll: `${theta} rad` }, length: `${LENGTH} m`, to: 'M2' },
      { id: 'M2', kind: 'magnet', axis: { roll: `${theta} rad` }, ports },
      ...labels.map((_, i) => ({ id: `D${i}`, kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' })),
    ],
  });
}

function run(text: string): RunResult {
  const r = runDocumentText(text);
  if (!r.ok) throw new Error(r.problems.join('; '));
  return r.result;
}

/** Port probabilities P(m → m′) of the engine, in the order of SPIN_LABELS. */
function portProbabilities(spin: string, m: string, field: number, theta: number): number[] {
  const res = run(twistDoc(spin, m, field, theta));
  return SPIN_LABELS[spin].map((l) => res.leaves.find((x) => x.path[0] === `M2:${l}`)?.yield ?? 0);
}

const pFlip = (field: number, theta: number) => portProbabilities('1/2', '+1/2', field, theta)[1];

/** Rabi (1937): flip probability relative to the turning axis for a field of constant size turning uniformly. */
function rabiFlip(field: number, theta: number): number {
  const t = LENGTH / SPEED;
  const w0 = GAMMA * field, om = theta / t;
  const w = Math.hypot(w0, om);
  return (om * om / (w * w)) * Math.sin((w * t) / 2) ** 2;
}

describe('field twist, spin 1/2: sudden ↔ adiabatic', () => {
  const theta = (2 * Math.PI) / 3;
  const fields = [1e-11, 1e-10, 1e-9, 1e-8, 1e-7, 3e-7, 1e-6, 3e-6, 1e-5, 1e-4, 1e-3];
  it('follows the Rabi formula over the whole sweep (1e-12)', () => {
    for (const b of fields) expect(Math.abs(pFlip(b, theta) - rabiFlip(b, theta)), `B = ${b} T`).toBeLessThanOrEqual(1e-12);
  });
  it('sudden limit: the state does not move, P(+n̂2) = cos²(θ/2) (κ = 3e-5: within κ² θ²)', () => {
    const b = 1e-11;
    const kappa = (GAMMA * b) / (theta * SPEED / LENGTH);
    expect(kappa).toBeLessThan(1e-4);
    const p = portProbabilities('1/2', '+1/2', b, theta);
    expect(Math.abs(p[0] - Math.cos(theta / 2) ** 2)).toBeLessThanOrEqual(kappa * kappa * theta * theta + 1e-15);
  });
  it('adiabatic limit: the spin follows the field, P_flip ≤ 1/(1 + κ²) → 0', () => {
    for (const b of [1e-5, 1e-4, 1e-3]) {
      const kappa = (GAMMA * b) / (theta * SPEED / LENGTH);
      const f = pFlip(b, theta);
      expect(f, `B = ${b} T`).toBeLessThanOrEqual(1 / (1 + kappa * kappa) + 1e-15);
    }
    expect(pFlip(1e-3, theta)).toBeLessThan(1e-6);
  });
  it('agrees with QuTiP sesolve of the lab-frame rotating field (fixtures t-twist-*, 1e-9)', () => {
    const files = readdirSync(DIR).filter((f) => f.startsWith('t-twist-'));
    expect(files.length).toBeGreaterThanOrEqual(6);
    for (const f of files) {
      const fx = JSON.parse(readFileSync(join(DIR, f), 'utf8'));
      const res = run(JSON.stringify(fx.document));
      const ref = fx.references[0];
      for (const l of ref.leaves) {
        const got = res.leaves.find((x) => x.target === l.target && x.path.join() === l.path.join());
        expect(got, `${f} ${l.target}`).toBeDefined();
        expect(Math.abs(got!.yield - l.yield), `${f} ${l.target}`).toBeLessThanOrEqual(1e-9);
      }
    }
  });
});

describe('Majorana linear sweep (QuTiP) and the twist in the same regime', () => {
  const fx = JSON.parse(readFileSync(join(DIR, 'majorana-sweep.json'), 'utf8')) as {
    formulaTolerance: number; rows: { delta: number; pFlipQutip: number; pFlipFormula: number }[];
  };
  it('QuTiP sesolve of B = (B⊥, 0, Ḃt) reproduces exp(−πγB⊥²/(2|Ḃ|)) (validates the reference script)', () => {
    expect(fx.rows.length).toBeGreaterThanOrEqual(4);
    for (const r of fx.rows) {
      expect(r.pFlipFormula).toBeCloseTo(Math.exp((-Math.PI * r.delta) / 2), 15);
      expect(Math.abs(r.pFlipQutip - r.pFlipFormula), `δ = ${r.delta}`).toBeLessThanOrEqual(fx.formulaTolerance);
    }
  });
  it('the engine\'s twist at κ = δ is in the same regime: nearly sudden for κ ≪ 1, nearly adiabatic for κ ≫ 1', () => {
    // a twist through (nearly) π, like the sweep's field direction from −ẑ to +ẑ; κ = γB/Ω
    const theta = Math.PI * (179 / 180);
    const omega = (theta * SPEED) / LENGTH;
    const atKappa = (k: number) => pFlip((k * omega) / GAMMA, theta);
    const lz = (k: number) => Math.exp((-Math.PI * k) / 2);
    const sudden = Math.sin(theta / 2) ** 2;
    // κ = 0.01: both within 1e-3 of a full flip (sudden passage)
    expect(Math.abs(atKappa(0.01) - sudden)).toBeLessThan(1e-3);
    expect(1 - lz(0.01)).toBeLessThan(2e-2);
    // κ = 10 and 30: both small; the sweep's exponential is far below the twist's power-law bound 1/(1+κ²)
    for (const k of [10, 30]) {
      expect(atKappa(k)).toBeLessThanOrEqual(1 / (1 + k * k));
      expect(lz(k)).toBeLessThan(1 / (1 + k * k));
    }
    // through the crossover both fall monotonically on the whole: envelope of the twist 1/(1+κ²), sweep exp(−πκ/2)
    const ks = [0.01, 0.1, 0.3, 1, 3, 10];
    for (const k of ks) expect(atKappa(k)).toBeLessThanOrEqual(1 / (1 + k * k) + 1e-12);
  });
});

/** PDG closed forms of d^j_{m′m}(β) (reference-data.md §3), extended by d_{m′m} = (−1)^{m−m′} d_{mm′} = d_{−m,−m′}. */
function dSquared(j2: number, m2p: number, m2: number, beta: number): number {
  const c = Math.cos(beta), ch = Math.cos(beta / 2), sh = Math.sin(beta / 2), s = Math.sin(beta);
  const table: Record<string, number> = j2 === 2 ? {
    '2,2': (1 + c) / 2, '2,0': -s / Math.SQRT2, '2,-2': (1 - c) / 2, '0,0': c,
  } : {
    '3,3': ((1 + c) / 2) * ch, '3,1': -Math.sqrt(3) * ((1 + c) / 2) * sh, '3,-1': Math.sqrt(3) * ((1 - c) / 2) * ch,
    '3,-3': -((1 - c) / 2) * sh, '1,1': ((3 * c - 1) / 2) * ch, '1,-1': -((3 * c + 1) / 2) * sh,
  };
  for (const [a, b] of [[m2p, m2], [m2, m2p], [-m2, -m2p], [-m2p, -m2]]) {
    const v = table[`${a},${b}`];
    if (v !== undefined) return v * v;
  }
  throw new Error(`no d entry for ${j2}/2: ${m2p}/2, ${m2}/2`);
}

describe('spin j in the twist: P(m → m′) = |d^j_{m′m}(β)|², sin²(β/2) = P_flip of spin 1/2 (Bloch & Rabi 1945)', () => {
  const theta = 1.9;
  for (const b of [2e-7, 5e-7, 1.3e-6]) {
    it(`j = 1 and 3/2 at B = ${b} T (1e-12)`, () => {
      const f = pFlip(b, theta);
      expect(f).toBeGreaterThan(1e-3); // a point of the crossover, not a limit
      const beta = 2 * Math.asin(Math.sqrt(f));
      for (const spin of ['1', '3/2']) {
        const labels = SPIN_LABELS[spin];
        const j2 = labels.length - 1;
        labels.forEach((m, i) => {
          const p = portProbabilities(spin, m, b, theta);
          p.forEach((pm, k) => {
            const m2 = j2 - 2 * i, m2p = j2 - 2 * k;
            expect(Math.abs(pm - dSquared(j2, m2p, m2, beta)), `j=${spin} ${m} → ${labels[k]}`).toBeLessThanOrEqual(1e-12);
          });
        });
      }
    });
  }
});
