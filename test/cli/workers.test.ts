/** dealOut: the results in order whoever evaluated them, and when its worker threads start. */
import { EventEmitter } from 'node:events';
import type { Worker } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { dealOut, type ChunkJob, type ChunkReply } from '../../src/cli/workers.ts';

/** A stand-in for a worker thread: answers each chunk on a later turn of the event loop with `f` of its items. */
function fakeWorker(f: (x: number) => number, seen: number[]): Worker {
  const w = new EventEmitter() as EventEmitter & { postMessage(job: ChunkJob<number>): void; terminate(): Promise<number> };
  w.postMessage = (job) => {
    seen.push(job.items.length);
    setImmediate(() => w.emit('message', { id: job.id, results: job.items.map(f) } satisfies ChunkReply<number>));
  };
  w.terminate = () => Promise.resolve(0);
  return w as unknown as Worker;
}

const items = Array.from({ length: 1000 }, (_, i) => i);
const f = (x: number) => x * x + 1;

/** Holds this thread for `ms` (a chunk of slow evaluations). */
function busy(ms: number): void {
  const end = performance.now() + ms;
  while (performance.now() < end) { /* working */ }
}

describe('dealOut', () => {
  it('starts its workers at once without worthMs, and gives every result in order', async () => {
    let started = 0;
    const seen: number[] = [];
    const out = await dealOut(items, 3, () => (started++, fakeWorker(f, seen)), (chunk) => chunk.map(f));
    expect(started).toBe(2);
    expect(seen.length).toBeGreaterThan(0);
    expect(out).toEqual(items.map(f));
  });

  it('leaves short work to its own thread with worthMs: no worker starts', async () => {
    let started = 0;
    const out = await dealOut(items, 3, () => (started++, fakeWorker(f, [])), (chunk) => chunk.map(f), undefined, 1e12);
    expect(started).toBe(0);
    expect(out).toEqual(items.map(f));
  });

  it('starts the workers once its own pace, after its warm-up, says the work left is worth them', async () => {
    let started = 0;
    const seen: number[] = [];
    let own = 0;
    const out = await dealOut(items, 3, () => (started++, fakeWorker(f, seen)), (chunk) => {
      own++;
      busy(40);
      return chunk.map(f);
    }, undefined, 0);
    expect(started).toBe(2);
    // this thread worked its warm-up (250 ms: at least 7 chunks of 40 ms) before the workers took any
    expect(own).toBeGreaterThanOrEqual(7);
    expect(seen.length).toBeGreaterThan(0);
    expect(out).toEqual(items.map(f));
  });
});
