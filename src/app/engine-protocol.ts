// Messages between the renderer and the engine worker.
import type { Beamline } from './core-adapter.ts';
import type { RunResultView } from './results.ts';
import type { BudgetOutcome, BudgetResult, FitResult, ScanPoint, ScanResult, SimulationResult } from './core-adapter.ts';

export interface EngineRequest {
  seq: number;
  /** Run even when the engine's estimate of the work is above its ask limit (the user said "Run anyway"). */
  acceptCost?: boolean;
  /** The document's normalized line, read and validated once in the renderer (checkDocument). It is plain
   *  data (numbers, strings, booleans, plain objects and arrays), so it crosses to the worker as a
   *  structured clone; the worker runs it as it is. */
  line: Beamline;
}

export type EngineReply =
  | { type: 'progress'; seq: number; fraction: number }
  | { type: 'result'; seq: number; result: RunResultView; ms: number }
  | { type: 'error'; seq: number; message: string; cost?: CostAsk };

/** The engine's estimate of a run it refused as too expensive (its CostLimitError): how long (s), how much memory
 *  (bytes), the element that causes it ("elements[13] (M14)") and the message that says so; what makes that element
 *  expensive, its id and the paths the run would end, where the engine gives them. */
export interface CostFigures { seconds: number; bytes: number; element: string; message: string; reason?: string; elementId?: string; paths?: number }

/** A run the engine refused by its cost: above the ask limit (`hard` false: the user may run it anyway) or above the
 *  hard limit (`hard` true: it is not run whatever the answer). */
export interface CostAsk { estimate: CostFigures; hard: boolean }

// ---------------------------------------------------------------- planning: scans and tolerance budgets
// A planning request carries the document's file text (as Save writes it); the worker compiles it (kept
// while the text stays the same) and runs a scan or a budget on it, posting progress on the way. `cancel`
// stops the request it names between two points of a scan; a budget is stopped by the client, which
// terminates the worker when no answer to a cancel comes. Replies are told apart from the run's by their
// `type` ("plan-…", "scan-result", "budget-result").

/** One scanned parameter: by name ("M2.axis.roll"), the ends in SI. */
export interface ScanAxisRequest {
  name: string;
  from: number;
  to: number;
  points: number;
  spacing: 'linear' | 'log';
}

// A fit (fit.ts of the engine) reads the measurements' CSV text in the worker against the compiled document and
// runs in one piece; a simulated run (simulate.ts) likewise. Neither can pause: the client terminates the worker
// to stop them. A fit's answer carries, beside the result, the data's set-point columns and each reading's
// set-points (by its line in the file), for the residuals plot; a simulated run's carries the engine's signal of
// every detector at the document's set-points, to compare the sampled signals with.

/** A parameter to fit, by name, with optional bounds (SI). */
export interface FitParameterRequest { name: string; lower?: number; upper?: number }

/** The readings' set-points as the file gives them: the columns (name, unit of the file, SI factor of the
 *  shown unit) and per reading its line in the file and its values (SI, in the order of the columns). */
export interface FitData {
  columns: { name: string; unit: string; factor: number }[];
  readings: { line: number; detector: string; values: number[] }[];
}

/** A detector's signal (counts/s without background) by the engine, at the document's set-points, and the
 *  profiles at its plane of the sub-beams that end on it (fraction of the oven flux per metre along the axis). */
export interface EngineSignal { id: string; signal: number; profiles?: { axis: 'x' | 'z'; positions: number[]; density: number[] }[] }

// A scan spread over a pool of workers (plan-client.ts): each worker is sent the whole request with a `block`, the
// points from `start` to `end` (exclusive) in scan order (scanIndices of the engine: the first parameter outer), and
// answers "scan-block": the scan's frame without points (`head`: parameters, title, detectors and the document's own
// warnings, as one worker's result has them) and its points, each with the texts of its warnings instead of indices.
// The client puts the blocks back in order and numbers the warnings as one worker does (scan-blocks.ts).

/** A block of a scan's points: from `start` to `end` (exclusive), in scan order. */
export interface ScanBlock { start: number; end: number }

/** A point of a block: its warnings by their texts (`warningTexts`, in the order the point numbered them), not indices. */
export type BlockPoint = Omit<ScanPoint, 'warnings'> & { warningTexts?: string[] };

// A tolerance budget spread over a pool of workers (plan-client.ts): each worker finds the budget's evaluations as one
// worker does (budgetSetup of the engine: the set-points' run, the sensitivity steps, the seeded draws, the same in
// every worker) and evaluates its share (`share`: the index-th of `count` contiguous shares), answering
// "budget-block" with their outcomes in order. The client then sends the outcomes of every share, in order, to the
// first worker ("budget-finish"), which makes the budget from them: the one worker's budget, bit for bit.

/** The index-th of `count` contiguous shares of a budget's evaluations. */
export interface BudgetShare { index: number; count: number }

/** `acceptCost`: run even where the engine's estimate of the work is above its ask limit ("Run anyway"). */
export type PlanRequest =
  | { kind: 'scan'; seq: number; text: string; axes: ScanAxisRequest[]; title?: string; block?: ScanBlock; acceptCost?: boolean }
  | { kind: 'budget'; seq: number; text: string; draws: number; seed: number; share?: BudgetShare; acceptCost?: boolean }
  | { kind: 'budget-finish'; seq: number; text: string; draws: number; seed: number; outcomes: BudgetOutcome[]; acceptCost?: boolean }
  | { kind: 'fit'; seq: number; text: string; csv: string; fileName: string; free: FitParameterRequest[]; state: boolean; acceptCost?: boolean }
  | { kind: 'simulate'; seq: number; text: string; atoms: number; seed: number; bins?: number; acceptCost?: boolean }
  | { kind: 'cancel'; seq: number };

export type PlanReply =
  | { type: 'plan-progress'; seq: number; fraction: number }
  | { type: 'scan-result'; seq: number; result: ScanResult; ms: number }
  | { type: 'scan-block'; seq: number; block: ScanBlock; head: ScanResult; points: BlockPoint[]; ms: number }
  | { type: 'budget-result'; seq: number; result: BudgetResult; ms: number }
  | { type: 'budget-block'; seq: number; share: BudgetShare; outcomes: BudgetOutcome[]; ms: number }
  | { type: 'fit-result'; seq: number; result: FitResult; data: FitData; ms: number }
  | { type: 'simulate-result'; seq: number; result: SimulationResult; engine: EngineSignal[]; ms: number }
  | { type: 'plan-error'; seq: number; message: string; cost?: CostAsk }
  | { type: 'plan-cancelled'; seq: number };

/** A message to the engine worker: a run of a normalized line, or a planning request. */
export type WorkerRequest = EngineRequest | PlanRequest;
/** A message from the engine worker. */
export type WorkerReply = EngineReply | PlanReply;

/** True for a planning request (a run request has no `kind`). */
export function isPlanRequest(m: unknown): m is PlanRequest {
  return typeof m === 'object' && m !== null && typeof (m as { kind?: unknown }).kind === 'string';
}
