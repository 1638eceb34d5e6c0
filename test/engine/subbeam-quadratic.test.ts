/**
 * Between two kinks every edge of a sub-beam's polygons moves linearly in u = 1/v², so its transmitted fraction and each
 * window's fraction along an axis are quadratics in u (src/engine/subbeam.ts, intervalQuadratics): the detector plane reads
 * them at an interval's ends and middle and checks them at a fourth point. Against the collimator geometry of
 * src/engine/geometry.ts clipped speed by speed (transmit, fractionInside), on a sub-beam deflected along both axes whose
 * slow speeds a strip clips: the quadratics hold between the kinks to rounding, and an interval that spans kinks fails
 * its check (its nodes are then evaluated one by one).
 */
import { describe, expect, it } from 'vitest';
import { kinkIntervals, type FinePath } from '../../src/engine/subbeam.ts';
import { PLANE, clipped, others, own, track } from '../fixtures/deflected-subbeam.ts';

const f: FinePath = {
  system: 'test', fraction: 1, dist: { kind: 'effusive', a: 400 } as FinePath['dist'], path: ['M'], target: 'D1', plane: PLANE, yieldSpin: 1, track,
  detector: own,
};

describe('a sub-beam\'s fractions between its kinks', () => {
  const lo = 150, hi = 2000;

  /** The largest difference between the quadratics and the fractions clipped speed by speed, at 11 speeds inside each of the intervals given. */
  const worstIn = (q: ReturnType<typeof kinkIntervals>, cuts: number[]) => {
    let worst = 0;
    const ends = [lo, ...[...cuts].sort((a, b) => a - b), hi];
    for (let k = 0; k + 1 < ends.length; k++) {
      for (let i = 1; i < 12; i++) {
        const v = ends[k] + ((ends[k + 1] - ends[k]) * i) / 12;
        const got = q.at(v), want = clipped(v);
        worst = Math.max(worst, Math.abs(got.t - want.t), ...want.captured.map((c, w) => Math.abs(got.captured[w] - c)));
      }
    }
    return worst;
  };

  it('are the quadratics in 1/v² read at each interval\'s ends and middle, to rounding, each axis cut at its own kinks', () => {
    const q = kinkIntervals(f, others, lo, hi);
    // the case has kinks along both axes (strips and windows starting to clip), and every check holds
    expect(q.kinks.x.length).toBeGreaterThan(2);
    expect(q.kinks.z.length).toBeGreaterThan(2);
    expect([...q.x.direct, ...q.z.direct].every((d) => !d)).toBe(true);
    const caughtSomewhere = [0, 0, 0];
    for (let v = lo + 1; v < hi; v += 7) clipped(v).captured.forEach((c, w) => { caughtSomewhere[w] = Math.max(caughtSomewhere[w], c); });
    for (const c of caughtSomewhere) expect(c).toBeGreaterThan(1e-3);
    expect(worstIn(q, [...q.kinks.x, ...q.kinks.z])).toBeLessThan(1e-13);
  });

  it('fail the check where an interval spans a kink that changes them, and hold where it does not', () => {
    const { kinks } = kinkIntervals(f, others, lo, hi);
    // one interval from lo to hi on an axis: its quadratic is not the fractions' (they change shape at the kinks inside)
    const whole = kinkIntervals(f, others, lo, hi, { x: [], z: kinks.z });
    expect(whole.x.direct).toEqual([true]);
    expect(whole.z.direct.every((d) => !d)).toBe(true);
    // leaving out one kink at a time: the interval holding it fails its check, or its quadratics still hold there
    // (a kink of a window's polygon where that window catches nothing on either side changes nothing)
    let caught = 0, all = 0;
    for (const axis of ['x', 'z'] as const) {
      for (let i = 0; i < kinks[axis].length; i++) {
        const cuts = { ...kinks, [axis]: kinks[axis].filter((_, j) => j !== i) };
        const q = kinkIntervals(f, others, lo, hi, cuts);
        const k = q[axis].pa.filter((a) => a <= kinks[axis][i]).length - 1;
        expect(q[axis].direct.filter((d, j) => d && j !== k), `${axis} kink ${i}`).toEqual([]);
        all++;
        if (q[axis].direct[k]) caught++;
        else expect(worstIn(q, [...cuts.x, ...cuts.z]), `${axis} kink ${i} at ${kinks[axis][i]} m/s`).toBeLessThan(1e-13);
      }
    }
    expect(caught).toBeGreaterThan(all / 2);
  });
});
