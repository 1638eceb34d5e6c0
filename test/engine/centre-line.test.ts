import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { parseBeamlineText, validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { runLine } from '../../src/engine/run.ts';
import { centreAt, kickNumerator } from '../../src/engine/centre-line.ts';
import { fineGeometry, type FinePath, type Track } from '../../src/engine/subbeam.ts';
import { BOHR_MAGNETON } from '../../src/physics/constants.ts';

// The centre line of a sub-beam: the flux-weighted mean transverse position of the atoms that reach its plane, along
// the beam. Checked against the closed form of the Stern–Gerlach deflection and against the leaf's own displacement.

const U = 1.66053906660e-27; // CODATA 2018 atomic mass constant (kg)

function line(doc: Record<string, unknown>): Beamline {
  const r = validateBeamline({ format: 'spinyard.beamline', version: 1, title: 'centre line test', ...doc });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}

describe('centre line against the closed form of the Stern–Gerlach deflection', () => {
  // One magnet, one speed. The deflection of an atom of moment μ (along the gradient) and mass m at speed v through a
  // gradient G of length L, a drift D after the exit: z = μ G L (L/2 + D)/(m v²); inside the magnet, at s from its
  // entrance, z = μ G s²/(2 m v²) (uniform acceleration μG/m for a time s/v). Source: N. F. Ramsey, Molecular Beams
  // (Oxford, 1956), the deflection in an inhomogeneous field (the formula from memory; it is the textbook one).
  const mass = 106.905 * U;
  const g = 2.00231930436;
  const mu = (g / 2) * BOHR_MAGNETON; // spin 1/2, m = ±1/2: |μ_z| = g μB / 2
  const v = 600, G = 250, L = 0.06, gap = 0.2, D = 0.45;
  const r = runLine(line({
    species: { spin: '1/2', g, mass: '106.905 u' },
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: `${v} m/s` }, aperture: { width: '1 mm', height: '0.05 mm' }, to: 'S1' },
    elements: [
      { id: 'S1', kind: 'slit', gap: '30 cm', width: '0.8 mm', height: '0.05 mm', to: 'M1' },
      { id: 'M1', kind: 'magnet', gap: `${gap * 100} cm`, axis: { roll: '0 deg' }, gradient: `${G} T/m`, length: `${L * 100} cm`, field: '0.5 T', ports: { '+1/2': 'D1', '-1/2': 'D2' } },
      { id: 'D1', kind: 'detector', gap: `${D * 100} cm`, efficiency: 1, background: '0 /s', dwell: '1 s' },
      { id: 'D2', kind: 'detector', gap: `${D * 100} cm`, efficiency: 1, background: '0 /s', dwell: '1 s' },
    ],
  }));
  const entry = 0.3 + gap, exit = entry + L, plane = exit + D;
  const closed = mu * G * L * (L / 2 + D) / (mass * v * v);

  it('gives μ G L (L/2 + D)/(m v²) at the plane, μ G s²/(2 m v²) inside the magnet and 0 before it', () => {
    expect(r.leaves).toHaveLength(2);
    const signs = new Set<number>();
    for (const leaf of r.leaves) {
      const cl = leaf.centreLine!;
      expect(cl).toBeDefined();
      const last = cl[cl.length - 1];
      expect(last.y).toBeCloseTo(plane, 12);
      const sign = Math.sign(last.z);
      signs.add(sign);
      expect(Math.abs(last.z)).toBeCloseTo(closed, 12);
      expect(Math.abs(last.z - sign * closed)).toBeLessThan(1e-9 * closed);
      // the stations: the oven aperture, the slit, the magnet's entrance and exit and points inside it, the plane
      const ys = cl.map((p) => p.y);
      expect(ys[0]).toBe(0);
      for (const y of [0.3, entry, exit, plane]) expect(ys.some((s) => Math.abs(s - y) < 1e-12)).toBe(true);
      expect(ys.filter((y) => y > entry + 1e-9 && y < exit - 1e-9).length).toBeGreaterThanOrEqual(3);
      for (const p of cl) {
        // the centred collimator puts the undeflected mean on the axis; x never moves
        expect(Math.abs(p.x)).toBeLessThan(1e-15);
        const s = p.y - entry;
        const want = p.y <= entry ? 0 : p.y >= exit ? mu * G * L * (L / 2 + (p.y - exit)) / (mass * v * v) : mu * G * s * s / (2 * mass * v * v);
        expect(Math.abs(p.z - sign * want)).toBeLessThan(1e-9 * closed + 1e-18);
      }
      // increasing y
      for (let i = 1; i < ys.length; i++) expect(ys[i]).toBeGreaterThan(ys[i - 1]);
    }
    expect([...signs].sort()).toEqual([-1, 1]);
  });
});

describe('centreAt: a clipped sub-beam at several speeds', () => {
  // Built by hand: oven aperture 1 mm wide, slit 0.5 mm at 0.3 m, a kick along x, a strip after the magnet that
  // clips the slow (strongly deflected) part. The centre line at y is Σ_v w t (⟨x⟩_v(y) + d_v(y)) / Σ_v w t over the
  // atoms each speed transmits; at the plane it is the engine's mean.
  const exitY = 0.4, L = 0.05, accel = 3000;
  const track: Track = {
    source: { width: 1e-3, height: 0.05e-3, x: 0, z: 0 },
    collimator: { y: 0.3, rect: { width: 0.5e-3, height: 0.05e-3, x: 0.1e-3, z: 0 } },
    kicks: [{ exitY, length: L, accel, n: { x: 1, y: 0, z: 0 } }],
    strips: [{ y: 0.6, lo: -1e-3, hi: 1.2e-3, axis: 'x' }],
    components: [],
  };
  const speeds = [300, 450, 700];
  const f: FinePath = {
    system: 'test', fraction: 1, dist: { kind: 'fixed', speed: 450 }, path: ['M1:+'], target: 'D1', plane: 0.9, yieldSpin: 0.5, track,
    grid: { speeds: Float64Array.from(speeds), weights: Float64Array.from([0.2, 0.5, 0.3]), traces: Float64Array.from([1, 1, 1]) },
    detector: null,
  };
  const geo = fineGeometry(f);

  it('equals the geometry\'s own mean at the plane, and its straight-line parts agree with a sampled trajectory average', () => {
    const c = centreAt(geo, f.plane);
    expect(c.x).toBeCloseTo(geo.mean.x, 15);
    expect(Math.abs(c.x - geo.mean.x)).toBeLessThan(1e-12 * Math.abs(geo.mean.x));
    // independent: trajectories x(y) = p (1 − y/ys) + q y/ys + d_v(y), p uniform over the aperture, q over the slit,
    // kept when they pass the strip at 0.6 m; the mean over a fine grid of (p, q) at each speed, weighted by speed
    const ys = 0.3, n = 400;
    const defl = (y: number, v: number) => kickNumerator(track.kicks[0], y) / (v * v);
    for (const y of [0.1, 0.3, 0.37, 0.4, 0.5, 0.75, 0.9]) {
      let sw = 0, sx = 0;
      speeds.forEach((v, i) => {
        const w = f.grid!.weights[i];
        for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) {
          const p = -0.5e-3 + ((a + 0.5) / n) * 1e-3;
          const q = 0.1e-3 - 0.25e-3 + ((b + 0.5) / n) * 0.5e-3;
          const xs = p * (1 - 0.6 / ys) + q * (0.6 / ys) + defl(0.6, v);
          if (xs < -1e-3 || xs > 1.2e-3) continue;
          sw += w;
          sx += w * (p * (1 - y / ys) + q * (y / ys) + defl(y, v));
        }
      });
      const want = sx / sw;
      expect(Math.abs(centreAt(geo, y).x - want)).toBeLessThan(2e-3 * 1e-3);
    }
  });

  it('bends inside the magnet as s²: the free-fall parabola of the kick', () => {
    const k = track.kicks[0];
    const entry = exitY - L;
    expect(kickNumerator(k, entry - 0.01)).toBe(0);
    expect(kickNumerator(k, entry + L / 2)).toBeCloseTo((accel * (L / 2) ** 2) / 2, 12);
    expect(kickNumerator(k, exitY)).toBeCloseTo((accel * L * L) / 2, 12);
    expect(kickNumerator(k, exitY + 0.2)).toBeCloseTo(accel * L * (L / 2 + 0.2), 12);
  });
});

describe('every sample: the centre line ends on the leaf\'s displacement', () => {
  const dir = resolve(import.meta.dirname, '..', '..', 'samples');
  const names = readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort();
  it.each(names)('%s', (name) => {
    const doc = parseBeamlineText(readFileSync(join(dir, name), 'utf8'));
    if (!doc.ok) throw new Error(doc.problems.map((p) => p.message).join('\n'));
    const r = runLine(doc.line);
    let checked = 0;
    for (const leaf of r.leaves) {
      if (!leaf.displacement) {
        expect(leaf.centreLine).toBeUndefined();
        continue;
      }
      const cl = leaf.centreLine!;
      expect(cl.length).toBeGreaterThanOrEqual(2);
      const last = cl[cl.length - 1];
      expect(last.y).toBe(leaf.plane);
      // 1e-12 relative to the sub-beam's own scale on the plane (its displacement, or its spread where it is centred)
      const scale = Math.max(Math.hypot(leaf.displacement.x, leaf.displacement.z), leaf.spread!.x, leaf.spread!.z, 1e-300);
      expect(Math.abs(last.x - leaf.displacement.x)).toBeLessThanOrEqual(1e-12 * scale);
      expect(Math.abs(last.z - leaf.displacement.z)).toBeLessThanOrEqual(1e-12 * scale);
      for (const p of cl) expect(Number.isFinite(p.x) && Number.isFinite(p.z) && Number.isFinite(p.y)).toBe(true);
      checked++;
    }
    // every sample's lines with geometry get centre lines
    if (r.leaves.some((l) => l.displacement)) expect(checked).toBeGreaterThan(0);
  });
});
