import { describe, it, expect } from 'vitest';
import { evaluateGeometry, type FinePath, type Track } from '../../src/engine/detector-plane.ts';
import type { Detector } from '../../src/beamline/types.ts';

// Sub-beams built by hand with speed-by-speed grids, so that the detector-plane geometry of the engine
// can be set against closed forms of the collimator geometry.

function detector(id: string, x: number, width: number): Detector {
  return { id, kind: 'detector', gap: 0, path: `elements.${id}`, efficiency: 1, background: 0, dwell: 1, window: { x, z: 0, width, height: 1e-3 } };
}

function fine(path: string, target: Detector, track: Track, plane: number, speeds: number[], weights: number[], yieldSpin: number): FinePath {
  return {
    system: 'test', fraction: 1, dist: { kind: 'fixed', speed: speeds[0] }, path: [path], target: target.id, plane, yieldSpin, track,
    grid: { speeds: Float64Array.from(speeds), weights: Float64Array.from(weights), traces: Float64Array.from(speeds, () => 1) },
    detector: target,
  };
}

/** CDF of the triangular distribution on [−c, c] (the sum of two uniforms of width c: Irwin–Hall, n = 2). */
function triangleCdf(x: number, c: number): number {
  if (x <= -c) return 0;
  if (x >= c) return 1;
  return x <= 0 ? (x + c) ** 2 / (2 * c * c) : 1 - (c - x) ** 2 / (2 * c * c);
}

describe('evaluateGeometry: the detector plane', () => {
  // oven aperture 1 mm × 0.05 mm at y = 0, slit 0.5 mm × 0.05 mm at 0.3 m; at 0.6 m, x = −p + 2q:
  // two uniforms of width 1 mm, a triangle on ±1 mm (umbra of zero width: standard collimator geometry)
  const c = 1e-3;
  const v = 400, L = 0.05, exitY = 0.35, accel = 2000, plane = 0.6;
  const defl = (accel * L * (L / 2 + (plane - exitY))) / (v * v);
  const track = (sign: number): Track => ({
    source: { width: 1e-3, height: 0.05e-3, x: 0, z: 0 },
    collimator: { y: 0.3, rect: { width: 0.5e-3, height: 0.05e-3, x: 0, z: 0 } },
    kicks: [{ exitY, length: L, accel, n: { x: sign, y: 0, z: 0 } }],
    strips: [],
    components: [],
  });
  const w = 0.6e-3;
  const d1 = detector('D1', defl, w), d2 = detector('D2', -defl, w);
  const fines = [fine('M:+', d1, track(1), plane, [v], [1], 0.5), fine('M:-', d2, track(-1), plane, [v], [1], 0.5)];
  const r = evaluateGeometry(fines, 1e9, 0.01, { spin: 0 });

  it('displacement a L (L/2 + D)/v² and rms width c/√6 of the triangle', () => {
    expect(r.leaves[0].displacement!.x / defl).toBeCloseTo(1, 12);
    expect(r.leaves[1].displacement!.x / defl).toBeCloseTo(-1, 12);
    expect(r.leaves[0].spread!.x / (c / Math.sqrt(6))).toBeCloseTo(1, 12);
  });

  it('captured fraction and crosstalk are the triangle CDF across each window', () => {
    const own = triangleCdf(w / 2, c) - triangleCdf(-w / 2, c);
    expect(r.leaves[0].captured! / own).toBeCloseTo(1, 12);
    const cross = triangleCdf(-2 * defl + w / 2, c) - triangleCdf(-2 * defl - w / 2, c);
    expect(cross).toBeGreaterThan(1e-3);
    const ct = r.detectors.find((d) => d.id === 'D2')!.crosstalk!;
    expect(ct).toHaveLength(1);
    expect(ct[0].fraction / cross).toBeCloseTo(1, 12);
  });

  it('the profile is the triangle binned: each bin the CDF step, and it sums to the yield', () => {
    const p = r.leaves[0].profile!;
    expect(p.axis).toBe('x');
    const dx = p.positions[1] - p.positions[0];
    let sum = 0;
    p.density.forEach((dens, i) => {
      const a = p.positions[i] - dx / 2 - defl, b = p.positions[i] + dx / 2 - defl;
      expect(Math.abs(dens * dx - 0.5 * (triangleCdf(b, c) - triangleCdf(a, c)))).toBeLessThan(1e-12);
      sum += dens * dx;
    });
    expect(sum).toBeCloseTo(0.5, 12);
  });
});

describe('evaluateGeometry: clipping at each speed', () => {
  it('a strip behind the magnet passes the part of the parallel beam its deflection carries inside', () => {
    // no slit: x = p + δ(y, v), p uniform on ±a/2; a first strip before the magnet cuts p > a/4 (the same at
    // every speed), a strip x ≥ 0 at 0.5 m keeps p ≥ −δ: transmitted (a/4 − max(−a/2, −δ))/a per speed
    const a = 1e-3, L = 0.1, exitY = 0.3, accel = 1000, y1 = 0.5;
    const speeds = [300, 500, 900], weights = [0.2, 0.5, 0.3];
    const t: Track = {
      source: { width: a, height: 0.1e-3, x: 0, z: 0 },
      collimator: null,
      kicks: [{ exitY, length: L, accel, n: { x: 1, y: 0, z: 0 } }],
      strips: [{ y: 0.1, lo: -1, hi: a / 4, axis: 'x' }, { y: y1, lo: 0, hi: 1, axis: 'x' }],
      components: [],
    };
    const det = detector('D1', 0, 1e-3);
    const r = evaluateGeometry([fine('M:+', det, t, 0.7, speeds, weights, 1)], 1e9, 0.01, { spin: 0 });
    let expected = 0;
    speeds.forEach((v, k) => {
      const delta = (accel * L * (L / 2 + (y1 - exitY))) / (v * v);
      expected += weights[k] * Math.min(1, Math.max(0, (a / 4 - Math.max(-a / 2, -delta)) / a));
    });
    expect(expected).toBeLessThan(0.75);
    expect(expected).toBeGreaterThan(0.25);
    expect(r.leaves[0].yield / expected).toBeCloseTo(1, 12);
    expect(r.clipped).toBeCloseTo(1 - expected, 12);
  });
});
