/**
 * A worker thread of `spinyard budget --workers N` (budget-parallel.ts): compiles the document it is given once and
 * evaluates the chunks of the budget's evaluations it is sent, in order, returning their outcomes.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { budgetOutcomes, compile, type BudgetOutcome } from '../engine/index.ts';
import type { ChunkJob, ChunkReply } from './workers.ts';

export interface BudgetWorkerData { text: string; ids: string[] }

const { text, ids } = workerData as BudgetWorkerData;
const c = compile(text);
parentPort!.on('message', (job: ChunkJob<Record<string, number>>) => {
  if (!c.ok) {
    parentPort!.postMessage({ id: job.id, results: [], error: c.problems.join('\n') } satisfies ChunkReply<BudgetOutcome>);
    return;
  }
  try {
    parentPort!.postMessage({ id: job.id, results: budgetOutcomes(c.plan, ids, job.items, { acceptCost: true }) } satisfies ChunkReply<BudgetOutcome>);
  } catch (e) {
    parentPort!.postMessage({ id: job.id, results: [], error: (e as Error).message } satisfies ChunkReply<BudgetOutcome>);
  }
});
