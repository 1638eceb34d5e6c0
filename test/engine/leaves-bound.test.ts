/** The bound on the paths a run follows (src/engine/leaf.ts MAX_LEAVES): refused with the reason, not out of memory. */
import { describe, expect, it } from 'vitest';
import { runDocumentText } from '../../src/engine/index.ts';
import { MAX_LEAVES } from '../../src/engine/leaf.ts';

function chain(n: number): string {
  const elements: unknown[] = [];
  for (let i = 0; i < n; i++) {
    const next = i === n - 1 ? ['D1', 'D2'] : [`M${i + 1}`, `M${i + 1}`];
    elements.push({ id: `M${i}`, kind: 'magnet', axis: { roll: `${(i * 37) % 180} deg` }, ports: { '+1/2': next[0], '-1/2': next[1] } });
  }
  elements.push({ id: 'D1', kind: 'detector' }, { id: 'D2', kind: 'detector' });
  return JSON.stringify({
    format: 'spinyard.beamline', version: 1, species: { spin: '1/2', g: 2.0023, mass: '107 u' },
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '500 m/s' }, to: 'M0' }, elements,
  });
}

describe('the bound on paths', () => {
  it('refuses 18 magnets that route both ports onward (2^18 paths) with the reason, and runs 12 (4096 paths)', () => {
    expect(2 ** 18).toBeGreaterThan(MAX_LEAVES);
    const r = runDocumentText(chain(18));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems[0]).toMatch(/more than 20,000 paths to follow .* route the ports you do not measure to "stop"/);
    const ok = runDocumentText(chain(12));
    expect(ok.ok).toBe(true);
    if (ok.ok) expect(ok.result.leaves.length).toBe(4096);
  });
});
