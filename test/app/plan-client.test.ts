import { afterEach, describe, expect, it, vi } from 'vitest';
import { createPlanClient, type PlanAnswer, type PlanStatus } from '../../src/app/plan-client.ts';
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
    expect(answers).toEqual([{ seq, kind: 'scan', result: scanResult, ms: 12 }]);
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
    expect(answers).toEqual([{ seq: second, kind: 'budget', error: 'budget: the line has no tolerances' }]);
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

  it('a worker that fails answers the request with an error, and the next request gets a fresh worker', () => {
    const { made, make } = fakeWorkers();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {});
    const seq = c.start(budgetJob);
    made[0].onerror?.({ message: 'out of memory', preventDefault() {} } as ErrorEvent);
    expect(answers).toEqual([{ seq, kind: 'budget', error: 'the engine stopped: out of memory' }]);
    c.start(budgetJob);
    expect(made).toHaveLength(2);
  });
});
