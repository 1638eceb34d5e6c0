/**
 * A tolerance budget spread over threads (`spinyard budget --workers N`): this thread finds what the budget evaluates
 * (engine/budget.ts budgetSetup: the set-points' signals, the values of every sensitivity step and Monte Carlo draw),
 * deals the evaluations out in contiguous blocks, evaluates the first block itself while N − 1 worker threads each
 * compile the document once and evaluate one of the others, and makes the budget from the outcomes in their order.
 * An evaluation's numbers are a function of the document and its values alone, so the budget is the same, bit for
 * bit, for any number of workers.
 */
import { budgetOutcomes, budgetResult, RunError, type BudgetOutcome, type BudgetResult, type BudgetSetup, type Plan, type RunOptions } from '../engine/index.ts';
import type { BudgetWorkerReply } from './budget-worker.ts';
import { blocksOf, startWorker } from './workers.ts';

export async function budgetParallel(text: string, plan: Plan, setup: BudgetSetup, opts: RunOptions, workers: number): Promise<BudgetResult> {
  const [first, ...rest] = blocksOf(setup.sets, workers);
  const replies = rest.map((sets) => new Promise<BudgetWorkerReply>((resolve, reject) => {
    const worker = startWorker('budget-worker', { text });
    worker.once('message', (m: BudgetWorkerReply) => {
      resolve(m);
      void worker.terminate();
    });
    worker.once('error', reject);
    worker.postMessage({ ids: setup.ids, sets });
  }));
  let done = 0;
  const own = first ? budgetOutcomes(plan, setup.ids, first, opts, () => opts.onProgress?.(Math.min(0.99, ++done / first.length))) : [];
  const outcomes: BudgetOutcome[] = [...own];
  for (const r of await Promise.all(replies)) {
    if (r.error) throw new RunError(r.error);
    outcomes.push(...r.outcomes);
  }
  opts.onProgress?.(1);
  return budgetResult(plan, setup, outcomes);
}
