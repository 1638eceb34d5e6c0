// Asking before an expensive run: the engine's refusal by its cost estimate (CostLimitError) as the worker posts it,
// the question's words, and the live run and the planning requests answering with the estimate (engine-serve.ts,
// plan-serve.ts), run in Node as the worker runs them. The lines are the engine's own cost fixtures (test/fixtures/cost-lines.ts).
import { describe, expect, it } from 'vitest';
import { asksFirst, costOf, costSentence, costTitle } from '../../src/app/cost-ask.ts';
import { checkRunCost, CostLimitError, readDocument, RunError, type Beamline } from '../../src/app/core-adapter.ts';
import { serveEngineRequest } from '../../src/app/engine-serve.ts';
import { createPlanServer } from '../../src/app/plan-serve.ts';
import { createEngineFeed } from '../../src/app/engine-feed.ts';
import type { EngineReply, PlanReply, PlanRequest } from '../../src/app/engine-protocol.ts';
import { bothPortsText, twistText } from '../fixtures/cost-lines.ts';

const lineOf = (text: string): Beamline => {
  const r = readDocument(text);
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('; '));
  return r.line;
};

/** The error runLine throws for `line` (the estimate only: checkRunCost). */
function refusal(line: Beamline, accept = false): CostLimitError {
  try {
    checkRunCost(line, accept);
  } catch (e) {
    if (e instanceof CostLimitError) return e;
    throw e;
  }
  throw new Error('the line was not refused');
}

describe('the engine\'s refusal by cost, as the app asks about it', () => {
  it('posts the estimate of bench J with a field twist: minutes, not hard, naming the twist', () => {
    const e = refusal(lineOf(twistText()));
    const c = costOf(e)!;
    expect(c.hard).toBe(false);
    expect(asksFirst(c)).toBe(true);
    expect(c.estimate.seconds).toBeGreaterThan(10);
    expect(c.estimate.element).toMatch(/\(T1\)$/);
    expect(c.estimate.elementId).toBe('T1');
    expect(c.estimate.message).toBe(e.message);
    // plain data: it crosses to the renderer as a structured clone
    expect(structuredClone(c)).toEqual(c);
    expect(costTitle('run')).toBe('Run this line?');
    const s = costSentence('run', c.estimate);
    expect(s).toMatch(/^This run would take about \d+(\.\d+)? (s|min) and [\d.]+ (kB|MB|GB) of memory because of elements\[\d+\] \(T1\): .*speed by speed/);
    expect(s).not.toMatch(/NaN|undefined/);
    expect(costSentence('scan', c.estimate)).toMatch(/^Each point of this scan would take about/);
  });

  it('a line beyond the hard limit is refused even with acceptCost, and is not asked about', () => {
    const c = costOf(refusal(lineOf(bothPortsText(20)), true))!;
    expect(c.hard).toBe(true);
    expect(asksFirst(c)).toBe(false);
    expect(asksFirst(undefined)).toBe(false);
    // checkRunCost leaves a line under the limits alone, and any other refusal to the run itself
    expect(() => checkRunCost(lineOf(bothPortsText(3)), false)).not.toThrow();
    expect(costOf(new RunError('something else'))).toBeUndefined();
    expect(costOf({ estimate: { seconds: 'soon' }, hard: false })).toBeUndefined();
  });

});

describe('the live run refused by cost', () => {
  it('answers with the message and the estimate; acceptCost lifts the ask limit, not the hard one', () => {
    const replies: EngineReply[] = [];
    serveEngineRequest({ seq: 5, line: lineOf(twistText()) }, (m) => replies.push(m));
    // refused before any work: no progress
    expect(replies).toHaveLength(1);
    const r = replies[0];
    if (r.type !== 'error') throw new Error(`expected a refusal, got ${r.type}`);
    expect(r.cost?.hard).toBe(false);
    expect(r.message).toMatch(/T1/);
    serveEngineRequest({ seq: 6, line: lineOf(bothPortsText(20)), acceptCost: true }, (m) => replies.push(m));
    expect(replies[1]).toMatchObject({ type: 'error', seq: 6, cost: { hard: true } });
    // a line below the limit runs with or without acceptCost, to the same result
    serveEngineRequest({ seq: 7, line: lineOf(bothPortsText(3)) }, (m) => replies.push(m));
    serveEngineRequest({ seq: 8, line: lineOf(bothPortsText(3)), acceptCost: true }, (m) => replies.push(m));
    const [a, b] = replies.slice(2).filter((m) => m.type !== 'progress');
    if (a.type !== 'result' || b.type !== 'result') throw new Error('expected two results');
    expect(JSON.stringify(b.result)).toBe(JSON.stringify(a.result));
  });

  it('"Run anyway" sends the line sent last again, as a new request with acceptCost', () => {
    const sent: [number, Beamline, boolean | undefined][] = [];
    const seqs: number[] = [];
    const feed = createEngineFeed((seq, line, accept) => sent.push([seq, line, accept]), (s) => seqs.push(s));
    expect(feed.runAnyway()).toBe(false);
    const doc = readDocument(twistText());
    if (!doc.ok) throw new Error('twist');
    feed.send(doc.doc);
    expect(feed.runAnyway()).toBe(true);
    expect(sent.map(([s, , a]) => [s, a])).toEqual([[1, undefined], [2, true]]);
    expect(sent[1][1]).toBe(sent[0][1]);
    expect(seqs).toEqual([1, 2]);
  });
});

describe('planning requests refused by cost', () => {
  const text = twistText();
  const axes = [{ name: 'D1.efficiency', from: 0.5, to: 0.9, points: 5, spacing: 'linear' as const }];
  const requests: [string, PlanRequest][] = [
    ['a scan', { kind: 'scan', seq: 1, text, axes }],
    ['a block of a scan', { kind: 'scan', seq: 2, text, axes, block: { start: 2, end: 5 } }],
    ['a budget', { kind: 'budget', seq: 3, text, draws: 10, seed: 1 }],
    ['a simulated run', { kind: 'simulate', seq: 4, text, atoms: 1000, seed: 1 }],
    ['a fit', { kind: 'fit', seq: 5, text, csv: 'detector,counts,D1.efficiency\nD1,100,0.9\n', fileName: 'counts.csv', free: [{ name: 'oven.flux' }], state: false }],
  ];
  it.each(requests)('%s answers with the estimate before any work', async (_what, req) => {
    const replies: PlanReply[] = [];
    const s = createPlanServer((m) => replies.push(m));
    const t0 = Date.now();
    await s.handle(req);
    expect(Date.now() - t0).toBeLessThan(5000);
    const r = replies.at(-1)!;
    if (r.type !== 'plan-error') throw new Error(`expected a refusal, got ${JSON.stringify(r).slice(0, 300)}`);
    expect(r.seq).toBe(req.seq);
    expect(r.cost?.hard).toBe(false);
    expect(r.cost?.estimate.elementId).toBe('T1');
    expect(replies.some((m) => m.type === 'plan-progress')).toBe(false);
  });

  it('with acceptCost the scan goes past the estimate (and stops at a cancel before its first point)', async () => {
    const replies: PlanReply[] = [];
    const box: { s?: ReturnType<typeof createPlanServer> } = {};
    const s = createPlanServer((m) => replies.push(m), { sliceMs: 0, pause: async () => void (await box.s!.handle({ kind: 'cancel', seq: 9 })) });
    box.s = s;
    await s.handle({ kind: 'scan', seq: 9, text, axes, acceptCost: true });
    expect(replies).toEqual([{ type: 'plan-cancelled', seq: 9 }]);
  });
});
