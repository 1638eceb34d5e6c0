/**
 * Merging sub-beams (src/engine/merge.ts): the spin states of merged sub-beams add exactly, a port with at most
 * MAX_BUNDLE sub-beams is followed exactly, and a chain of Rb-87 analysers, whose sub-beams would multiply with every
 * magnet, runs with its detector numbers within the stated merging error of the exact enumeration.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runDocumentText, type RunResult } from '../../src/engine/index.ts';
import { addStates, blockedByApertures, mergeStates, MAX_BUNDLE, MERGE_FRACTION } from '../../src/engine/merge.ts';
import { compile, evaluate } from '../../src/engine/index.ts';
import type { SpecState } from '../../src/engine/spectral.ts';
import type { Track } from '../../src/engine/subbeam.ts';
import { effusiveDistribution } from '../../src/physics/velocity.ts';
import { specAt, specInitial, specKraus, specPropagate } from '../../src/engine/spectral.ts';
import { cmatZeros } from '../../src/physics/cmat.ts';

/**
 * A lab's chain of Rb-87 state analysers: n magnets (0.5 T, 200 T/m, 5 cm, pole gaps 2 mm × 6 mm), each passing
 * m_J = +1/2 through a 40° rotator to the next and sending m_J = −1/2 to its own collector.
 */
function chain(n: number, gradient = '200 T/m', speed?: string): string {
  const elements: unknown[] = [{ id: 'S1', kind: 'slit', gap: '30 cm', width: '1 mm', height: '0.05 mm', to: 'M1' }];
  for (let i = 1; i <= n; i++) {
    const last = i === n;
    elements.push({
      id: `M${i}`, kind: 'magnet', gap: i === 1 ? '5 cm' : '2 cm', axis: { roll: '0 deg' }, field: '0.5 T', gradient, length: '5 cm',
      aperture: { width: '2 mm', height: '6 mm' }, group: 'mJ', ports: { 'mJ=+1/2': last ? 'D1' : `R${i}`, 'mJ=-1/2': i === 1 ? 'stop' : `X${i}` },
    });
    if (i > 1) elements.push({ id: `X${i}`, kind: 'detector', gap: '5 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '20 mm' } });
    if (!last) elements.push({ id: `R${i}`, kind: 'rotator', gap: '2 cm', axis: { roll: '90 deg' }, angle: '40 deg', to: `M${i + 1}` });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '30 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '30 mm' } });
  return JSON.stringify({
    format: 'spinyard.beamline', version: 1, title: `Rb-87 analyser chain of ${n}`, species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '5e8 /s', velocity: speed ? { kind: 'fixed', speed } : { kind: 'effusive', temperature: '420 K' }, aperture: { width: '1 mm', height: '0.05 mm' }, to: 'S1' },
    elements,
  });
}

function run(text: string, mergeFraction?: number): RunResult {
  const r = runDocumentText(text, mergeFraction === undefined ? {} : { mergeFraction });
  if (!r.ok) throw new Error(r.problems.join('\n'));
  return r.result;
}

describe('merged spin states', () => {
  it('ρ_a + ρ_b of two spectral states equals their sum at every speed', () => {
    // spin 1/2 in a field along z after a 60° tilt: a state with a Larmor phase term
    const rho = cmatZeros(2, 2);
    rho.re[0] = 0.75; rho.re[3] = 0.25; rho.re[1] = 0.4; rho.re[2] = 0.4;
    const v = cmatZeros(2, 2);
    v.re[0] = 1; v.re[3] = 1;
    const a = specPropagate(specInitial(rho), () => v, [3e4, -3e4], 0.1);
    const k = cmatZeros(2, 2);
    k.re[0] = Math.SQRT1_2; k.re[1] = -Math.SQRT1_2; k.re[2] = Math.SQRT1_2; k.re[3] = Math.SQRT1_2;
    const b = specKraus(specPropagate(specInitial(rho), () => v, [1e4, -1e4], 0.05), k);
    const sum = addStates(a, b);
    expect(sum).not.toBeNull();
    for (const speed of [150, 333.3, 701, 2500]) {
      const x = specAt(a, speed), y = specAt(b, speed), z = specAt(sum as never, speed);
      for (let i = 0; i < 4; i++) {
        expect(z.re[i]).toBeCloseTo(x.re[i] + y.re[i], 13);
        expect(z.im[i]).toBeCloseTo(x.im[i] + y.im[i], 13);
      }
    }
  });

  it('states behind the same propagators join their bases: the sum at every speed, each Bohr frequency kept', () => {
    // spin 1 behind a field along x, then two different Kraus selections (a magnet's sort into two states)
    const rho = cmatZeros(3, 3);
    rho.re[0] = 0.5; rho.re[4] = 0.3; rho.re[8] = 0.2; rho.re[1] = 0.1; rho.re[3] = 0.1;
    const v = cmatZeros(3, 3);
    const s = Math.SQRT1_2;
    v.re[0] = 0.5; v.re[1] = s; v.re[2] = 0.5; v.re[3] = s; v.re[5] = -s; v.re[6] = 0.5; v.re[7] = -s; v.re[8] = 0.5;
    const behind = specPropagate(specInitial(rho), () => v, [2e4, 0, -2e4], 0.1);
    const select = (k: number) => {
      const p = cmatZeros(3, 3);
      p.re[k * 3 + k] = 1;
      return specKraus(behind, p);
    };
    const parts = [select(0), select(2), select(1)];
    const sum = mergeStates(parts) as SpecState;
    // joined, not expanded into the lab frame: nine basis columns, the Bohr frequencies in μ
    expect(sum.W.cols).toBe(9);
    expect(sum.mu).not.toBeNull();
    for (const speed of [150, 333.3, 701, 2500]) {
      const z = specAt(sum, speed);
      const ref = parts.map((p) => specAt(p, speed));
      for (let i = 0; i < 9; i++) {
        expect(z.re[i]).toBeCloseTo(ref[0].re[i] + ref[1].re[i] + ref[2].re[i], 14);
        expect(z.im[i]).toBeCloseTo(ref[0].im[i] + ref[1].im[i] + ref[2].im[i], 14);
      }
    }
  });

  it('bench J with its sorters at 0.5 T: merged sub-beams keep Σ yields + lost = 1 and agree with the exact enumeration', () => {
    // at 0.5 T M2's sixteen sub-beams of each port coincide pairwise within 1 % of their width and are merged
    const c = compile(JSON.parse(readFileSync(resolve(__dirname, '../../samples/bench-j-cs-precession-coil.spinyard'), 'utf8')));
    if (!c.ok) throw new Error(c.problems.join('\n'));
    const r = evaluate(c.plan, { 'M1.field': 0.5, 'M2.field': 0.5 });
    expect(r.merged?.subBeams).toBeGreaterThan(0);
    expect(r.warnings.filter((w) => w.startsWith('invariant'))).toEqual([]);
    expect(Math.abs(r.leaves.reduce((a, l) => a + l.yield, 0) + r.lost - 1)).toBeLessThan(1e-12);
    // against the exact enumeration (nothing merged): within the stated merging error of 1 % per magnet
    const exact = evaluate(c.plan, { 'M1.field': 0.5, 'M2.field': 0.5 }, { mergeFraction: 0 });
    expect(exact.merged).toBeUndefined();
    for (const [i, d] of exact.detectors.entries()) expect(Math.abs(r.detectors[i].signal - d.signal) / d.signal).toBeLessThan(r.merged!.fraction);
  });

  it('sub-beams with equal kicks merge without changing any number (pole gaps clip, nothing deflects)', () => {
    const text = chain(5, '0 T/m');
    const exact = run(text, 0), merged = run(text);
    expect(exact.merged).toBeUndefined();
    expect(merged.merged?.subBeams).toBeGreaterThan(0);
    for (const [i, d] of exact.detectors.entries()) {
      expect(merged.detectors[i].id).toBe(d.id);
      expect(merged.detectors[i].rate).toBeCloseTo(d.rate, Math.max(0, 12 - Math.ceil(Math.log10(d.rate))));
    }
    expect(merged.lost).toBeCloseTo(exact.lost, 12);
  });
});

describe('a chain of Rb-87 analysers', () => {
  it('4 magnets: each detector within the stated merging error of the exact enumeration', () => {
    const text = chain(4);
    const exact = run(text, 0), merged = run(text);
    expect(merged.merged).toBeDefined();
    const f = merged.merged!.fraction;
    expect(f).toBeGreaterThan(0);
    expect(f).toBeLessThanOrEqual(MERGE_FRACTION);
    const w = merged.warnings.find((x) => x.includes('were merged'));
    expect(w).toMatch(/more than 16 sub-beams/);
    // the stated error: up to about f per magnet at which sub-beams were merged
    const stages = (w!.match(/elements\[\d+\]/g) ?? []).length;
    expect(stages).toBeGreaterThan(0);
    for (const [i, d] of exact.detectors.entries()) {
      const m = merged.detectors[i];
      expect(m.id).toBe(d.id);
      expect(Math.abs(m.signal - d.signal) / d.signal, d.id).toBeLessThanOrEqual(f * stages);
    }
    // the spin populations are exact: the balance holds to round-off
    expect(merged.invariants.balance).toBeLessThan(1e-12);
  });

  it('12 magnets run with their sub-beams merged, every number finite and the balance kept', () => {
    const r = run(chain(12));
    expect(r.leaves.length).toBe(13);
    expect(r.merged!.subBeams).toBeGreaterThan(100);
    expect(r.invariants.balance).toBeLessThan(1e-12);
    for (const d of r.detectors) expect(Number.isFinite(d.rate) && d.rate > 0).toBe(true);
    expect(r.warnings.filter((x) => x.startsWith('invariant'))).toEqual([]);
  });
});

describe('sub-beams that no atom carries past an aperture', () => {
  // a 1 mm orifice and a 1 mm collimator 0.3 m apart, a strip of ±1 mm at 0.5 m
  const base = (accel: number): Track => ({
    source: { width: 1e-3, height: 1e-3, x: 0, z: 0 },
    collimator: { y: 0.3, rect: { width: 1e-3, height: 1e-3, x: 0, z: 0 } },
    kicks: [{ exitY: 0.4, length: 0.05, accel, n: { x: 0, y: 0, z: 1 } }],
    strips: [{ y: 0.5, lo: -1e-3, hi: 1e-3, axis: 'z' }],
    components: [],
  });
  // extent at 0.5 m: corners p ± 0.5 mm, q ± 0.5 mm, p + (q − p)·5/3 → ±(0.5·2/3 + 0.5·5/3) mm = ±7/6 mm
  const dist = effusiveDistribution(420, 86.909 * 1.66053906660e-27);

  it('is blocked when even its fastest atoms land beside the strip, and not when they reach it', () => {
    // deflection at 0.5 m is a·L·(L/2 + 0.1)/v²; fastest speed 4.8·√(2kT/M) ≈ 1366 m/s
    const vmax = 4.8 * Math.sqrt((2 * 1.380649e-23 * 420) / (86.909 * 1.66053906660e-27));
    const lever = 0.05 * (0.025 + 0.1);
    // the beam's lower edge −7/6 mm moved past +1 mm needs a·lever/vmax² > 13/6 mm
    const edge = ((13 / 6) * 1e-3 * vmax * vmax) / lever;
    expect(blockedByApertures(base(edge * 1.01), dist)).toBe(true);
    expect(blockedByApertures(base(edge * 0.99), dist)).toBe(false);
    expect(blockedByApertures(base(-edge * 1.01), dist)).toBe(true);
    expect(blockedByApertures(base(0), dist)).toBe(false);
  });

  it('a chain of 20 at one speed, whose beam leaves the pole gaps after four magnets, ends there with the flux counted as lost', () => {
    const r = run(chain(20, '200 T/m', '350 m/s'));
    expect(r.detectors.map((d) => d.id).sort()).toEqual(['D1', ...Array.from({ length: 19 }, (_, i) => `X${i + 2}`)].sort());
    const reached = r.detectors.filter((d) => d.signal > 0).map((d) => d.id).sort();
    expect(reached).toEqual(['X2', 'X3', 'X4']);
    for (const d of r.detectors.filter((x) => x.signal === 0)) expect(d.rate).toBe(d.background);
    expect(r.invariants.balance).toBeLessThan(1e-12);
  });
});

describe('lines whose ports carry few sub-beams', () => {
  it(`no sample has a port with more than ${MAX_BUNDLE} sub-beams: every sample is followed exactly`, () => {
    const dir = resolve(import.meta.dirname, '..', '..', 'samples');
    for (const name of readdirSync(dir).filter((n) => n.endsWith('.spinyard'))) {
      const r = runDocumentText(readFileSync(join(dir, name), 'utf8'));
      expect(r.ok, name).toBe(true);
      if (r.ok) expect(r.result.merged, name).toBeUndefined();
    }
  });
});
