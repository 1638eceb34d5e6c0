/**
 * A worker thread of `spinyard scan --workers N` (scan-parallel.ts): compiles the document it is given once and
 * evaluates the chunks of scan points it is sent, returning each point with its warnings by their text.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { compile, scanParameters, type ScanAxis } from '../engine/index.ts';
import { scanChunk, type ScanPointOut } from './scan-parallel.ts';
import type { ChunkJob, ChunkReply } from './workers.ts';

export interface ScanWorkerData { text: string; axes: ScanAxis[] }

const { text, axes } = workerData as ScanWorkerData;
const c = compile(text);
parentPort!.on('message', (job: ChunkJob<number[]>) => {
  if (!c.ok) {
    parentPort!.postMessage({ id: job.id, results: [], error: c.problems.join('\n') } satisfies ChunkReply<ScanPointOut>);
    return;
  }
  try {
    parentPort!.postMessage({ id: job.id, results: scanChunk(c.plan, scanParameters(c.plan, axes), job.items) } satisfies ChunkReply<ScanPointOut>);
  } catch (e) {
    parentPort!.postMessage({ id: job.id, results: [], error: (e as Error).message } satisfies ChunkReply<ScanPointOut>);
  }
});
