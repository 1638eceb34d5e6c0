/**
 * The detector plane's speed nodes (src/engine/subbeam.ts) take shortcuts: a speed at which no deflected strip clips the
 * polygon shares the unclipped polygon and its statistics, a window whose edges along an axis repeat an earlier window's
 * takes that window's fraction there, and a window that holds or misses a whole polygon takes its transmitted fraction
 * or 0 without clipping. Each node must still give what the collimator geometry of src/engine/geometry.ts gives when
 * every strip and window is clipped at that speed (transmit, fractionInside), on a sub-beam deflected along both axes
 * whose slow speeds a strip clips and whose fast ones it does not.
 */
import { describe, expect, it } from 'vitest';
import { fineGeometry, type FinePath } from '../../src/engine/subbeam.ts';
import { PLANE, clipped, others, own, track } from '../fixtures/deflected-subbeam.ts';

const speeds = Array.from({ length: 40 }, (_, i) => 300 + (1700 * i) / 39);

const f: FinePath = {
  system: 'test', fraction: 1, dist: { kind: 'fixed', speed: 1000 }, path: ['M'], target: 'D1', plane: PLANE, yieldSpin: 1, track,
  grid: { speeds: Float64Array.from(speeds), weights: Float64Array.from(speeds, () => 1 / speeds.length), traces: Float64Array.from(speeds, () => 1) },
  detector: own,
};

describe('the detector plane\'s speed nodes', () => {
  it('give each speed the transmitted and captured fractions of the collimator geometry clipped at that speed', () => {
    const g = fineGeometry(f, 24, others);
    let T = 0, clippedSpeeds = 0;
    const caught = new Map<string, number>([['D1', 0], ['D2', 0], ['D3', 0]]);
    for (const v of speeds) {
      const c = clipped(v);
      if (c.clips) clippedSpeeds++;
      T += c.t / speeds.length;
      ['D1', 'D2', 'D3'].forEach((id, w) => caught.set(id, caught.get(id)! + c.captured[w] / speeds.length));
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
