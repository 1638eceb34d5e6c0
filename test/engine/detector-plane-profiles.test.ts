/**
 * The planning tools (scan, budget, fit) run the line with RunOptions.noProfiles: their results hold yields, rates,
 * counts ± σ, signals and captured fractions, never a profile, so the detector plane leaves out the leaves' profiles and
 * centre lines and the detectors' crosstalk and neighbours, and averages each sub-beam over the speeds for its own
 * window only (a plain run averages the other windows' shares on a grid of their own). Every other number must be the
 * one of a plain run, bit for bit (a scan point equals a plain run of the line at that set-point); the quadrature's
 * count of speeds is the lean run's own, and the warning about what the spreads and profiles leave out is not said.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, type Plan } from '../../src/engine/plan.ts';
import type { RunResult } from '../../src/engine/result.ts';
import { SLOWEST_ATOMS_WARNING } from '../../src/engine/detector-plane.ts';

function planOf(sample: string): Plan {
  const c = compile(readFileSync(new URL(`../../samples/${sample}.spinyard`, import.meta.url), 'utf8'));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

/** A plain run's result without what noProfiles leaves out. */
function withoutProfiles(r: RunResult): RunResult {
  return {
    ...r,
    leaves: r.leaves.map(({ profile: _p, centreLine: _c, displacement: _d, spread: _s, ...l }) => l),
    detectors: r.detectors.map(({ crosstalk: _x, neighbours: _n, ...d }) => d),
    warnings: r.warnings.filter((w) => w !== SLOWEST_ATOMS_WARNING),
  };
}

describe('the detector plane without profiles', () => {
  const cases: [string, Record<string, number>][] = [
    ['bench-h-rb87-mj-then-eigenstate', {}],
    ['bench-h-rb87-mj-then-eigenstate', { 'M2.axis.roll': 0.6, 'M2.field': 0.012 }],
    ['bench-g-silver-split', { 'M1.axis.roll': 0.3 }],
    ['bench-f-mixed-detectors', {}],
    // nothing clips bench J's sub-beams: its displacements come from the exact moment, which a lean run does not take
    ['bench-j-cs-precession-coil', { 'M1.field': 0.45 }],
  ];
  for (const [sample, values] of cases) {
    it(`gives ${sample.slice(0, 7)} ${JSON.stringify(values)} every number of a plain run, bit for bit`, () => {
      const plan = planOf(sample);
      const full = evaluate(plan, values, { light: true });
      const lean = evaluate(plan, values, { light: true, noProfiles: true });
      // the lean run evaluates fewer speeds (its sub-beams' own windows only, not the other windows' shares): its
      // quadrature counts them; every number the planning tools report is the plain run's
      expect({ ...lean, quadrature: { ...lean.quadrature, nodes: 0, method: '' } }).toEqual({ ...withoutProfiles(full), quadrature: { ...full.quadrature, nodes: 0, method: '' } });
      expect(lean.quadrature!.nodes).toBeLessThanOrEqual(full.quadrature!.nodes);
      expect(lean.leaves.some((l) => l.profile || l.centreLine || l.displacement || l.spread)).toBe(false);
      expect(lean.detectors.some((d) => d.crosstalk || d.neighbours)).toBe(false);
    });
  }

  it('is a plain run\'s profiles and crosstalk where the line has them (the test above compares something)', () => {
    const full = evaluate(planOf('bench-h-rb87-mj-then-eigenstate'), {}, { light: true });
    expect(full.leaves.filter((l) => l.profile && l.centreLine).length).toBe(4);
    expect(full.detectors.every((d) => d.crosstalk && d.crosstalk.length === 3 && d.neighbours)).toBe(true);
    // the warning about the slowest atoms is a plain run's, beside its spreads and profiles, and not a lean run's
    expect(full.warnings).toContain(SLOWEST_ATOMS_WARNING);
    expect(evaluate(planOf('bench-h-rb87-mj-then-eigenstate'), {}, { light: true, noProfiles: true }).warnings).not.toContain(SLOWEST_ATOMS_WARNING);
  });
});
