// The renderer's side of the planning workers (plan-serve.ts): one request at a time, with progress and cancel.
// A scan is spread over a pool of `poolSize` workers (scan-blocks.ts): each evaluates a contiguous block of the
// points, the blocks are merged in scan order (the result is the one worker's, bit for bit), the progress is the
// points done over all blocks and Cancel stops every block. A budget of BUDGET_SHARE_FROM draws or more is shared out
// likewise (each worker finds the same evaluations and evaluates its share; the first then makes the budget from every
// share's outcomes in order: the one worker's budget, bit for bit). A shorter budget, a fit and a simulated run go to
// the first worker of the pool. Cancel asks the
// workers to stop (a scan stops before its next point and keeps its compiled document for the next request); when
// no answer comes within `graceMs`, or for a budget, a fit or a simulated run, which cannot pause, the busy workers
// are terminated and fresh ones start with the next request. A new request while one runs replaces it. Answers of a
// request that is not the current one are discarded.

import type { BudgetOutcome, BudgetResult, FitResult, ScanResult, SimulationResult } from './core-adapter.ts';
import type {
  BudgetShare, CostAsk, EngineSignal, FitData, FitParameterRequest, PlanReply, PlanRequest, ScanBlock, WorkerReply,
} from './engine-protocol.ts';
import type { WorkerLike } from './engine-client.ts';
import { mergeScanBlocks, scanBlocks } from './scan-blocks.ts';

/** `acceptCost`: run even where the engine's estimate of the work is above its ask limit (the user said "Run anyway"). */
export type PlanJob = (
  | { kind: 'scan'; text: string; axes: (PlanRequest & { kind: 'scan' })['axes']; title?: string }
  | { kind: 'budget'; text: string; draws: number; seed: number }
  | { kind: 'fit'; text: string; csv: string; fileName: string; free: FitParameterRequest[]; state: boolean }
  | { kind: 'simulate'; text: string; atoms: number; seed: number; bins?: number }
) & { acceptCost?: boolean };

export type PlanKind = PlanJob['kind'];

export interface PlanStatus {
  running: boolean;
  kind?: PlanKind;
  seq: number;
  progress: number;
  /** A cancel was asked for and has not been answered yet. */
  cancelling: boolean;
  /** How many workers share the running request (a scan's blocks; 1 otherwise). */
  workers?: number;
}

export type PlanAnswer =
  | { seq: number; kind: 'scan'; result: ScanResult; ms: number; workers: number }
  | { seq: number; kind: 'budget'; result: BudgetResult; ms: number; workers: number }
  | { seq: number; kind: 'fit'; result: FitResult; data: FitData; ms: number }
  | { seq: number; kind: 'simulate'; result: SimulationResult; engine: EngineSignal[]; ms: number }
  /** `cost`: the engine refused the work as too expensive (ask "Run anyway" unless `hard`); `job` is the request, to start again. */
  | { seq: number; kind: PlanKind; error: string; cost?: CostAsk; job: PlanJob }
  | { seq: number; kind: PlanKind; cancelled: true };

export interface PlanClient {
  /** Starts `job` (replacing a running one); returns its sequence number. */
  start(job: PlanJob): number;
  cancel(): void;
  dispose(): void;
}

/** The share of the current request one worker has: the whole request, a block of a scan, a share of a budget's
 *  evaluations, or the making of a budget from every share's outcomes (`finish`). */
interface Part {
  worker: number;
  block?: ScanBlock;
  share?: BudgetShare;
  finish?: boolean;
  fraction: number;
  done: boolean;
  cancelled?: boolean;
  reply?: PlanReply & { type: 'scan-block' };
  outcomes?: BudgetOutcome[];
}

/** A budget of this many draws or more is shared out over a pool of two workers or more (fewer: the first worker). */
export const BUDGET_SHARE_FROM = 200;

export function createPlanClient(
  makeWorker: () => WorkerLike,
  onAnswer: (a: PlanAnswer) => void,
  onStatus: (s: PlanStatus) => void,
  graceMs = 400,
  poolSize = 1,
  now: () => number = () => performance.now(),
): PlanClient {
  const size = Math.max(1, Math.floor(poolSize));
  const workers: (WorkerLike | undefined)[] = [];
  let seq = 0;
  let graceTimer: ReturnType<typeof setTimeout> | undefined;
  let parts: Part[] = [];
  let job: PlanJob | undefined;
  let t0 = 0;
  const status: PlanStatus = { running: false, seq: 0, progress: 0, cancelling: false };
  const emit = () => onStatus({ ...status });

  const end = (i: number) => {
    workers[i]?.terminate();
    workers[i] = undefined;
  };
  /** Ends the workers still busy with the current request (fresh ones start with the next). */
  const endBusy = () => {
    for (const p of parts) if (!p.done) end(p.worker);
  };

  const done = (a: PlanAnswer) => {
    clearTimeout(graceTimer);
    status.running = false;
    status.cancelling = false;
    parts = [];
    onAnswer(a);
    emit();
  };

  const fail = (message: string, cost?: CostAsk) => {
    endBusy();
    done({ seq: status.seq, kind: status.kind!, error: message, ...(cost ? { cost } : {}), job: job! });
  };

  /** A block finished or stopped: the answer once every block has. */
  const settle = () => {
    if (parts.some((p) => !p.done)) return;
    if (parts.some((p) => p.cancelled)) return done({ seq: status.seq, kind: 'scan', cancelled: true });
    const replies = parts.map((p) => p.reply!);
    const result = mergeScanBlocks(replies[0].head, replies.map((r) => r.points));
    done({ seq: status.seq, kind: 'scan', result, ms: now() - t0, workers: parts.length });
  };

  const onReply = (i: number, r: PlanReply) => {
    const part = parts.find((p) => p.worker === i && !p.done);
    if (!part) return;
    const kind = status.kind!;
    switch (r.type) {
      case 'plan-progress': {
        part.fraction = r.fraction;
        const total = parts.reduce((n, p) => n + (p.block ? p.block.end - p.block.start : 1), 0);
        status.progress = parts.reduce((n, p) => n + p.fraction * (p.block ? p.block.end - p.block.start : 1), 0) / total;
        emit();
        return;
      }
      case 'scan-block':
        part.done = true;
        part.fraction = 1;
        part.reply = r;
        return settle();
      case 'scan-result':
        part.done = true;
        return done({ seq: r.seq, kind: 'scan', result: r.result, ms: r.ms, workers: 1 });
      case 'budget-block': {
        part.done = true;
        part.fraction = 1;
        part.outcomes = r.outcomes;
        if (parts.some((p) => !p.done)) return;
        // every share is in: the first worker makes the budget from their outcomes, in order (the parts are in the
        // shares' order)
        const b = job as PlanJob & { kind: 'budget' };
        const outcomes = parts.flatMap((p) => p.outcomes!);
        parts = [{ worker: 0, finish: true, fraction: 1, done: false }];
        ensure(0).postMessage({ kind: 'budget-finish', seq: status.seq, text: b.text, draws: b.draws, seed: b.seed, outcomes, ...(b.acceptCost ? { acceptCost: true } : {}) } satisfies PlanRequest);
        return;
      }
      case 'budget-result':
        part.done = true;
        return done({ seq: r.seq, kind: 'budget', result: r.result, ms: part.finish ? now() - t0 : r.ms, workers: status.workers ?? 1 });
      case 'fit-result':
        part.done = true;
        return done({ seq: r.seq, kind: 'fit', result: r.result, data: r.data, ms: r.ms });
      case 'simulate-result':
        part.done = true;
        return done({ seq: r.seq, kind: 'simulate', result: r.result, engine: r.engine, ms: r.ms });
      case 'plan-error':
        // one block that fails fails the scan: the others are ended
        part.done = true;
        return fail(r.message, r.cost);
      case 'plan-cancelled':
        part.done = true;
        part.cancelled = true;
        if (parts.length === 1) return done({ seq: r.seq, kind, cancelled: true });
        return settle();
    }
  };

  const ensure = (i: number): WorkerLike => {
    const have = workers[i];
    if (have) return have;
    const w = makeWorker();
    w.onmessage = (ev) => {
      const m = ev.data as WorkerReply;
      if (workers[i] !== w || !('seq' in m) || m.seq !== status.seq || !status.running) return;
      onReply(i, m as PlanReply);
    };
    w.onerror = (ev) => {
      ev.preventDefault?.();
      if (workers[i] !== w) return;
      const busy = status.running && parts.some((p) => p.worker === i && !p.done);
      end(i);
      if (busy) {
        for (const p of parts) if (p.worker === i) p.done = true;
        fail(`the engine stopped: ${ev.message || 'worker error'}`);
      }
    };
    workers[i] = w;
    return w;
  };

  const stopNow = () => {
    endBusy();
    done({ seq: status.seq, kind: status.kind!, cancelled: true });
  };

  return {
    start(next) {
      if (status.running) {
        clearTimeout(graceTimer);
        endBusy();
      }
      seq += 1;
      job = next;
      t0 = now();
      const accept = next.acceptCost ? { acceptCost: true } : {};
      // a scan of two points or more on a pool of two workers or more: a block each; anything else whole on the first
      const total = next.kind === 'scan' ? next.axes.reduce((n, a) => n * a.points, 1) : 1;
      const blocks = size > 1 && Number.isSafeInteger(total) && total > 1 ? scanBlocks(total, size) : [];
      // a long budget on a pool of two workers or more: a share of its evaluations each
      const shares = next.kind === 'budget' && size > 1 && next.draws >= BUDGET_SHARE_FROM ? size : 1;
      parts = blocks.length > 1 ? blocks.map((block, i) => ({ worker: i, block, fraction: 0, done: false }))
        : shares > 1 ? Array.from({ length: shares }, (_, i) => ({ worker: i, share: { index: i, count: shares }, fraction: 0, done: false }))
        : [{ worker: 0, fraction: 0, done: false }];
      Object.assign(status, { running: true, kind: next.kind, seq, progress: 0, cancelling: false, workers: parts.length });
      for (const part of parts) {
        let req: PlanRequest;
        if (next.kind === 'scan') {
          req = {
            kind: 'scan', seq, text: next.text, axes: next.axes, ...(next.title !== undefined ? { title: next.title } : {}),
            ...(part.block ? { block: part.block } : {}), ...accept,
          };
        } else {
          const { acceptCost: _a, ...rest } = next;
          req = { ...rest, seq, ...(part.share ? { share: part.share } : {}), ...accept } as PlanRequest;
        }
        ensure(part.worker).postMessage(req);
      }
      emit();
      return seq;
    },
    cancel() {
      if (!status.running || status.cancelling) return;
      // a budget, a fit and a simulated run cannot pause: the worker is ended at once
      if (status.kind !== 'scan') return stopNow();
      status.cancelling = true;
      const req: PlanRequest = { kind: 'cancel', seq: status.seq };
      for (const p of parts) if (!p.done) workers[p.worker]?.postMessage(req);
      emit();
      const s = status.seq;
      graceTimer = setTimeout(() => {
        if (status.running && status.seq === s) stopNow();
      }, graceMs);
    },
    dispose() {
      clearTimeout(graceTimer);
      for (let i = 0; i < workers.length; i++) end(i);
    },
  };
}
