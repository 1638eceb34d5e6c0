/** The walk (src/engine/walk.ts) along a long chain: constant stack, and the rotations composed right. */
import { describe, expect, it } from 'vitest';
import { runDocumentText } from '../../src/engine/index.ts';

function chain(n: number): string {
  const elements: unknown[] = [{ id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'R0', '-1/2': 'stop' } }];
  for (let i = 0; i < n; i++) elements.push({ id: `R${i}`, kind: 'rotator', axis: { roll: '90 deg' }, angle: `${(i % 7) + 1} deg`, to: i === n - 1 ? 'M2' : `R${i + 1}` });
  elements.push({ id: 'M2', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } }, { id: 'D1', kind: 'detector' }, { id: 'D2', kind: 'detector' });
  return JSON.stringify({
    format: 'spinyard.beamline', version: 1, species: { spin: '1/2', g: 2.0023, mass: '107 u' },
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '500 m/s' }, to: 'M1' }, elements,
  });
}

describe('the walk', () => {
  it('runs a chain of 5000 rotators between two magnets (it once overflowed the stack at about 1500)', () => {
    const n = 5000;
    const r = runDocumentText(chain(n));
    if (!r.ok) throw new Error(r.problems.join('\n'));
    // rotations about one axis add: α = Σ angles; spin ½ along z after a rotation α about x: P(+) = cos²(α/2) (common practice)
    let total = 0;
    for (let i = 0; i < n; i++) total += (i % 7) + 1;
    const alpha = (total * Math.PI) / 180;
    expect(r.result.detectors.find((d) => d.id === 'D1')!.yield).toBeCloseTo(0.5 * Math.cos(alpha / 2) ** 2, 10);
    expect(r.result.detectors.find((d) => d.id === 'D2')!.yield).toBeCloseTo(0.5 * Math.sin(alpha / 2) ** 2, 10);
  });
});
