// The renderer's side of the engine worker: one run at a time, the latest document wins. A document goes
// as its normalized line (EngineRequest), with acceptCost when the user said "Run anyway" to the engine's
// estimate. A new document while a run is busy waits as "pending" (older pending documents are dropped); a run
// busy for longer than `slowMs` shows progress and can be cancelled, which terminates the worker and starts a
// fresh one.
// Answers whose sequence number is not the latest requested are discarded.

import type { Beamline } from './core-adapter.ts';
import type { CostAsk, EngineReply, EngineRequest } from './engine-protocol.ts';
import type { RunResultView } from './results.ts';

export interface EngineStatus {
  /** Sequence number of the latest request. */
  requested: number;
  running: boolean;
  /** True once the current run has taken longer than slowMs (show the progress bar and Cancel). */
  slow: boolean;
  progress: number;
  cancelled: boolean;
}

export interface EngineAnswer {
  seq: number;
  result?: RunResultView;
  error?: string;
  /** The run was refused by the engine's cost estimate (the app asks "Run anyway" unless it is hard). */
  cost?: CostAsk;
  ms?: number;
}

export interface WorkerLike {
  postMessage(m: unknown): void;
  terminate(): void;
  onmessage: ((ev: MessageEvent<EngineReply>) => void) | null;
  onerror: ((ev: ErrorEvent) => void) | null;
}

export function createEngineClient(
  makeWorker: () => WorkerLike,
  onAnswer: (a: EngineAnswer) => void,
  onStatus: (s: EngineStatus) => void,
  slowMs = 500,
) {
  let worker: WorkerLike | undefined;
  let busySeq = 0;
  let pending: EngineRequest | undefined;
  let requested = 0;
  let slowTimer: ReturnType<typeof setTimeout> | undefined;
  const status: EngineStatus = { requested: 0, running: false, slow: false, progress: 0, cancelled: false };
  const emit = () => onStatus({ ...status });

  const start = (seq: number, line: Beamline, acceptCost?: boolean) => {
    busySeq = seq;
    status.running = true;
    status.slow = false;
    status.progress = 0;
    status.cancelled = false;
    clearTimeout(slowTimer);
    slowTimer = setTimeout(() => {
      if (busySeq === seq) {
        status.slow = true;
        emit();
      }
    }, slowMs);
    const req: EngineRequest = { seq, line, ...(acceptCost ? { acceptCost: true } : {}) };
    ensure().postMessage(req);
    emit();
  };

  const finish = () => {
    busySeq = 0;
    clearTimeout(slowTimer);
    status.running = false;
    status.slow = false;
    if (pending) {
      const p = pending;
      pending = undefined;
      start(p.seq, p.line, p.acceptCost);
    } else emit();
  };

  const ensure = (): WorkerLike => {
    if (worker) return worker;
    const w = makeWorker();
    w.onmessage = (ev) => {
      const m = ev.data;
      if (m.seq !== busySeq) return;
      if (m.type === 'progress') {
        status.progress = m.fraction;
        emit();
        return;
      }
      if (m.seq === requested) {
        onAnswer(m.type === 'result' ? { seq: m.seq, result: m.result, ms: m.ms } : { seq: m.seq, error: m.message, ...(m.cost ? { cost: m.cost } : {}) });
      }
      finish();
    };
    w.onerror = (ev) => {
      const seq = busySeq;
      ev.preventDefault?.();
      restart();
      if (seq === requested) onAnswer({ seq, error: `the engine stopped: ${ev.message || 'worker error'}` });
      finish();
    };
    worker = w;
    return w;
  };

  const restart = () => {
    worker?.terminate();
    worker = undefined;
  };

  return {
    /** Ask for a run of the normalized line `line` as request `seq` (increasing); `acceptCost`: even where the engine's
     *  estimate of the work is above its ask limit. */
    run(seq: number, line: Beamline, acceptCost?: boolean) {
      requested = seq;
      status.requested = seq;
      if (busySeq === 0) start(seq, line, acceptCost);
      else if (status.slow) {
        // a long stale run: drop it and start the latest at once
        restart();
        pending = undefined;
        start(seq, line, acceptCost);
      } else pending = { seq, line, ...(acceptCost ? { acceptCost: true } : {}) };
    },
    /** Stop the current run (terminates the worker); the next edit starts a fresh one. */
    cancel() {
      if (busySeq === 0) return;
      restart();
      pending = undefined;
      busySeq = 0;
      clearTimeout(slowTimer);
      status.running = false;
      status.slow = false;
      status.cancelled = true;
      emit();
    },
    dispose() {
      clearTimeout(slowTimer);
      restart();
    },
  };
}
