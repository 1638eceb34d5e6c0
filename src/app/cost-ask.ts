// Asking before an expensive run: the engine refuses a line whose estimated work is above its ask limit unless it
// is told to go on (`acceptCost`), and above its hard limit in any case (CostLimitError, src/engine/cost.ts). The
// app turns the first into a question ("Run anyway" / "Don't run") for the live run of the edited line and for a
// scan, budget, fit or simulated run started from a panel; the second is only reported.
import type { CostAsk, CostFigures } from './engine-protocol.ts';
import type { PlanKind } from './plan-client.ts';
import { formatBytes, formatSeconds } from '../engine/index.ts';

/** What was refused: the live run of the edited line, or a planning tool's request. */
export type CostWhat = 'run' | PlanKind;

/** A refusal the user may overrule: the estimate, and how to start the same work again with acceptCost. */
export interface CostQuestion {
  what: CostWhat;
  cost: CostAsk;
  runAnyway(): void;
}

/** True for a refusal the user may overrule (above the ask limit, below the hard one). */
export function asksFirst(cost: CostAsk | undefined): cost is CostAsk {
  return cost !== undefined && !cost.hard;
}

const SUBJECT: Record<CostWhat, string> = {
  run: 'This run',
  scan: 'Each point of this scan',
  budget: 'Each evaluation of this budget',
  fit: 'Each evaluation of this fit',
  simulate: 'The run behind this simulated run',
};

const TITLE: Record<CostWhat, string> = {
  run: 'Run this line?',
  scan: 'Run this scan?',
  budget: 'Run this budget?',
  fit: 'Run this fit?',
  simulate: 'Run this simulated run?',
};

/** The dialog's title. */
export function costTitle(what: CostWhat): string {
  return TITLE[what];
}

/** The question in words: "This run would take about 40 s and 1.2 GB of memory because of elements[13] (M14): …". */
export function costSentence(what: CostWhat, e: CostFigures): string {
  const reason = e.reason ? `: ${e.reason}` : '';
  return `${SUBJECT[what]} would take about ${formatSeconds(e.seconds)} and ${formatBytes(e.bytes)} of memory because of ${e.element}${reason}.`;
}

/** The engine's refusal as the worker posts it: the estimate and whether it is hard, from the error it threw. */
export function costOf(e: unknown): CostAsk | undefined {
  if (typeof e !== 'object' || e === null) return undefined;
  const { estimate, hard } = e as { estimate?: Partial<CostFigures> & { reason?: unknown; elementId?: unknown; paths?: unknown }; hard?: unknown };
  if (!estimate || typeof hard !== 'boolean' || typeof estimate.seconds !== 'number' || typeof estimate.bytes !== 'number'
    || typeof estimate.element !== 'string' || typeof estimate.message !== 'string') return undefined;
  return {
    hard,
    estimate: {
      seconds: estimate.seconds, bytes: estimate.bytes, element: estimate.element, message: estimate.message,
      ...(typeof estimate.reason === 'string' ? { reason: estimate.reason } : {}),
      ...(typeof estimate.elementId === 'string' ? { elementId: estimate.elementId } : {}),
      ...(typeof estimate.paths === 'number' ? { paths: estimate.paths } : {}),
    },
  };
}
