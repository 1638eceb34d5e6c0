/**
 * The RF flipper and the RF phase at which an atom enters (src/engine/rf.ts). The independent references are
 * the QuTiP fixtures h1–h3 (test/reference/lines.py: sesolve of the rotating-wave field written in the lab frame
 * and of the full linear field, averaged over equally spaced entry phases), checked in reference.test.ts; here
 * the standard results and the structure of the average.
 */
import { describe, expect, it } from 'vitest';
import { validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { entryPhaseCount, phaseSpread } from '../../src/engine/rf.ts';
import { runLine } from '../../src/engine/run.ts';
import { cmatCombine } from '../../src/physics/cmat.ts';
import { spinOperators } from '../../src/physics/spin.ts';

const G = 2.00231930436; // free-electron |g| (CODATA 2018)
const MU_B_OVER_H = 1.39962449361e10; // Hz/T (CODATA 2018)

function line(doc: Record<string, unknown>): Beamline {
  const r = validateBeamline({ format: 'spinyard.beamline', version: 1, title: 'Bench Q, RF flipper check', ...doc });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}
const det = (id: string) => ({ id, kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' });
const yieldOf = (r: ReturnType<typeof runLine>, id: string) => r.detectors.find((d) => d.id === id)?.yield ?? 0;

/** A spin-1/2 beam at one speed, polarised along `stateRoll`, through a flipper, analysed along `analyserRoll`. */
function flipperLine(o: { stateRoll: string; analyserRoll: string; phase?: string; detune?: number; speed?: number; spin?: string }) {
  const b0 = 8e-4;
  const f0 = G * MU_B_OVER_H * b0;
  const spin = o.spin ?? '1/2';
  const ports = spin === '1/2' ? { '+1/2': 'D1', '-1/2': 'D2' } : { '+1': 'D1', '0': 'D2', '-1': 'D3' };
  return line({
    species: { spin, g: G, mass: '106.905 u' },
    oven: { state: { kind: 'pure', axis: { roll: o.stateRoll }, m: spin === '1/2' ? '+1/2' : '+1' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: `${o.speed ?? 500} m/s` }, to: 'RF1' },
    elements: [
      { id: 'RF1', kind: 'rf', static: { x: '0 T', y: '0 T', z: `${b0} T` }, amplitude: '0.7 uT', frequency: `${f0 + (o.detune ?? 0)} Hz`, axis: { roll: '90 deg' }, length: '2 cm', ...(o.phase === undefined ? {} : { phase: o.phase }), to: 'M1' },
      { id: 'M1', kind: 'magnet', axis: { roll: o.analyserRoll }, ports },
      det('D1'), det('D2'), det('D3'),
    ].filter((e) => spin !== '1/2' || e.id !== 'D3'),
  });
}

describe('RF flipper: the entry phase of a continuous beam', () => {
  it('entryPhaseCount is 2D + 1 with D = 2F_max: 3 for spin 1/2, 5 for spin 1, 9 for spin 2', () => {
    for (const [j2, n] of [[1, 3], [2, 5], [4, 9]] as const) {
      const F = spinOperators(j2);
      const fs = cmatCombine([[0.6, F.jx], [0, F.jy], [0.8, F.jz]]);
      expect(entryPhaseCount(fs)).toBe(n);
    }
  });

  it('populations along the static field: every entry phase gives the Rabi formula, so the average does too (Rabi 1937; Foot, Atomic Physics, §7.1)', () => {
    // state and analyser along the static field (z): P(flip) = (Ω1/Ω)² sin²(ΩT/2), Ω1 = g μB B1⊥ / (2ħ) for the
    // co-rotating half of the linear field, Ω = √(Ω1² + Δ²), T = ℓ/v
    for (const detune of [0, 2.5e4, -6e4]) {
      const omega1 = 2 * Math.PI * G * MU_B_OVER_H * 0.7e-6 / 2;
      const delta = 2 * Math.PI * detune;
      const om = Math.hypot(omega1, delta);
      const T = 0.02 / 500;
      const rabi = (omega1 / om) ** 2 * Math.sin((om * T) / 2) ** 2;
      const continuous = runLine(flipperLine({ stateRoll: '0 deg', analyserRoll: '0 deg', detune }));
      expect(Math.abs(yieldOf(continuous, 'D2') - rabi), `Δ = ${detune} Hz`).toBeLessThan(1e-12);
      expect(continuous.warnings.some((w) => w.includes('depend on the RF phase'))).toBe(false);
      for (const phase of ['0 deg', '73 deg', '200 deg']) {
        const locked = runLine(flipperLine({ stateRoll: '0 deg', analyserRoll: '0 deg', detune, phase }));
        expect(Math.abs(yieldOf(locked, 'D2') - rabi), `phase ${phase}`).toBeLessThan(1e-12);
      }
    }
  });

  it('a beam polarised across the static field: the continuous result is the mean of phase-locked runs over 64 phases, and it says so', () => {
    // the line of fixture h1: 22.4215 MHz in 0.8 mT, 0.7 µT over 2 cm at 500 m/s
    const detune = 22.4215e6 - G * MU_B_OVER_H * 8e-4;
    const continuous = runLine(flipperLine({ stateRoll: '90 deg', analyserRoll: '90 deg', detune }));
    let mean = 0, lo = 1, hi = 0;
    for (let k = 0; k < 64; k++) {
      const y = yieldOf(runLine(flipperLine({ stateRoll: '90 deg', analyserRoll: '90 deg', detune, phase: `${(360 * k) / 64} deg` })), 'D1');
      mean += y / 64;
      lo = Math.min(lo, y);
      hi = Math.max(hi, y);
    }
    // the phase moves D1 over most of [0, 1]; the average is the exact discrete mean (a trigonometric polynomial)
    expect(hi - lo).toBeGreaterThan(0.8);
    expect(Math.abs(yieldOf(continuous, 'D1') - mean)).toBeLessThan(1e-12);
    expect(yieldOf(continuous, 'D1')).toBeCloseTo(0.4893, 4);
    const w = continuous.warnings.find((x) => x.startsWith('elements[0]: the yields behind this RF flipper depend on the RF phase'));
    expect(w).toMatch(/by up to 0\.4\d of the oven flux between entry phases/);
    expect(w).toContain('give the element a "phase"');
    const locked = runLine(flipperLine({ stateRoll: '90 deg', analyserRoll: '90 deg', detune, phase: '0 deg' }));
    // phase 0 is the flipper as it was computed before the average: D1 = 0.769
    expect(yieldOf(locked, 'D1')).toBeCloseTo(0.769, 3);
    expect(locked.warnings.some((x) => x.includes('depend on the RF phase'))).toBe(false);
  });

  it('spin 1 across the field: the continuous result is the mean over 64 locked phases, and Σ yields = 1', () => {
    const doc = { stateRoll: '60 deg', analyserRoll: '90 deg', spin: '1', speed: 700 };
    const continuous = runLine(flipperLine(doc));
    const means = [0, 0, 0];
    for (let k = 0; k < 64; k++) {
      const r = runLine(flipperLine({ ...doc, phase: `${(360 * k) / 64} deg` }));
      ['D1', 'D2', 'D3'].forEach((id, i) => (means[i] += yieldOf(r, id) / 64));
    }
    ['D1', 'D2', 'D3'].forEach((id, i) => expect(Math.abs(yieldOf(continuous, id) - means[i]), id).toBeLessThan(1e-12));
    expect(Math.abs(continuous.detectors.reduce((s, d) => s + d.yield, 0) + continuous.lost - 1)).toBeLessThan(1e-12);
  });

  it('phaseSpread: the largest distance of one phase\'s yield from the mean, in flux', () => {
    // two leaves, three phases, each yield already weighted 1/3
    expect(phaseSpread([[0.1, 0.2], [0.1, 0.2], [0.1, 0.2]])).toBe(0);
    expect(phaseSpread([[0.3 / 3, 0], [0.6 / 3, 0], [0.9 / 3, 0]])).toBeCloseTo(0.3, 15);
    expect(phaseSpread([[0.1], [0.1, 0.2]])).toBeUndefined();
    expect(phaseSpread([[0.5]])).toBe(0);
  });
});
