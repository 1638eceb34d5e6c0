/**
 * A tolerance budget spread over threads (`spinyard budget --workers N`): this thread finds what the budget evaluates
 * (engine/budget.ts budgetSetup: the set-points' signals, the values of every sensitivity step and Monte Carlo draw),
 * the evaluations are cut into chunks in order and dealt out to this thread and N − 1 worker threads as each asks for
 * more (workers.ts dealOut), each worker compiling the document once, and the budget is made from the outcomes in
 * their order. An evaluation's numbers are a function of the document and its values alone, so the budget is the
 * same, bit for bit, for any number of workers.
 */
import { budgetOutcomes, budgetResult, type BudgetResult, type BudgetSetup, type Plan, type RunOptions } from '../engine/index.ts';
import { dealOut, startWorker } from './workers.ts';

export async function budgetParallel(text: string, plan: Plan, setup: BudgetSetup, opts: RunOptions, workers: number, worthMs?: number): Promise<BudgetResult> {
  const outcomes = await dealOut(setup.sets, workers, () => startWorker('budget-worker', { text, ids: setup.ids }),
    (chunk) => budgetOutcomes(plan, setup.ids, chunk, opts), opts.onProgress && ((done) => opts.onProgress!(done / setup.sets.length)), worthMs);
  return budgetResult(plan, setup, outcomes);
}
