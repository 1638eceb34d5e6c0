/**
 * The detector plane's speed nodes (src/engine/subbeam.ts) take shortcuts: a speed at which no deflected strip clips the
 * polygon shares the unclipped polygon and its statistics, a window whose edges along an axis repeat an earlier window's
 * takes that window's fraction there, and a window that holds or misses a whole polygon takes its transmitted fraction
 * or 0 without clipping. Each node must still give what the collimator geometry of src/engine/geometry.ts gives when
 * every strip and window is clipped at that speed (transmit, fractionInside), on a sub-beam deflected along both axes
 * whose slow speeds a strip clips and whose fast ones it does not.
 */
import { describe, expect, it } from 'vitest';
import { fineGeometry, type FinePath, type PlaneWindow, type Track } from '../../src/engine/subbeam.ts';
import { fractionInside, transmit, type Collimator1D } from '../../src/engine/geometry.ts';
import type { Detector, Rect } from '../../src/beamline/types.ts';

const mm = 1e-3;
const PLANE = 1.0;
const n = { x: Math.sin(Math.PI / 6), y: 0, z: -Math.cos(Math.PI / 6) };
// a magnet from 0.4 m to 0.5 m (a = 1e4 m/s²), a strip of ±1.2 mm on each axis at its exit (deflected) and one at 0.35 m
// (not yet deflected); the collimated beam is ±1.17 mm wide at 0.5 m, so the exit strips clip only the slow atoms
const track: Track = {
  source: { x: 0, z: 0, width: 1 * mm, height: 1 * mm },
  collimator: { y: 0.3, rect: { x: 0, z: 0, width: 1 * mm, height: 1 * mm } },
  kicks: [{ exitY: 0.5, length: 0.1, accel: 1e4, n }],
  strips: [
    { y: 0.35, lo: -1.5 * mm, hi: 1.5 * mm, axis: 'x' }, { y: 0.35, lo: -1.5 * mm, hi: 1.5 * mm, axis: 'z' },
    { y: 0.5, lo: -1.2 * mm, hi: 1.2 * mm, axis: 'x' }, { y: 0.5, lo: -1.2 * mm, hi: 1.2 * mm, axis: 'z' },
  ],
  components: [],
};
const win = (x: number, z: number): Rect => ({ x: x * mm, z: z * mm, width: 1 * mm, height: 1 * mm });
const own: Detector = { id: 'D1', kind: 'detector', gap: 0, path: 'elements.D1', efficiency: 1, background: 0, dwell: 1, window: win(0.5, -1.5) };
// D2 shares D1's edges along x, D3 its edges along z
const others: PlaneWindow[] = [{ id: 'D2', window: win(0.5, -3), y: PLANE }, { id: 'D3', window: win(1.5, -1.5), y: PLANE }];
const speeds = Array.from({ length: 40 }, (_, i) => 300 + (1700 * i) / 39);

const f: FinePath = {
  system: 'test', fraction: 1, dist: { kind: 'fixed', speed: 1000 }, path: ['M'], target: 'D1', plane: PLANE, yieldSpin: 1, track,
  grid: { speeds: Float64Array.from(speeds), weights: Float64Array.from(speeds, () => 1 / speeds.length), traces: Float64Array.from(speeds, () => 1) },
  detector: own,
};

function collimator(axis: 'x' | 'z'): Collimator1D {
  const w = axis === 'x' ? 'width' : 'height';
  return { p0: -track.source![w] / 2, p1: track.source![w] / 2, q0: -track.collimator!.rect[w] / 2, q1: track.collimator!.rect[w] / 2, ys: 0.3 };
}

/** The deflection along an axis at plane y of speed v (after the magnet's exit: a L (L/2 + D)/v²). */
function deflection(y: number, v: number, axis: 'x' | 'z'): number {
  return y < 0.5 ? 0 : (1e4 * 0.1 * (0.05 + (y - 0.5)) / (v * v)) * n[axis];
}

describe('the detector plane\'s speed nodes', () => {
  it('give each speed the transmitted and captured fractions of the collimator geometry clipped at that speed', () => {
    const g = fineGeometry(f, 24, others);
    let T = 0, clippedSpeeds = 0;
    const caught = new Map<string, number>([['D1', 0], ['D2', 0], ['D3', 0]]);
    for (const v of speeds) {
      const axes = (['x', 'z'] as const).map((axis) => {
        const c = collimator(axis);
        const strips = track.strips.filter((s) => s.axis === axis).map((s) => ({ y: s.y, lo: s.lo - deflection(s.y, v, axis), hi: s.hi - deflection(s.y, v, axis) }));
        return { axis, c, r: transmit(c, strips, PLANE), unclipped: transmit(c, strips.slice(0, 1), PLANE) };
      });
      if (axes.some((a) => a.r.transmission < a.unclipped.transmission)) clippedSpeeds++;
      T += axes[0].r.transmission * axes[1].r.transmission / speeds.length;
      for (const [id, w] of [['D1', own.window!], ...others.map((o) => [o.id, o.window] as const)] as const) {
        const [fx, fz] = axes.map(({ axis, c, r }) => {
          const lo = axis === 'x' ? w.x - w.width / 2 : w.z - w.height / 2, hi = axis === 'x' ? w.x + w.width / 2 : w.z + w.height / 2;
          return fractionInside(c, r, PLANE, lo - deflection(PLANE, v, axis), hi - deflection(PLANE, v, axis));
        });
        caught.set(id, caught.get(id)! + (fx * fz) / speeds.length);
      }
    }
    // the case holds both kinds of speed, and every window catches something
    expect(clippedSpeeds).toBeGreaterThan(5);
    expect(clippedSpeeds).toBeLessThan(speeds.length - 5);
    for (const [id, c] of caught) expect(c, id).toBeGreaterThan(1e-3);
    expect(g.yieldGeo).toBeCloseTo(T, 12);
    expect(Math.abs(g.yieldGeo * g.captured / caught.get('D1')! - 1)).toBeLessThan(1e-12);
    for (const id of ['D2', 'D3']) expect(Math.abs(g.inside!.get(id)! / caught.get(id)! - 1), id).toBeLessThan(1e-12);
  });
});
