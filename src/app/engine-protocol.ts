// Messages between the renderer and the engine worker.
import type { Beamline } from './core-adapter.ts';
import type { RunResultView } from './results.ts';
import type { BudgetResult, FitResult, ScanResult, SimulationResult } from './core-adapter.ts';

export interface EngineRequest {
  seq: number;
  /** The document's normalized line, read and validated once in the renderer (checkDocument). It is plain
   *  data (numbers, strings, booleans, plain objects and arrays), so it crosses to the worker as a
   *  structured clone; the worker runs it as it is. */
  line: Beamline;
}

export type EngineReply =
  | { type: 'progress'; seq: number; fraction: number }
  | { type: 'result'; seq: number; result: RunResultView; ms: number }
  | { type: 'error'; seq: number; message: string };

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

export type PlanRequest =
  | { kind: 'scan'; seq: number; text: string; axes: ScanAxisRequest[]; title?: string }
  | { kind: 'budget'; seq: number; text: string; draws: number; seed: number }
  | { kind: 'fit'; seq: number; text: string; csv: string; fileName: string; free: FitParameterRequest[]; state: boolean }
  | { kind: 'simulate'; seq: number; text: string; atoms: number; seed: number; bins?: number }
  | { kind: 'cancel'; seq: number };

export type PlanReply =
  | { type: 'plan-progress'; seq: number; fraction: number }
  | { type: 'scan-result'; seq: number; result: ScanResult; ms: number }
  | { type: 'budget-result'; seq: number; result: BudgetResult; ms: number }
  | { type: 'fit-result'; seq: number; result: FitResult; data: FitData; ms: number }
  | { type: 'simulate-result'; seq: number; result: SimulationResult; engine: EngineSignal[]; ms: number }
  | { type: 'plan-error'; seq: number; message: string }
  | { type: 'plan-cancelled'; seq: number };

/** A message to the engine worker: a run of a normalized line, or a planning request. */
export type WorkerRequest = EngineRequest | PlanRequest;
/** A message from the engine worker. */
export type WorkerReply = EngineReply | PlanReply;

/** True for a planning request (a run request has no `kind`). */
export function isPlanRequest(m: unknown): m is PlanRequest {
  return typeof m === 'object' && m !== null && typeof (m as { kind?: unknown }).kind === 'string';
}
