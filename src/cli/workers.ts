/**
 * Worker threads of the planning commands (`spinyard scan --workers N`, `spinyard budget --workers N`): a worker runs
 * one of the command line's worker modules, the built one beside the built command line or, where this file runs as
 * TypeScript (tsx, the tests), a small module that registers tsx's loader in the worker and imports the source.
 */
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker, parentPort } from 'node:worker_threads';
import { RunError } from '../engine/index.ts';

export function startWorker(name: 'scan-worker' | 'budget-worker', workerData: unknown): Worker {
  const here = import.meta.url;
  if (!here.endsWith('.ts')) return new Worker(new URL(`./${name}.mjs`, here), { workerData });
  // the ESM entry of tsx's API (its package.json "./esm/api" → "import"), found from its package folder
  const pkg = createRequire(here).resolve('tsx/package.json');
  const api = pathToFileURL(join(dirname(pkg), 'dist', 'esm', 'api', 'index.mjs')).href;
  const source = new URL(`./${name}.ts`, here).href;
  const boot = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(source)}); });`;
  return new Worker(boot, { eval: true, workerData });
}

/** A chunk of work sent to a worker, and its answer: the results of its items in order, or why it failed. */
export interface ChunkJob<T> { id: number; items: T[] }
export interface ChunkReply<R> { id: number; results: R[]; error?: string }

/**
 * The loop of a worker module: answers every chunk it is sent with `evaluate`'s results, or with the message of what
 * went wrong (`problem` where the worker could not even start: its document did not compile).
 */
export function serveChunks<T, R>(evaluate: (items: T[]) => R[], problem?: string): void {
  parentPort!.on('message', (job: ChunkJob<T>) => {
    let reply: ChunkReply<R>;
    try {
      reply = problem === undefined ? { id: job.id, results: evaluate(job.items) } : { id: job.id, results: [], error: problem };
    } catch (e) {
      reply = { id: job.id, results: [], error: (e as Error).message };
    }
    parentPort!.postMessage(reply);
  });
}

/**
 * The results of `items`, in their order, from this thread and `workers − 1` worker threads together: the items are
 * cut into chunks in order, each worker holds two chunks (the one it evaluates and the next, so that it never waits
 * for this thread to look at its answer) and is sent another as it answers one, and this thread evaluates chunks
 * itself (`own`) between looking at the workers' answers. Which thread evaluated a chunk does not
 * show in the results, since each result is a function of its item alone. What a worker reports or dies of is thrown
 * as a RunError (its message), what `own` throws as it is.
 */
export async function dealOut<T, R>(items: readonly T[], workers: number, start: () => Worker, own: (chunk: T[]) => R[], onDone?: (done: number) => void): Promise<R[]> {
  const n = items.length;
  // small enough that the threads finish together, large enough that a message carries some work
  const size = Math.max(1, Math.min(100, Math.ceil(n / (16 * Math.max(1, workers)))));
  const chunks: T[][] = [];
  for (let i = 0; i < n; i += size) chunks.push(items.slice(i, i + size));
  const results: R[][] = new Array(chunks.length);
  let next = 0, done = 0, failed: Error | null = null;
  const finished = () => onDone?.(done);
  const pool = Array.from({ length: Math.max(0, Math.min(workers - 1, chunks.length - 1)) }, () => start());
  const running = pool.map((w) => new Promise<void>((resolve) => {
    let held = 0;
    const send = () => {
      if (failed || next >= chunks.length) {
        if (held === 0) {
          void w.terminate();
          resolve();
        }
        return;
      }
      const id = next++;
      held++;
      w.postMessage({ id, items: chunks[id] } satisfies ChunkJob<T>);
    };
    w.on('message', (m: ChunkReply<R>) => {
      held--;
      if (m.error) failed ??= new RunError(m.error);
      else {
        results[m.id] = m.results;
        done += m.results.length;
        finished();
      }
      send();
    });
    w.once('error', (e) => {
      failed ??= new RunError(e.message);
      resolve();
    });
    send();
    send();
  }));
  // this thread takes chunks too, and between two of them lets the workers' answers in
  try {
    while (!failed && next < chunks.length) {
      const id = next++;
      results[id] = own(chunks[id]);
      done += results[id].length;
      finished();
      await new Promise<void>((r) => setImmediate(r));
    }
  } catch (e) {
    failed ??= e as Error;
  }
  await Promise.all(running);
  if (failed) throw failed;
  return results.flat();
}
