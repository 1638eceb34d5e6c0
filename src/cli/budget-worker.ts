/**
 * A worker thread of `spinyard budget --workers N` (budget-parallel.ts): compiles the document it is given once and
 * evaluates the chunks of the budget's evaluations it is sent, in order, returning their outcomes.
 */
import { workerData } from 'node:worker_threads';
import { budgetOutcomes, compile } from '../engine/index.ts';
import { serveChunks } from './workers.ts';

export interface BudgetWorkerData { text: string; ids: string[] }

const { text, ids } = workerData as BudgetWorkerData;
const c = compile(text);
serveChunks((sets: Record<string, number>[]) => (c.ok ? budgetOutcomes(c.plan, ids, sets, { acceptCost: true }) : []), c.ok ? undefined : c.problems.join('\n'));
