import { describe, it, expect, vi, afterEach } from 'vitest';
import { createEngineClient, type EngineAnswer, type EngineStatus, type WorkerLike } from '../../src/app/engine-client.ts';
import type { EngineReply, EngineRequest } from '../../src/app/engine-protocol.ts';
import type { Beamline } from '../../src/app/core-adapter.ts';

/** A stand-in for a normalized line: the client passes it on as it is. */
const line = (title: string) => ({ title }) as unknown as Beamline;

/** A worker that records requests and answers when told to. */
function fakeWorkers() {
  const made: (WorkerLike & { posted: EngineRequest[]; terminated: boolean; reply(m: EngineReply): void })[] = [];
  const make = () => {
    const w = {
      posted: [] as EngineRequest[],
      terminated: false,
      onmessage: null as WorkerLike['onmessage'],
      onerror: null as WorkerLike['onerror'],
      postMessage(m: unknown) {
        this.posted.push(m as EngineRequest);
      },
      terminate() {
        this.terminated = true;
      },
      reply(m: EngineReply) {
        this.onmessage?.({ data: m } as MessageEvent<EngineReply>);
      },
    };
    made.push(w);
    return w;
  };
  return { made, make };
}

const result = (y: number) => ({
  format: 'spinyard.result' as const, version: 1 as const, flux: 1, invariants: { balance: 0, maxHermiticity: 0, positive: true },
  leaves: [{ path: [], target: 'D1', yield: y, rate: y }], detectors: [], lost: 1 - y, warnings: [],
});

afterEach(() => vi.useRealTimers());

describe('createEngineClient', () => {
  it('runs the latest document and discards answers to superseded requests', () => {
    const { made, make } = fakeWorkers();
    const answers: EngineAnswer[] = [];
    const c = createEngineClient(make, (a) => answers.push(a), () => {});
    c.run(1, line('doc1'));
    c.run(2, line('doc2')); // busy: waits
    c.run(3, line('doc3')); // replaces doc2
    expect(made[0].posted.map((p) => p.seq)).toEqual([1]);
    made[0].reply({ type: 'result', seq: 1, result: result(0.1), ms: 5 });
    expect(answers).toEqual([]); // seq 1 is stale
    expect(made[0].posted.map((p) => p.line.title)).toEqual(['doc1', 'doc3']);
    made[0].reply({ type: 'result', seq: 3, result: result(0.3), ms: 5 });
    expect(answers.map((a) => [a.seq, a.result?.leaves[0].yield])).toEqual([[3, 0.3]]);
  });

  it('shows a slow run after slowMs, and cancel terminates the worker and starts a fresh one next time', () => {
    vi.useFakeTimers();
    const { made, make } = fakeWorkers();
    const statuses: EngineStatus[] = [];
    const answers: EngineAnswer[] = [];
    const c = createEngineClient(make, (a) => answers.push(a), (s) => statuses.push(s), 500);
    c.run(1, line('doc1'));
    vi.advanceTimersByTime(499);
    expect(statuses.at(-1)!.slow).toBe(false);
    vi.advanceTimersByTime(2);
    expect(statuses.at(-1)).toMatchObject({ running: true, slow: true });
    made[0].reply({ type: 'progress', seq: 1, fraction: 0.4 });
    expect(statuses.at(-1)!.progress).toBe(0.4);
    c.cancel();
    expect(made[0].terminated).toBe(true);
    expect(statuses.at(-1)).toMatchObject({ running: false, cancelled: true });
    c.run(2, line('doc2'));
    expect(made).toHaveLength(2);
    made[1].reply({ type: 'error', seq: 2, message: 'elements[0]: bad' });
    expect(answers).toEqual([{ seq: 2, error: 'elements[0]: bad' }]);
  });

  it('drops a slow stale run at once when a newer document arrives', () => {
    vi.useFakeTimers();
    const { made, make } = fakeWorkers();
    const c = createEngineClient(make, () => {}, () => {}, 500);
    c.run(1, line('doc1'));
    vi.advanceTimersByTime(600);
    c.run(2, line('doc2'));
    expect(made[0].terminated).toBe(true);
    expect(made[1].posted.map((p) => p.seq)).toEqual([2]);
  });
});

describe('createEngineClient and the cost estimate', () => {
  it('sends acceptCost with a run anyway (also one that waits), and hands on a refusal\'s estimate', () => {
    const { made, make } = fakeWorkers();
    const answers: EngineAnswer[] = [];
    const c = createEngineClient(make, (a) => answers.push(a), () => {});
    c.run(1, line('twist'));
    expect(made[0].posted[0]).toEqual({ seq: 1, line: line('twist') });
    const cost = { hard: false, estimate: { seconds: 220, bytes: 2.15e9, element: 'elements[5] (T1)', message: 'elements[5] (T1): this run would take about 4 min' } };
    made[0].reply({ type: 'error', seq: 1, message: cost.estimate.message, cost });
    expect(answers).toEqual([{ seq: 1, error: cost.estimate.message, cost }]);
    c.run(2, line('twist'), true);
    expect(made[0].posted[1]).toEqual({ seq: 2, line: line('twist'), acceptCost: true });
    c.run(3, line('twist again'), true); // busy: waits, and keeps its acceptCost
    made[0].reply({ type: 'result', seq: 2, result: result(0.1), ms: 1 });
    expect(made[0].posted[2]).toEqual({ seq: 3, line: line('twist again'), acceptCost: true });
  });
});
