// The detector-plane view: detectors grouped by their plane, each sub-beam's band from its profile's central 90 %.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDocument, runEngine } from '../../src/app/core-adapter.ts';
import { detectorPlanes, profileInterval } from '../../src/app/plane-view.ts';

function run(name: string) {
  const r = readDocument(readFileSync(join(import.meta.dirname, '..', '..', 'samples', name), 'utf8'));
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
  return { line: r.line, result: runEngine(r.line) };
}

describe('profileInterval', () => {
  it('gives the 5 % and 95 % quantiles of a uniform profile over [−0.5, 9.5]: 0 and 9', () => {
    const pos = Array.from({ length: 10 }, (_, i) => i);
    const [a, b] = profileInterval(pos, pos.map(() => 0.1))!;
    expect(a).toBeCloseTo(0, 12);
    expect(b).toBeCloseTo(9, 12);
  });
  it('follows the flux: a profile with all of it in one bin has its band inside that bin', () => {
    const [a, b] = profileInterval([0, 1, 2, 3], [0, 0, 1, 0])!;
    expect(a).toBeCloseTo(1.55, 12);
    expect(b).toBeCloseTo(2.45, 12);
  });
  it('has no interval for an empty profile', () => {
    expect(profileInterval([], [])).toBeUndefined();
    expect(profileInterval([0, 1], [0, 0])).toBeUndefined();
  });
});

describe('detectorPlanes', () => {
  it('puts bench H\'s four collectors, 40 cm behind M2, in one plane', () => {
    const { line, result } = run('bench-h-rb87-mj-then-eigenstate.spinyard');
    const planes = detectorPlanes(result, line.elements);
    expect(planes).toHaveLength(1);
    expect(planes[0].detectors).toEqual(['D1', 'D2', 'D3', 'D4']);
    expect(planes[0].windows.map((w) => w.id)).toEqual(['D1', 'D2', 'D3', 'D4']);
    expect(planes[0].plane).toBeCloseTo(1.0, 9);
  });
  it('draws an effusive sub-beam as the band holding 90 % of its profile along the deflection, lopsided toward the slow atoms\' tail (not a symmetric ± rms)', () => {
    const { line, result } = run('bench-h-rb87-mj-then-eigenstate.spinyard');
    const [plane] = detectorPlanes(result, line.elements);
    const b = plane.beams.find((x) => x.target === 'D1')!;
    expect(b.bandFrom.z).toBe('profile');
    const p = b.profile!;
    const w = p.positions[1] - p.positions[0];
    // the flux inside the band, summed over the bins (the band's edges fall inside bins: within one bin's flux)
    const inBand = p.positions.reduce((a, x, i) => a + (x >= b.band.z0 && x <= b.band.z1 ? p.density[i] * w : 0), 0);
    const total = p.density.reduce((a, d) => a + d * w, 0);
    const binMax = Math.max(...p.density) * w;
    expect(Math.abs(inBand / total - 0.9)).toBeLessThan((2 * binMax) / total);
    // the slow atoms are deflected furthest (down, for D1): the band reaches further below the mean than above it
    expect((b.mean.z - b.band.z0) / (b.band.z1 - b.mean.z)).toBeGreaterThan(1.3);
    // across the deflection (x) there is no profile: mean ± rms
    expect(b.bandFrom.x).toBe('rms');
  });
});
