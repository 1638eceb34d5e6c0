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
 * The work a default `--workers` leaves to this thread alone: below this many milliseconds of it (this thread's
 * pace on its latest chunk times the items left), starting worker threads costs more than they give. On the
 * machine of docs/bench.md (two vCPUs with about 1.45× the throughput of one) a worker's start (loading the
 * command line, compiling the document, its first evaluations before the JIT has compiled them, all beside this
 * thread) costs about 0.8 s, and it gives back about a third of the work: worth it from some 2.5 s of work on.
 */
export const THREADS_WORTH_MS = 2500;
/** How long this thread works before its pace decides whether the workers start (dealOut's `worthMs`). */
const WARM_MS = 250;

/**
 * The results of `items`, in their order, from this thread and `workers − 1` worker threads together: the items are
 * cut into chunks in order, each worker holds two chunks (the one it evaluates and the next, so that it never waits
 * for this thread to look at its answer) and is sent another as it answers one, and this thread evaluates chunks
 * itself (`own`) between looking at the workers' answers. With `worthMs` the workers start only once this thread's pace
 * (its latest chunk's, after WARM_MS of work) says the items left would take it longer than that (THREADS_WORTH_MS). Which thread
 * evaluated a chunk does not show in the results, since each result is a function of its item alone. What a worker
 * reports or dies of is thrown as a RunError (its message), what `own` throws as it is.
 */
export async function dealOut<T, R>(items: readonly T[], workers: number, start: () => Worker, own: (chunk: T[]) => R[], onDone?: (done: number) => void,
  worthMs?: number): Promise<R[]> {
  const n = items.length;
  // small enough that the threads finish together, large enough that a message carries some work
  const size = Math.max(1, Math.min(100, Math.ceil(n / (16 * Math.max(1, workers)))));
  const chunks: T[][] = [];
  for (let i = 0; i < n; i += size) chunks.push(items.slice(i, i + size));
  const results: R[][] = new Array(chunks.length);
  let next = 0, done = 0, failed: Error | null = null;
  const finished = () => onDone?.(done);
  const running: Promise<void>[] = [];
  const startPool = () => {
    const pool = Array.from({ length: Math.max(0, Math.min(workers - 1, chunks.length - next - 1)) }, () => start());
    running.push(...pool.map((w) => new Promise<void>((resolve) => {
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
    })));
  };
  if (worthMs === undefined) startPool();
  // this thread takes chunks too, and between two of them lets the workers' answers in
  try {
    let waiting = worthMs !== undefined, spent = 0;
    while (!failed && next < chunks.length) {
      const id = next++;
      const t0 = performance.now();
      results[id] = own(chunks[id]);
      if (waiting) {
        // the pace of this thread's latest chunk, once it has worked WARM_MS (its first evaluations run before the JIT
        // has compiled them, several times slower than the rest)
        const ms = performance.now() - t0;
        spent += ms;
        const left = n - Math.min(n, next * size);
        if (spent >= WARM_MS && (ms / chunks[id].length) * left > worthMs!) {
          waiting = false;
          startPool();
        }
      }
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
