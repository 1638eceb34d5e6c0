/**
 * A row of a scan at once (src/engine/batch.ts): the points a scan forms from its row's first run equal a plain run of
 * the line at their values to 1e-14 (the words: "a scan point equals a plain run of the line with that
 * set-point, to 1e-14") — each yield and the lost fraction to 1e-14 of the oven's flux, each rate and signal to 1e-14 of
 * flux × efficiency, the counts to 1e-14 of flux × efficiency × dwell, σ as √ of such counts; the leaves, detectors
 * and warnings the same. Where the batch must not apply (a field twist, geometry on the detector plane, sub-beams) the
 * scan is the one it was, bit for bit.
 */
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, scan, type Plan, type ScanAxis, type ScanPoint, type ScanResult } from '../../src/engine/index.ts';
import { EvaluationSession } from '../../src/engine/replay.ts';
import type { RunResult } from '../../src/engine/result.ts';

const TOL = 1e-14;
const SAMPLES = new URL('../../samples/', import.meta.url);
const PEERS = new URL('../../../shared/peers/', import.meta.url);

function planOf(text: string): Plan {
  const c = compile(text);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

function sample(name: string): string {
  return readFileSync(new URL(name, SAMPLES), 'utf8');
}

/** The last magnet's roll (θ where its axis is written by θ), as the scans take it. */
function lastRoll(plan: Plan): string | undefined {
  const magnets = plan.line.elements.filter((e) => e.kind === 'magnet');
  const last = magnets[magnets.length - 1];
  if (!last) return undefined;
  return (plan.parameters.find((q) => q.name === `${last.id}.axis.roll`) ?? plan.parameters.find((q) => q.name === `${last.id}.axis.theta`))?.name;
}

/** Every way point p differs from a plain run r of its line (compiled anew: no object shared), beyond the tolerances above. */
function offBy(p: ScanPoint, plain: RunResult | string, plan: Plan, scanWarnings: readonly string[]): string[] {
  const out: string[] = [];
  if (typeof plain === 'string') return p.error === plain ? [] : [`error ${p.error} ≠ ${plain}`];
  if (p.error) return [`error ${p.error}`];
  const flux = plain.flux;
  const near = (what: string, a: number, b: number, scale: number) => {
    if (!(Math.abs(a - b) <= TOL * scale)) out.push(`${what}: ${a} ≠ ${b} (scale ${scale})`);
  };
  near('lost', p.lost!, plain.lost, 1);
  expect(p.leaves!.map((l) => `${l.path.join(' ')}→${l.target}`)).toEqual(plain.leaves.map((l) => `${l.path.join(' ')}→${l.target}`));
  const effOf = (id: string) => {
    const e = plan.line.elements.find((x) => x.id === id);
    return e?.kind === 'detector' ? e.efficiency : 1;
  };
  p.leaves!.forEach((l, i) => {
    const q = plain.leaves[i];
    near(`leaf ${i} yield`, l.yield, q.yield, 1);
    near(`leaf ${i} rate`, l.rate, q.rate, flux * effOf(l.target));
    if ((l.captured === undefined) !== (q.captured === undefined)) out.push(`leaf ${i} captured`);
    else if (l.captured !== undefined) near(`leaf ${i} captured`, l.captured, q.captured!, 1);
  });
  expect(p.detectors!.map((d) => d.id)).toEqual(plain.detectors.map((d) => d.id));
  p.detectors!.forEach((d, i) => {
    const q = plain.detectors[i], scale = flux * effOf(d.id), dwell = q.dwell;
    near(`${d.id} yield`, d.yield, q.yield, 1);
    near(`${d.id} rate`, d.rate, q.rate, scale);
    near(`${d.id} signal`, d.signal, q.signal, scale);
    near(`${d.id} counts`, d.counts, q.counts, scale * dwell);
    // σ = √counts: |√a − √b| = |a − b| / (√a + √b)
    const dc = TOL * scale * dwell;
    if (!(Math.abs(d.sigma - q.sigma) <= dc / Math.max(d.sigma + q.sigma, 1e-300) + 4e-16 * q.sigma)) out.push(`${d.id} sigma: ${d.sigma} ≠ ${q.sigma}`);
  });
  // a point's warnings are indices into the scan's list, in its order
  const mine = (p.warnings ?? []).map((i) => scanWarnings[i]);
  expect([...mine].sort()).toEqual(plain.warnings.filter((w) => !plan.warnings.includes(w)).sort());
  return out;
}

function plainRun(plan: Plan, values: Record<string, number>): RunResult | string {
  try {
    // as a scan runs its points: light (no table-resolution check, no velocity plot) and without profiles (nor the
    // warning about what the profiles leave out)
    return evaluate(plan, values, { light: true, noProfiles: true });
  } catch (err) {
    return (err as Error).message;
  }
}

/** The scan with the batch, its points each against a plain run; returns the session's counts. */
function agreesWithRuns(text: string, axes: ScanAxis[]): EvaluationSession['stats'] {
  const plan = planOf(text);
  const session = new EvaluationSession();
  const s = scan(plan, axes, { session });
  const plain = planOf(text);
  for (const p of s.points) {
    const values: Record<string, number> = {};
    s.parameters.forEach((q, k) => (values[q.name] = p.values[k]));
    expect(offBy(p, plainRun(plain, values), plain, s.warnings), `${text.slice(0, 0)}at ${JSON.stringify(values)}`).toEqual([]);
  }
  return session.stats;
}

const samples = readdirSync(SAMPLES).filter((f) => f.endsWith('.spinyard')).sort();

describe('a row of a scan at once', () => {
  it('W2 (W1 with M2 rolled): the map of field × roll, each point a plain run to 1e-14; all but the first run of each row batched', () => {
    if (!existsSync(new URL('w1.spinyard', PEERS))) return;
    const text = readFileSync(new URL('w1.spinyard', PEERS), 'utf8');
    const stats = agreesWithRuns(text, [
      { name: 'F1.field.x', from: 0, to: 20e-6, points: 4 },
      { name: 'M2.axis.roll', from: 0, to: Math.PI / 2, points: 9 },
    ]);
    // the first row runs twice (no record before its second point), every other row once
    expect(stats).toMatchObject({ plain: 1, recorded: 4, replayed: 0, batched: 4 * 9 - 5 });
  });

  for (const f of samples) {
    it(`${f}: the last magnet's roll, 1-D and under the first field set-point (2-D), each point a plain run`, () => {
      const text = sample(f);
      const plan = planOf(text);
      const roll = lastRoll(plan);
      if (!roll) return;
      const one = agreesWithRuns(text, [{ name: roll, from: 0, to: Math.PI, points: 9 }]);
      const field = plan.parameters.find((q) => q.dimension === 'field' && !q.name.startsWith(`${roll.split('.')[0]}.`));
      const two = field ? agreesWithRuns(text, [{ name: field.name, from: field.value / 2, to: 1.5 * field.value + 1e-6, points: 3 }, { name: roll, from: 0, to: Math.PI, points: 6 }]) : null;
      // where the batch applies at all, it applies to every row after its first run
      if (one.batched > 0) expect(one.batched).toBe(9 - 2);
      if (two && two.batched > 0) expect(two.batched).toBeGreaterThanOrEqual(3 * 6 - 3 - 2);
    });
  }

  it('the batch applies where the last analyser is an ideal sorter ending in detectors (bench C, bench A), and not behind a field twist (bench K) or on a detector plane with geometry (bench G, H)', () => {
    const batched = (f: string) => {
      const plan = planOf(sample(f));
      const session = new EvaluationSession();
      scan(plan, [{ name: lastRoll(plan)!, from: 0, to: Math.PI, points: 6 }], { session });
      return session.stats.batched;
    };
    expect(batched('bench-c-roll-calibration.spinyard')).toBe(4);
    expect(batched('bench-a-spin32-rotator.spinyard')).toBe(4);
    for (const f of ['bench-k-field-twist-passage.spinyard', 'bench-g-silver-split.spinyard', 'bench-h-rb87-mj-then-eigenstate.spinyard']) expect(batched(f), f).toBe(0);
  });

  it('where the batch does not apply the scan is the one it was, bit for bit; where it does, the same points to 1e-14', () => {
    const both = (f: string, axes: ScanAxis[]): [ScanResult, ScanResult] => {
      const a = scan(planOf(sample(f)), axes, { session: new EvaluationSession() });
      const b = scan(planOf(sample(f)), axes, { session: new EvaluationSession(), batchRows: false });
      return [a, b];
    };
    for (const f of ['bench-k-field-twist-passage.spinyard', 'bench-g-silver-split.spinyard']) {
      const plan = planOf(sample(f));
      const [a, b] = both(f, [{ name: lastRoll(plan)!, from: 0, to: Math.PI, points: 4 }]);
      expect(JSON.stringify(a)).toBe(JSON.stringify(b));
    }
    const [a, b] = both('bench-c-roll-calibration.spinyard', [{ name: 'M2.axis.roll', from: 0, to: Math.PI, points: 12 }]);
    expect(a.warnings).toEqual(b.warnings);
    expect(a.points.map((p) => p.warnings ?? [])).toEqual(b.points.map((p) => p.warnings ?? []));
    a.points.forEach((p, k) => p.detectors!.forEach((d, i) => expect(Math.abs(d.yield - b.points[k].detectors![i].yield)).toBeLessThanOrEqual(TOL)));
  });

  it('a value the reader refuses, inside a batched row, carries the same message as a plain run', () => {
    // bench C with its last magnet's field written (0.5 T), scanned through 0 to values the reader refuses
    const doc = JSON.parse(sample('bench-c-roll-calibration.spinyard')) as { elements: { id: string; field?: string }[] };
    doc.elements.find((e) => e.id === 'M3')!.field = '0.5 T';
    const text = JSON.stringify(doc);
    const stats = agreesWithRuns(text, [{ name: 'M3.field', from: 0.5, to: -0.5, points: 9 }]);
    expect(stats.batched).toBeGreaterThan(0);
    const s = scan(planOf(text), [{ name: 'M3.field', from: 0.5, to: -0.5, points: 9 }]);
    expect(s.points.filter((p) => p.error).length).toBeGreaterThan(0);
  });
});
