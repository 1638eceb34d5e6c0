/**
 * Workload W2 of the shared performance peers (../shared/peers/README.md, "W2"): W1's line with M2 rolled, a 100 × 100
 * map over F1.field.x and M2.axis.roll by the engine's 2-D scan (bench/w2.ts), against the NumPy peer's
 * w2-expected.json to 1e-6, and its b = 0 row against the no-precession closed form (7 + cos¹⁶(α/2))/16 and
 * (1 − cos¹⁶(α/2))/16 (the sum of |d⁴_{m′m}(α)|² over the eight kept states, every row of d⁴ a unit vector). Not
 * timed: `npm run bench -- w2` times it. Where the peers are not beside the checkout (the CI machine), the test is
 * skipped and says why.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { w2Map, type W2Expected } from '../../bench/w2.ts';

const peersDir = fileURLToPath(new URL('../../../shared/peers/', import.meta.url));
const present = existsSync(`${peersDir}w2-expected.json`) && existsSync(`${peersDir}w1.spinyard`);
if (!present) console.log(`W2 test skipped: the shared performance peers (w1.spinyard, w2-expected.json) are not in ${peersDir} on this machine`);

describe('W2: the engine\'s 100 × 100 map over the field and M2\'s roll', () => {
  it.skipIf(!present)('equals w2-expected.json to 1e-6, each cell sums to ½, and the b = 0 row is the closed form', () => {
    const expected = JSON.parse(readFileSync(`${peersDir}w2-expected.json`, 'utf8')) as W2Expected;
    const { result, maxdiff } = w2Map(peersDir, expected);
    expect(result).toHaveLength(100);
    expect(result.every((row) => row.length === 100)).toBe(true);
    expect(maxdiff).toBeLessThanOrEqual(1e-6);
    let sumErr = 0, closedErr = 0;
    for (const row of result) for (const [d1, d2] of row) sumErr = Math.max(sumErr, Math.abs(d1 + d2 - 0.5));
    expected.alpha_deg.forEach((a, j) => {
      const c16 = Math.cos((a * Math.PI) / 360) ** 16;
      closedErr = Math.max(closedErr, Math.abs(result[0][j][0] - (7 + c16) / 16), Math.abs(result[0][j][1] - (1 - c16) / 16));
    });
    expect(sumErr).toBeLessThan(1e-9);
    expect(closedErr).toBeLessThan(1e-9);
  }, 300_000);
});

describe('a 2-D scan as W2 runs it: each point is a plain run at its set-points (src/engine/scan.ts)', () => {
  const doc = (): Record<string, unknown> => JSON.parse(readFileSync(new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url), 'utf8'));
  // to 1e-14 of the flux the detector can count (flux × efficiency): a point a scan forms as a batch (src/engine/batch.ts)
  // carries the rounding of Tr(P ρ̄), an absolute ~1e-17 of the oven's flux, which a small yield shows as a relative 1e-14
  const close = (a: number, b: number, scale: number) => Math.abs(a - b) <= 1e-14 * scale;

  it('every point equals a plain run at its set-points, for parameters in two elements and in one', async () => {
    const { compile, evaluate, scan } = await import('../../src/engine/index.ts');
    const c = compile(doc());
    if (!c.ok) throw new Error(c.problems.join('\n'));
    for (const axes of [
      [{ name: 'M2.axis.roll', from: 0, to: 1.5, points: 4 }, { name: 'M3.axis.roll', from: 0.2, to: 3, points: 5 }],
      [{ name: 'oven.flux', from: 1e6, to: 1e9, points: 3, spacing: 'log' as const }, { name: 'M2.axis.roll', from: 0, to: 3, points: 4 }],
      [{ name: 'M2.axis.roll', from: 0, to: 1.5, points: 3 }, { name: 'M2.gap', from: 0, to: 0.2, points: 3 }],
    ]) {
      const s = scan(c.plan, axes);
      expect(s.points).toHaveLength(axes[0].points * axes[1].points);
      for (const p of s.points) {
        const plain = evaluate(c.plan, { [axes[0].name]: p.values[0], [axes[1].name]: p.values[1] });
        const eff = (id: string) => (c.plan.line.elements.find((e) => e.id === id) as { efficiency: number }).efficiency;
        p.detectors!.forEach((d, i) => expect(close(d.rate, plain.detectors[i].rate, plain.flux * eff(d.id)), `${axes[0].name} × ${axes[1].name} at ${p.values}`).toBe(true));
      }
    }
  });

  it('a refused value names its parameter at the points it reaches, the others run', async () => {
    const { compile, scan } = await import('../../src/engine/index.ts');
    const c = compile(doc());
    if (!c.ok) throw new Error(c.problems.join('\n'));
    const s = scan(c.plan, [{ name: 'M2.axis.roll', from: 0, to: 1, points: 2 }, { name: 'D1.efficiency', from: 0.5, to: 1.5, points: 3 }]);
    expect(s.points.filter((p) => p.error)).toHaveLength(2);
    expect(s.points.find((p) => p.error)!.error).toMatch(/D1\.efficiency/);
    expect(s.points.filter((p) => p.detectors)).toHaveLength(4);
  });
});
