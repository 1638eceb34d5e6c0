/**
 * The cost estimate made before a run (src/engine/cost.ts): every sample runs without asking; a line whose work is
 * out of proportion stops before its walk starts, naming the element that makes it expensive, unless told to go on;
 * beyond the refusal limits it stops either way. The estimate grows with what multiplies the work (magnets' routed
 * ports, RF entry phases, a field twist's speed-by-speed subtree).
 */
import { readFileSync, readdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseBeamlineText } from '../../src/beamline/index.ts';
import type { Beamline } from '../../src/beamline/types.ts';
import { ASK_SECONDS, CostLimitError, REFUSE_SECONDS, costLimit, estimateRun, formatBytes, formatSeconds, type CostEstimate } from '../../src/engine/cost.ts';
import { runLine } from '../../src/engine/run.ts';
import { compile } from '../../src/engine/plan.ts';
import { scan } from '../../src/engine/scan.ts';
import { speciesSystems } from '../../src/engine/system.ts';
import { bothPortsText, chainText, twistText } from '../fixtures/cost-lines.ts';

const SAMPLES = resolve(import.meta.dirname, '..', '..', 'samples');

function lineOf(text: string): Beamline {
  const r = parseBeamlineText(text);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('; '));
  return r.line;
}
/** The paths a run's walk ended, before the detector plane joins those of one route. */
function walkedPaths(line: Beamline): number {
  let n = -1;
  runLine(line, { onPaths: (p) => (n = p.length) });
  return n;
}
const estimate = (line: Beamline): CostEstimate => estimateRun(line, speciesSystems(line.species).map((s) => s.system.params));

/** Bench J with a field twist on M2's m_J = −1/2 port (test/fixtures/cost-lines.ts): speed by speed over the whole effusive beam. */
const withTwist = (velocity?: object): Beamline => lineOf(twistText(velocity));
/** Rb-87, n magnets each routing both m_J ports to the next (2^n paths). */
const bothPorts = (n: number): Beamline => lineOf(bothPortsText(n));

describe('the cost estimate before a run', () => {
  for (const f of readdirSync(SAMPLES).filter((x) => x.endsWith('.spinyard'))) {
    it(`${f} runs without asking, and the estimate counts its paths`, () => {
      const line = lineOf(readFileSync(resolve(SAMPLES, f), 'utf8'));
      const c = estimate(line);
      expect(c.seconds).toBeGreaterThan(0);
      expect(c.seconds).toBeLessThan(ASK_SECONDS / 10);
      expect(Number.isFinite(c.bytes) && c.bytes > 0).toBe(true);
      // the estimate follows the walk's routing: one sub-beam per path the walk ends (each sorted state, isotope and RF phase)
      expect(c.subBeams).toBe(walkedPaths(line));
    });
  }

  it('stops bench J with a field twist behind a sort before the walk, naming the twist and what to change', () => {
    const line = withTwist();
    const c = estimate(line);
    expect(c.seconds).toBeGreaterThan(ASK_SECONDS);
    expect(c.elementId).toBe('T1');
    let progress = 0;
    let err: unknown;
    try {
      runLine(line, { onProgress: () => progress++ });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(CostLimitError);
    const limit = err as CostLimitError;
    expect(limit.hard).toBe(false);
    expect(limit.message).toMatch(new RegExp(`^elements\\[${line.elements.length - 1}\\] \\(T1\\): this run would take about \\d+ (s|min)`));
    expect(limit.message).toMatch(/speed by speed/);
    expect(limit.message).toMatch(/--accept-cost/);
    expect(limit.estimate.elementId).toBe('T1');
    // nothing of the walk ran
    expect(progress).toBe(0);
  });

  it('stops a scan of that line before its first point (the document\'s line is estimated once, not at every point)', () => {
    const c = compile(twistText());
    if (!c.ok) throw new Error(c.problems.join('; '));
    let points = 0;
    expect(() => scan(c.plan, [{ name: 'C1.field.x', from: 0, to: 1e-6, points: 3 }], { onProgress: () => points++ })).toThrow(CostLimitError);
    expect(points).toBe(0);
  });

  it('lets the same twist run at a single speed without asking (its subtree once, not at every speed of the beam)', () => {
    const line = withTwist({ kind: 'fixed', speed: '250 m/s' });
    expect(estimate(line).seconds).toBeLessThan(ASK_SECONDS / 10);
    const r = runLine(line);
    expect(r.detectors.length).toBeGreaterThan(0);
  });

  it('grows with the paths: magnets routing both ports double the paths, and a long enough row is refused outright', () => {
    const e4 = estimate(bothPorts(4)), e8 = estimate(bothPorts(8));
    expect(e4.paths).toBe(16);
    expect(e8.paths).toBe(256);
    expect(e8.seconds).toBeGreaterThan(10 * e4.seconds);
    const e20 = estimate(bothPorts(20));
    expect(e20.seconds).toBeGreaterThan(REFUSE_SECONDS);
    const t0 = Date.now();
    let err: unknown;
    try {
      runLine(bothPorts(20), { acceptCost: true });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(CostLimitError);
    expect((err as CostLimitError).hard).toBe(true);
    expect((err as CostLimitError).message).toMatch(/beyond what the engine starts/);
    // refused before the walk: far below the seconds the walk of a million paths would take
    expect(Date.now() - t0).toBeLessThan(5000);
  });

  it('names the line, not one element, where the work is spread over a long chain of analysers', () => {
    const n = 400;
    const line = lineOf(chainText(n));
    const c = estimate(line);
    expect(c.paths).toBe(n + 1);
    expect(c.share).toBeLessThan(0.25);
    const limit = costLimit(c, false);
    expect(limit?.message).toMatch(/^the line: this run would take about \d+ (s|min) and \d+ MB \(401 paths\): the work is spread over the line's elements/);
  });

  it('counts an RF flipper once per entry phase, and once where its phase is locked', () => {
    const base = JSON.parse(readFileSync(resolve(SAMPLES, 'bench-c-roll-calibration.spinyard'), 'utf8'));
    const m = base.elements.findIndex((e: { kind: string }) => e.kind === 'magnet');
    const target = base.elements[m].to ?? Object.values(base.elements[m].ports)[0];
    const port = Object.keys(base.elements[m].ports)[0];
    const withRf = (phase?: string) => {
      const d = structuredClone(base);
      d.elements[m].ports[port] = 'RF1';
      d.elements.push({ id: 'RF1', kind: 'rf', gap: '2 cm', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm', to: target, ...(phase ? { phase } : {}) });
      return lineOf(JSON.stringify(d));
    };
    const free = estimate(withRf()), locked = estimate(withRf('0 deg'));
    expect(free.paths).toBeGreaterThan(locked.paths);
    expect(free.subBeams).toBe(walkedPaths(withRf()));
    expect(locked.subBeams).toBe(walkedPaths(withRf('0 deg')));
  });

  it('asks only above the ask limit, and refuses above the refusal limits whatever it is told', () => {
    const c = (seconds: number, bytes = 1e6): CostEstimate => ({ seconds, bytes, paths: 1, subBeams: 1, steps: 1, share: 1, element: 'elements[0] (M1)', elementId: 'M1', reason: 'a reason' });
    expect(costLimit(c(ASK_SECONDS / 2), false)).toBeNull();
    expect(costLimit(c(ASK_SECONDS * 2), false)?.hard).toBe(false);
    expect(costLimit(c(ASK_SECONDS * 2), true)).toBeNull();
    expect(costLimit(c(REFUSE_SECONDS * 2), true)?.hard).toBe(true);
    expect(costLimit(c(1, 1e10), true)?.hard).toBe(true);
    expect(costLimit(c(ASK_SECONDS * 2), false)?.message).toMatch(/^elements\[0\] \(M1\): this run would take about 20 s and 1 MB \(1 path\), mostly at elements\[0\] \(M1\): a reason/);
  });

  it('writes its times and memory as a person reads an estimate (the app\'s question uses the same words)', () => {
    expect([0.42, 9.5, 12.4, 219.6, 5400, 3 * 86400].map(formatSeconds)).toEqual(['0.42 s', '9.5 s', '12 s', '4 min', '1.5 h', '3 days']);
    expect([512, 4.2e6, 2.68e8, 2.15e9].map(formatBytes)).toEqual(['1 kB', '4 MB', '268 MB', '2.1 GB']);
  });

  it('reports the walk\'s progress rising to 1', () => {
    const line = lineOf(readFileSync(resolve(SAMPLES, 'bench-h-rb87-mj-then-eigenstate.spinyard'), 'utf8'));
    const seen: number[] = [];
    runLine(line, { onProgress: (f) => seen.push(f) });
    expect(seen.length).toBeGreaterThan(1);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
    expect(seen.at(-1)).toBe(1);
  });
});
