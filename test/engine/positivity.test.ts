/**
 * The positivity check of an averaged state allows for what rounding the phases can do: a phase φ/v is known to
 * about ε·|φ/v|, so with phases of hundreds of radians an eigenvalue of a rank-one state sits at ±1e-13 of its
 * trace instead of 0. The line below (found by a random-line search: two RF flippers far from resonance around
 * two analysers, one speed) was reported as a non-positive state before the bound was allowed for.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { runDocumentText } from '../../src/engine/index.ts';

describe('positivity within the rounding of large phases', () => {
  it('a line with phases of hundreds of radians at one speed raises no invariant warning', () => {
    const r = runDocumentText(readFileSync(new URL('../fixtures/property/large-phases-at-one-speed.spinyard', import.meta.url), 'utf8'));
    if (!r.ok) throw new Error(r.problems.join('\n'));
    expect(r.result.invariants.positive).toBe(true);
    expect(r.result.warnings.filter((w) => w.startsWith('invariant'))).toEqual([]);
    expect(Math.abs(r.result.leaves.reduce((s, l) => s + l.yield, 0) + r.result.lost - 1)).toBeLessThanOrEqual(1e-12);
  });
});
