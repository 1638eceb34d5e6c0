import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { BUDGET_SHARE_FROM, createPlanClient, type PlanAnswer, type PlanJob, type PlanStatus } from '../../src/app/plan-client.ts';
import { createPlanServer } from '../../src/app/plan-serve.ts';
import { scanBlocks } from '../../src/app/scan-blocks.ts';
import type { WorkerLike } from '../../src/app/engine-client.ts';
import type { PlanReply, PlanRequest } from '../../src/app/engine-protocol.ts';

function fakeWorkers() {
  const made: (WorkerLike & { posted: PlanRequest[]; terminated: boolean; reply(m: PlanReply): void })[] = [];
  const make = () => {
    const w = {
      posted: [] as PlanRequest[],
      terminated: false,
      onmessage: null as WorkerLike['onmessage'],
      onerror: null as WorkerLike['onerror'],
      postMessage(m: unknown) {
        this.posted.push(m as PlanRequest);
      },
      terminate() {
        this.terminated = true;
      },
      reply(m: PlanReply) {
        this.onmessage?.({ data: m } as unknown as MessageEvent);
      },
    };
    made.push(w);
    return w;
  };
  return { made, make };
}

const scanJob = { kind: 'scan' as const, text: '{}', axes: [{ name: 'M2.axis.roll', from: 0, to: 1, points: 3, spacing: 'linear' as const }] };
const budgetJob = { kind: 'budget' as const, text: '{}', draws: 100, seed: 3 };
const scanResult = { format: 'spinyard.scan', version: 1, title: 't', parameters: [], detectors: [], points: [], warnings: [] } as never;

afterEach(() => vi.useRealTimers());

describe('createPlanClient', () => {
  it('posts a scan with its text and axes, reports progress and hands over the result', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const statuses: PlanStatus[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), (s) => statuses.push(s));
    const seq = c.start({ ...scanJob, title: 'roll' });
    expect(made[0].posted).toEqual([{ kind: 'scan', seq, text: '{}', axes: scanJob.axes, title: 'roll' }]);
    expect(statuses.at(-1)).toMatchObject({ running: true, kind: 'scan', progress: 0 });
    made[0].reply({ type: 'plan-progress', seq, fraction: 0.5 });
    expect(statuses.at(-1)!.progress).toBe(0.5);
    made[0].reply({ type: 'scan-result', seq, result: scanResult, ms: 12 });
    expect(answers).toEqual([{ seq, kind: 'scan', result: scanResult, ms: 12, workers: 1 }]);
    expect(statuses.at(-1)!.running).toBe(false);
  });

  it('a new request replaces a running one: the old worker is terminated and its late answers ignored', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {});
    const first = c.start(scanJob);
    const second = c.start(budgetJob);
    expect(made[0].terminated).toBe(true);
    expect(made[1].posted).toEqual([{ kind: 'budget', seq: second, text: '{}', draws: 100, seed: 3 }]);
    made[0].reply({ type: 'scan-result', seq: first, result: scanResult, ms: 1 });
    expect(answers).toEqual([]);
    made[1].reply({ type: 'plan-error', seq: second, message: 'budget: the line has no tolerances' });
    expect(answers).toEqual([{ seq: second, kind: 'budget', error: 'budget: the line has no tolerances', job: budgetJob }]);
  });

  it('cancel asks the worker to stop a scan and keeps the worker when it answers', () => {
    vi.useFakeTimers();
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const statuses: PlanStatus[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), (s) => statuses.push(s), 400);
    const seq = c.start(scanJob);
    c.cancel();
    expect(made[0].posted.at(-1)).toEqual({ kind: 'cancel', seq });
    expect(statuses.at(-1)!.cancelling).toBe(true);
    made[0].reply({ type: 'plan-cancelled', seq });
    expect(answers).toEqual([{ seq, kind: 'scan', cancelled: true }]);
    vi.advanceTimersByTime(1000);
    expect(made[0].terminated).toBe(false);
    expect(answers).toHaveLength(1);
    c.start(scanJob);
    expect(made).toHaveLength(1); // the same worker, with its compiled document
  });

  it('terminates the worker when a cancelled scan does not answer in time, and at once for a budget', () => {
    vi.useFakeTimers();
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {}, 400);
    const seq = c.start(scanJob);
    c.cancel();
    vi.advanceTimersByTime(399);
    expect(made[0].terminated).toBe(false);
    vi.advanceTimersByTime(1);
    expect(made[0].terminated).toBe(true);
    expect(answers).toEqual([{ seq, kind: 'scan', cancelled: true }]);
    const b = c.start(budgetJob);
    expect(made).toHaveLength(2);
    c.cancel();
    expect(made[1].terminated).toBe(true);
    expect(answers.at(-1)).toEqual({ seq: b, kind: 'budget', cancelled: true });
  });

  it('shares a long budget out, sends every share\'s outcomes in order to the first worker, and ends every share on cancel', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {}, 400, 3);
    const job = { ...budgetJob, draws: 500, acceptCost: true };
    const seq = c.start(job);
    expect(made.map((w) => w.posted)).toEqual([0, 1, 2].map((index) => [{ kind: 'budget', seq, text: '{}', draws: 500, seed: 3, share: { index, count: 3 }, acceptCost: true }]));
    // the shares answer out of order; the outcomes go to the first worker in the order of the shares
    made[2].reply({ type: 'budget-block', seq, share: { index: 2, count: 3 }, outcomes: [[5], 'refused'], ms: 1 });
    made[0].reply({ type: 'budget-block', seq, share: { index: 0, count: 3 }, outcomes: [[1], [2]], ms: 1 });
    expect(made[0].posted).toHaveLength(1);
    made[1].reply({ type: 'budget-block', seq, share: { index: 1, count: 3 }, outcomes: [[3], [4]], ms: 1 });
    expect(made[0].posted.at(-1)).toEqual({ kind: 'budget-finish', seq, text: '{}', draws: 500, seed: 3, outcomes: [[1], [2], [3], [4], [5], 'refused'], acceptCost: true });
    const result = { format: 'spinyard.budget' } as never;
    made[0].reply({ type: 'budget-result', seq, result, ms: 1 });
    expect(answers).toEqual([{ seq, kind: 'budget', result, ms: expect.any(Number), workers: 3 }]);
    // a cancel ends every share still running at once
    const again = c.start(job);
    made[1].reply({ type: 'budget-block', seq: again, share: { index: 1, count: 3 }, outcomes: [[3]], ms: 1 });
    c.cancel();
    expect(made.map((w) => w.terminated)).toEqual([true, false, true]);
    expect(answers.at(-1)).toEqual({ seq: again, kind: 'budget', cancelled: true });
  });

  it('a refusal by the engine\'s cost estimate comes with the estimate and the request, to start again with acceptCost', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {});
    const seq = c.start(budgetJob);
    const cost = { hard: false, estimate: { seconds: 140, bytes: 2e6, element: 'elements[5] (T1)', message: 'elements[5] (T1): this run would take about 2 min' } };
    made[0].reply({ type: 'plan-error', seq, message: cost.estimate.message, cost });
    expect(answers).toEqual([{ seq, kind: 'budget', error: cost.estimate.message, cost, job: budgetJob }]);
    const again = c.start({ ...budgetJob, acceptCost: true });
    expect(made[0].posted.at(-1)).toEqual({ kind: 'budget', seq: again, text: '{}', draws: 100, seed: 3, acceptCost: true });
  });

  it('a worker that fails answers the request with an error, and the next request gets a fresh worker', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {});
    const seq = c.start(budgetJob);
    made[0].onerror?.({ message: 'out of memory', preventDefault() {} } as ErrorEvent);
    expect(answers).toEqual([{ seq, kind: 'budget', error: 'the engine stopped: out of memory', job: budgetJob }]);
    c.start(budgetJob);
    expect(made).toHaveLength(2);
  });
});

// ---------------------------------------------------------------- a scan on a pool of workers

const scan10 = { kind: 'scan' as const, text: '{}', axes: [{ name: 'M2.axis.roll', from: 0, to: 1, points: 10, spacing: 'linear' as const }] };
const head = { format: 'spinyard.scan', version: 1, title: 't', parameters: [], detectors: ['D1'], points: [], warnings: [] } as never;
const point = (k: number, warningTexts?: string[]) => ({ index: [k], values: [k], lost: 0, ...(warningTexts ? { warningTexts } : {}) });
const range = (a: number, b: number) => Array.from({ length: b - a }, (_, i) => a + i);

describe('createPlanClient with a pool', () => {
  it('deals a scan out in blocks, sums the progress by points and merges the blocks in scan order', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const statuses: PlanStatus[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), (s) => statuses.push(s), 400, 3);
    const seq = c.start({ ...scan10, title: 'roll', acceptCost: true });
    expect(made).toHaveLength(3);
    expect(made.map((w) => w.posted)).toEqual([0, 1, 2].map((i) => [{
      kind: 'scan', seq, text: '{}', axes: scan10.axes, title: 'roll', block: [{ start: 0, end: 4 }, { start: 4, end: 8 }, { start: 8, end: 10 }][i], acceptCost: true,
    }]));
    expect(statuses.at(-1)).toMatchObject({ running: true, workers: 3, progress: 0 });
    made[0].reply({ type: 'plan-progress', seq, fraction: 0.5 });
    made[2].reply({ type: 'plan-progress', seq, fraction: 1 });
    expect(statuses.at(-1)!.progress).toBeCloseTo((0.5 * 4 + 1 * 2) / 10, 15);
    // the blocks answer out of order; the result waits for all of them
    made[2].reply({ type: 'scan-block', seq, block: { start: 8, end: 10 }, head, points: [point(8, ['late']), point(9)], ms: 1 });
    made[0].reply({ type: 'scan-block', seq, block: { start: 0, end: 4 }, head, points: range(0, 4).map((k) => point(k, k === 3 ? ['early'] : undefined)), ms: 1 });
    expect(answers).toEqual([]);
    made[1].reply({ type: 'scan-block', seq, block: { start: 4, end: 8 }, head, points: range(4, 8).map((k) => point(k, k === 4 ? ['late', 'early'] : undefined)), ms: 1 });
    expect(answers).toHaveLength(1);
    const a = answers[0] as PlanAnswer & { kind: 'scan'; result: { points: { index: number[]; warnings?: number[] }[]; warnings: string[] } };
    expect(a).toMatchObject({ seq, kind: 'scan', workers: 3 });
    expect(a.result.points.map((p) => p.index[0])).toEqual(range(0, 10));
    expect(a.result.warnings).toEqual(['early', 'late']);
    expect(a.result.points[4].warnings).toEqual([0, 1]);
    expect(a.result.points[8].warnings).toEqual([1]);
    expect(statuses.at(-1)).toMatchObject({ running: false });
  });

  it('cancel stops every block: the answer comes once all of them stopped, or the busy ones are ended after the grace', () => {
    vi.useFakeTimers();
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {}, 400, 2);
    const seq = c.start(scan10);
    made[0].reply({ type: 'scan-block', seq, block: { start: 0, end: 5 }, head, points: range(0, 5).map((k) => point(k)), ms: 1 });
    c.cancel();
    // the block that finished is not asked; the other is
    expect(made[0].posted.at(-1)).toMatchObject({ kind: 'scan' });
    expect(made[1].posted.at(-1)).toEqual({ kind: 'cancel', seq });
    made[1].reply({ type: 'plan-cancelled', seq });
    expect(answers).toEqual([{ seq, kind: 'scan', cancelled: true }]);
    vi.advanceTimersByTime(1000);
    expect(made.some((w) => w.terminated)).toBe(false);

    const again = c.start(scan10);
    expect(made).toHaveLength(2); // the same two workers, with their compiled documents
    c.cancel();
    made[0].reply({ type: 'plan-cancelled', seq: again });
    vi.advanceTimersByTime(400);
    expect(made[0].terminated).toBe(false);
    expect(made[1].terminated).toBe(true);
    expect(answers.at(-1)).toEqual({ seq: again, kind: 'scan', cancelled: true });
    c.start(scan10);
    expect(made).toHaveLength(3); // a fresh second worker
  });

  it('one block that fails fails the scan and ends the others; a budget runs whole on the first worker', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {}, 400, 2);
    const seq = c.start(scan10);
    made[1].reply({ type: 'plan-error', seq, message: 'the document cannot be read' });
    expect(answers).toEqual([{ seq, kind: 'scan', error: 'the document cannot be read', job: scan10 }]);
    expect(made[0].terminated).toBe(true);
    expect(made[1].terminated).toBe(false);
    const b = c.start(budgetJob);
    expect(made).toHaveLength(3);
    expect(made[2].posted).toEqual([{ kind: 'budget', seq: b, text: '{}', draws: 100, seed: 3 }]);
    expect(made[1].posted).toHaveLength(1);
    // a scan of one point is not split
    const one = c.start({ ...scan10, axes: [{ ...scan10.axes[0], points: 1 }] });
    expect(made[2].terminated).toBe(true); // the budget it replaced
    expect(made).toHaveLength(4);
    expect(made[3].posted).toEqual([{ kind: 'scan', seq: one, text: '{}', axes: [{ ...scan10.axes[0], points: 1 }] }]);
  });
});

// ---------------------------------------------------------------- the pool against the engine, in this process

const samples = join(import.meta.dirname, '..', '..', 'samples');
const sample = (name: string) => readFileSync(join(samples, name), 'utf8');
const deg = Math.PI / 180;

/** Workers that run the engine's planning server here, answering on a later turn of the event loop, as a worker does. */
function engineWorkers() {
  let made = 0;
  const make = (): WorkerLike => {
    made += 1;
    const w: WorkerLike & { dead: boolean } = {
      dead: false,
      onmessage: null,
      onerror: null,
      postMessage(m: unknown) {
        setTimeout(() => void server.handle(m as PlanRequest), 0);
      },
      terminate() {
        w.dead = true;
      },
    };
    const server = createPlanServer((m) => setTimeout(() => !w.dead && w.onmessage?.({ data: m } as unknown as MessageEvent), 0), { sliceMs: 5 });
    return w;
  };
  return { make, made: () => made };
}

/** The answer of a planning job (a scan, a budget) from a client with `pool` workers, and its progress on the way. */
async function answerOn(pool: number, job: PlanJob): Promise<{ answer: PlanAnswer; progress: number[]; made: number }> {
  const w = engineWorkers();
  const progress: number[] = [];
  const answer = await new Promise<PlanAnswer>((resolve) => {
    const c = createPlanClient(w.make, resolve, (s) => s.running && progress.push(s.progress), 400, pool);
    c.start(job);
  });
  return { answer, progress, made: w.made() };
}

describe('a scan on a pool gives the one worker\'s result, byte for byte', () => {
  // bench B with a flux the reader warns about (the document's own warning) and its analyser's polar angle scanned:
  // every point warns, a warning of its own each; bench K's speed (warnings at some points); bench H's efficiency
  // with M1's pole gap narrowed to 1 mm (points the reader refuses, two warnings a point: both magnets clip the
  // collimated beam); bench C over a grid of two rolls
  const benchB = sample('bench-b-idealised-axis.spinyard').replace('"flux": "1e9 /s"', '"flux": "1e19 /s"');
  const benchH = JSON.parse(sample('bench-h-rb87-mj-then-eigenstate.spinyard')) as { elements: { id: string; aperture?: { width: string } }[] };
  benchH.elements.find((e) => e.id === 'M1')!.aperture!.width = '1 mm';
  const cases: [string, PlanJob][] = [
    ['bench B, M2.axis.theta, with a document warning', { kind: 'scan', text: benchB, title: 'theta', axes: [{ name: 'M2.axis.theta', from: 12 * deg, to: 180 * deg, points: 11, spacing: 'linear' }] }],
    ['bench K, oven.velocity.speed', { kind: 'scan', text: sample('bench-k-field-twist-passage.spinyard'), axes: [{ name: 'oven.velocity.speed', from: 300, to: 2000, points: 7, spacing: 'log' }] }],
    ['bench H, D1.efficiency', { kind: 'scan', text: JSON.stringify(benchH), axes: [{ name: 'D1.efficiency', from: 0.1, to: 1.6, points: 6, spacing: 'linear' }] }],
    ['bench C, M1.axis.roll × M2.axis.roll', { kind: 'scan', text: sample('bench-c-roll-calibration.spinyard'), axes: [
      { name: 'M1.axis.roll', from: 0, to: 90 * deg, points: 4, spacing: 'linear' }, { name: 'M2.axis.roll', from: 0, to: 180 * deg, points: 5, spacing: 'linear' }] }],
  ];
  it.each(cases)('%s', async (_name, job) => {
    const one = await answerOn(1, job);
    if (!('result' in one.answer) || one.answer.kind !== 'scan') throw new Error(`the scan did not run: ${JSON.stringify(one.answer)}`);
    expect(one.made).toBe(1);
    const text = JSON.stringify(one.answer.result);
    expect(text).not.toMatch(/NaN|null/);
    for (const pool of [2, 3, 4]) {
      const many = await answerOn(pool, job);
      if (!('result' in many.answer)) throw new Error(`the pooled scan did not run: ${JSON.stringify(many.answer)}`);
      const blocks = scanBlocks(one.answer.result.points.length, pool).length;
      expect(blocks).toBeGreaterThan(1);
      expect(many.made).toBe(blocks);
      expect(many.answer).toMatchObject({ kind: 'scan', workers: blocks });
      expect(JSON.stringify(many.answer.result)).toBe(text);
      // the progress only grows, to 1
      expect(many.progress.every((p, i) => i === 0 || p >= many.progress[i - 1])).toBe(true);
      expect(many.progress.at(-1)).toBe(1);
    }
    return undefined;
  }, 120_000);

  it('the cases warn as they should: the document\'s warning first, warnings at some points, refused points', async () => {
    const b = (await answerOn(2, cases[0][1])).answer as PlanAnswer & { kind: 'scan'; result: { warnings: string[]; points: { warnings?: number[]; error?: string }[] } };
    expect(b.result.warnings[0]).toMatch(/flux/);
    expect(b.result.warnings.length).toBeGreaterThan(3);
    expect(b.result.points.filter((p) => p.warnings).length).toBeGreaterThan(3);
    const h = (await answerOn(2, cases[2][1])).answer as typeof b;
    expect(h.result.points.some((p) => p.error)).toBe(true);
    expect(h.result.points.some((p) => (p.warnings?.length ?? 0) >= 2)).toBe(true);
  }, 120_000);
});

describe('a budget on a pool gives the one worker\'s budget, byte for byte', () => {
  // bench C's five tolerances; bench H with two of its own (its magnets' rolls), whose draws cost the most
  const benchH = JSON.parse(sample('bench-h-rb87-mj-then-eigenstate.spinyard')) as Record<string, unknown>;
  benchH.tolerances = [{ parameter: 'M1.axis.roll', halfWidth: '0.5 deg', distribution: 'normal' }, { parameter: 'M2.field', halfWidth: '0.2 mT', distribution: 'uniform' }];
  const cases: [string, PlanJob & { kind: 'budget' }][] = [
    ['bench C, 600 draws', { kind: 'budget', text: sample('bench-c-roll-calibration.spinyard'), draws: 600, seed: 5 }],
    ['bench H, 240 draws', { kind: 'budget', text: JSON.stringify(benchH), draws: 240, seed: 2 }],
  ];
  it.each(cases)('%s', async (_name, job) => {
    const one = await answerOn(1, job);
    if (!('result' in one.answer) || one.answer.kind !== 'budget') throw new Error(`the budget did not run: ${JSON.stringify(one.answer)}`);
    expect(one.made).toBe(1);
    expect(one.answer.workers).toBe(1);
    const text = JSON.stringify(one.answer.result);
    expect(text).not.toMatch(/NaN|null/);
    expect(one.answer.result.monteCarlo.draws).toBe(job.draws);
    for (const pool of [2, 3]) {
      const many = await answerOn(pool, job);
      if (!('result' in many.answer) || many.answer.kind !== 'budget') throw new Error(`the shared budget did not run: ${JSON.stringify(many.answer)}`);
      expect(many.made).toBe(pool);
      expect(many.answer.workers).toBe(pool);
      expect(JSON.stringify(many.answer.result)).toBe(text);
      // the progress only grows
      expect(many.progress.every((p, i) => i === 0 || p >= many.progress[i - 1])).toBe(true);
    }
    // a short budget stays on the first worker
    const short = await answerOn(3, { ...job, draws: BUDGET_SHARE_FROM - 1 });
    expect(short.made).toBe(1);
    return undefined;
  }, 120_000);

  it('a share that fails fails the budget, with the engine\'s message', async () => {
    const none = await answerOn(2, { kind: 'budget', text: sample('bench-a-spin32-rotator.spinyard'), draws: 500, seed: 1 });
    expect(none.answer).toMatchObject({ kind: 'budget', error: expect.stringMatching(/no tolerances/) });
  });
});
