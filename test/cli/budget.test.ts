/** `spinyard budget`: the text, JSON, messages and -o. */
import { describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { sameInThreads, sameThroughBuilt } from '../fixtures/cli-threads.ts';
import { budgetCells } from '../../src/app/plan-view.ts';
import { ROUND_OFF_DERIVATIVE_NOTE } from '../../src/beamline/numbers.ts';
import type { BudgetResult } from '../../src/engine/index.ts';

const C = new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url).pathname;
const A = new URL('../../samples/bench-a-spin32-rotator.spinyard', import.meta.url).pathname;

describe('spinyard budget FILE', () => {
  it('prints the tolerances, each detector\'s first-order and Monte Carlo spread, and the ranked effects', () => {
    const out = runCli(['budget', C, '--draws', '200', '--workers', '1']);
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/M2\.axis\.roll\s+30 deg\s+±0\.5 deg uniform\s+0\.289 deg\s+central/);
    expect(out.stdout).toMatch(/^\s+D1\s+8\.397e8\s+4\.34e7 \(5\.2 %\)/m);
    // one notation down a column: D2's first-order σ is 2.75e5 beside D1's 4.34e7, never 275000
    expect(out.stdout).toMatch(/^\s+D2\s+4\.039e6\s+2\.75e5 \(6\.8 %\)/m);
    expect(out.stdout).toMatch(/Which tolerance moves which detector most/);
    expect(out.stdout).toMatch(/Monte Carlo: 200 draws, seed 1\./);
  });

  it('writes the ranked derivatives as the app\'s panel does: each unit in its own notation, an exact one ± 0 with the note', () => {
    const json = JSON.parse(runCli(['budget', C, '--draws', '0', '--json']).stdout) as BudgetResult;
    const text = runCli(['budget', C, '--draws', '0']).stdout;
    // the signal is linear in the flux: its derivative (a yield, no unit) is plain, its difference error round-off
    expect(text).toMatch(/^\s+D3\s+oven\.flux\s+0\.02813 ± 0\s/m);
    expect(text).toContain(ROUND_OFF_DERIVATIVE_NOTE);
    const cells = budgetCells(json).ranking;
    expect(cells.length).toBeGreaterThan(5);
    for (const c of cells) {
      const row = new RegExp(`^\\s+${c.detector}\\s+${c.tolerance.replace(/\./g, '\\.')}\\s+(.+?)\\s{2,}`, 'm').exec(text);
      expect(row?.[1], `${c.detector} ${c.tolerance}`).toBe(`${c.derivative} ± ${c.error}${c.per ? ` ${c.per}` : ''}`);
    }
  });

  it('gives JSON that repeats for a seed', () => {
    const a = runCli(['budget', C, '--draws', '100', '--seed', '9', '--json']);
    expect(JSON.parse(a.stdout).format).toBe('spinyard.budget');
    expect(runCli(['budget', C, '--draws', '100', '--seed', '9', '--json']).stdout).toBe(a.stdout);
  });

  it('names what is wrong', () => {
    for (const [argv, msg] of [
      [['budget', A], /no tolerances/],
      [['budget', C, '--draws', 'many'], /--draws: a whole number/],
      [['budget', C, '--seed', '-1'], /--seed: a whole number/],
      [['budget', C, '-o', C], /never written over its document/],
      [['budget', C, '--workers', '0'], /--workers: a whole number from 1 to 256, got "0"/],
    ] as [string[], RegExp][]) {
      const out = runCli(argv);
      expect(out.code, argv.join(' ')).toBe(2);
      expect(out.stderr).toMatch(msg);
    }
  });
});

describe('spinyard budget --workers N', () => {
  it('gives the same budget, byte for byte, in 1, 2 and 3 threads', async () => {
    // 5 tolerances × 4 steps and 40 draws, dealt out in chunks: the outcomes come back in their order
    await sameInThreads(['budget', C, '--draws', '40', '--seed', '3', '--json']);
  }, 240_000);

  it('does the same through the built command line (its worker module is built beside it)', () => {
    expect(JSON.parse(sameThroughBuilt(['budget', C, '--draws', '30', '--json'])).monteCarlo.draws).toBe(30);
  }, 240_000);
});
