/**
 * A worker thread of `spinyard budget --workers N` (budget-parallel.ts): compiles the document it is given once and
 * evaluates the block of the budget's evaluations it is sent, in order, returning their outcomes.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { budgetOutcomes, compile, type BudgetOutcome } from '../engine/index.ts';

export interface BudgetWorkerData { text: string }
export interface BudgetWorkerJob { ids: string[]; sets: Record<string, number>[] }
export interface BudgetWorkerReply { outcomes: BudgetOutcome[]; error?: string }

const { text } = workerData as BudgetWorkerData;
const c = compile(text);
parentPort!.on('message', (job: BudgetWorkerJob) => {
  if (!c.ok) {
    parentPort!.postMessage({ outcomes: [], error: c.problems.join('\n') } satisfies BudgetWorkerReply);
    return;
  }
  try {
    parentPort!.postMessage({ outcomes: budgetOutcomes(c.plan, job.ids, job.sets, { acceptCost: true }) } satisfies BudgetWorkerReply);
  } catch (e) {
    parentPort!.postMessage({ outcomes: [], error: (e as Error).message } satisfies BudgetWorkerReply);
  }
});
