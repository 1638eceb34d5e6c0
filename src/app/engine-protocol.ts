// Messages between the renderer and the engine worker.
import type { Beamline } from './core-adapter.ts';
import type { RunResultView } from './results.ts';
import type { BudgetResult, ScanResult } from './core-adapter.ts';

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

export type PlanRequest =
  | { kind: 'scan'; seq: number; text: string; axes: ScanAxisRequest[]; title?: string }
  | { kind: 'budget'; seq: number; text: string; draws: number; seed: number }
  | { kind: 'cancel'; seq: number };

export type PlanReply =
  | { type: 'plan-progress'; seq: number; fraction: number }
  | { type: 'scan-result'; seq: number; result: ScanResult; ms: number }
  | { type: 'budget-result'; seq: number; result: BudgetResult; ms: number }
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
