/**
 * The normalized line is frozen (src/beamline/check.ts): the engine keeps what it derives from a line by
 * identity, so a line changed in place would read stale results. A change is a new line (withParameter).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { validateBeamline } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { runLine, withParameter } from '../../src/engine/index.ts';

function sample(name: string): Beamline {
  const r = validateBeamline(JSON.parse(readFileSync(new URL(`../../samples/${name}`, import.meta.url), 'utf8')));
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
  return r.line;
}

describe('an immutable line', () => {
  it('refuses a change in place instead of giving stale yields', () => {
    const line = sample('bench-c-roll-calibration.spinyard');
    const m2 = line.elements.find((e) => e.id === 'M2')!;
    expect(Object.isFrozen(line) && Object.isFrozen(line.elements) && Object.isFrozen(m2)).toBe(true);
    expect(() => {
      (m2 as { axis: { x: number } }).axis.x = 1;
    }).toThrow(TypeError);
    expect(() => {
      (line.elements as unknown as unknown[]).push({});
    }).toThrow(TypeError);
  });

  it('runs A, B, A: the second A gives the first A\'s numbers bit for bit', () => {
    const a = sample('bench-c-roll-calibration.spinyard');
    const b = withParameter(a, 'M2', 'axis', { x: 1, y: 0, z: 0 });
    const first = JSON.stringify(runLine(a));
    const other = JSON.stringify(runLine(b));
    const again = JSON.stringify(runLine(a));
    expect(other).not.toBe(first);
    expect(again).toBe(first);
    // with M2 rolled to 90°, D1 (M1:+1/2 then M2:+1/2) gets ½ · cos²(90°/2) = 0.25, not the old line's 0.4665
    const d1 = (r: string) => (JSON.parse(r) as { detectors: { id: string; yield: number }[] }).detectors.find((d) => d.id === 'D1')!.yield;
    expect(d1(other)).toBeCloseTo(0.25, 12);
    expect(d1(first)).toBeCloseTo(0.4665, 4);
  });
});
