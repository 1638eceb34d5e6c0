// The renderer's side of a planning worker (a scan or a tolerance budget; plan-serve.ts): one request at a time,
// with progress and cancel. Cancel asks the worker to stop (a scan stops before its next point and keeps its
// compiled document for the next request); when no answer comes within `graceMs`, or for a budget, which
// cannot pause, the worker is terminated and a fresh one starts with the next request. A new request while one
// runs replaces it. Answers of a request that is not the current one are discarded. A fit and a simulated run are
// stopped as a budget is, by ending the worker.

import type { BudgetResult, FitResult, ScanResult, SimulationResult } from './core-adapter.ts';
import type { EngineSignal, FitData, FitParameterRequest, PlanReply, PlanRequest, WorkerReply } from './engine-protocol.ts';
import type { WorkerLike } from './engine-client.ts';

export type PlanJob =
  | { kind: 'scan'; text: string; axes: (PlanRequest & { kind: 'scan' })['axes']; title?: string }
  | { kind: 'budget'; text: string; draws: number; seed: number }
  | { kind: 'fit'; text: string; csv: string; fileName: string; free: FitParameterRequest[]; state: boolean }
  | { kind: 'simulate'; text: string; atoms: number; seed: number; bins?: number };

export type PlanKind = PlanJob['kind'];

export interface PlanStatus {
  running: boolean;
  kind?: PlanKind;
  seq: number;
  progress: number;
  /** A cancel was asked for and has not been answered yet. */
  cancelling: boolean;
}

export type PlanAnswer =
  | { seq: number; kind: 'scan'; result: ScanResult; ms: number }
  | { seq: number; kind: 'budget'; result: BudgetResult; ms: number }
  | { seq: number; kind: 'fit'; result: FitResult; data: FitData; ms: number }
  | { seq: number; kind: 'simulate'; result: SimulationResult; engine: EngineSignal[]; ms: number }
  | { seq: number; kind: PlanKind; error: string }
  | { seq: number; kind: PlanKind; cancelled: true };

export interface PlanClient {
  /** Starts `job` (replacing a running one); returns its sequence number. */
  start(job: PlanJob): number;
  cancel(): void;
  dispose(): void;
}

export function createPlanClient(
  makeWorker: () => WorkerLike,
  onAnswer: (a: PlanAnswer) => void,
  onStatus: (s: PlanStatus) => void,
  graceMs = 400,
): PlanClient {
  let worker: WorkerLike | undefined;
  let seq = 0;
  let graceTimer: ReturnType<typeof setTimeout> | undefined;
  const status: PlanStatus = { running: false, seq: 0, progress: 0, cancelling: false };
  const emit = () => onStatus({ ...status });

  const restart = () => {
    worker?.terminate();
    worker = undefined;
  };

  const done = (a: PlanAnswer) => {
    clearTimeout(graceTimer);
    status.running = false;
    status.cancelling = false;
    onAnswer(a);
    emit();
  };

  const ensure = (): WorkerLike => {
    if (worker) return worker;
    const w = makeWorker();
    w.onmessage = (ev) => {
      const m = ev.data as WorkerReply;
      if (!('seq' in m) || m.seq !== status.seq || !status.running) return;
      const kind = status.kind!;
      const r = m as PlanReply;
      switch (r.type) {
        case 'plan-progress':
          status.progress = r.fraction;
          emit();
          return;
        case 'scan-result':
          return done({ seq: r.seq, kind: 'scan', result: r.result, ms: r.ms });
        case 'budget-result':
          return done({ seq: r.seq, kind: 'budget', result: r.result, ms: r.ms });
        case 'fit-result':
          return done({ seq: r.seq, kind: 'fit', result: r.result, data: r.data, ms: r.ms });
        case 'simulate-result':
          return done({ seq: r.seq, kind: 'simulate', result: r.result, engine: r.engine, ms: r.ms });
        case 'plan-error':
          return done({ seq: r.seq, kind, error: r.message });
        case 'plan-cancelled':
          return done({ seq: r.seq, kind, cancelled: true });
      }
    };
    w.onerror = (ev) => {
      ev.preventDefault?.();
      restart();
      if (status.running) done({ seq: status.seq, kind: status.kind!, error: `the engine stopped: ${ev.message || 'worker error'}` });
    };
    worker = w;
    return w;
  };

  const stopNow = () => {
    restart();
    done({ seq: status.seq, kind: status.kind!, cancelled: true });
  };

  return {
    start(job) {
      if (status.running) {
        clearTimeout(graceTimer);
        restart();
      }
      seq += 1;
      Object.assign(status, { running: true, kind: job.kind, seq, progress: 0, cancelling: false });
      const req: PlanRequest = job.kind === 'scan'
        ? { kind: 'scan', seq, text: job.text, axes: job.axes, ...(job.title !== undefined ? { title: job.title } : {}) }
        : { ...job, seq };
      ensure().postMessage(req);
      emit();
      return seq;
    },
    cancel() {
      if (!status.running || status.cancelling) return;
      // a budget, a fit and a simulated run cannot pause: the worker is ended at once
      if (status.kind !== 'scan') return stopNow();
      status.cancelling = true;
      const req: PlanRequest = { kind: 'cancel', seq: status.seq };
      worker?.postMessage(req);
      emit();
      const s = status.seq;
      graceTimer = setTimeout(() => {
        if (status.running && status.seq === s) stopNow();
      }, graceMs);
    },
    dispose() {
      clearTimeout(graceTimer);
      restart();
    },
  };
}
