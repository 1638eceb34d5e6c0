// What the engine worker does with a planning request (engine-protocol.ts, PlanRequest): compiles the document
// text it is sent (the compiled plan is kept while the text stays the same, so a second scan of one document
// reuses what the engine derived for the first), then runs a scan point by point or a tolerance budget,
// posting progress at most every 50 ms; a scan's `block` (its share of a scan spread over a pool of workers) runs
// only those points and answers them with the scan's frame (scan-blocks.ts); a budget's `share` likewise evaluates its
// share of the budget's evaluations, and "budget-finish" makes the budget from every share's outcomes. A scan gives the event loop a turn
// every `sliceMs` so that a cancel can arrive; it then stops before its next point and answers "plan-cancelled". A budget runs in one piece
// (the engine's budget has no place to pause); the client terminates the worker to stop it. A fit (the
// measurements' CSV read against the compiled document) and a simulated run likewise run in one piece. Each tool first
// checks the document's line by the engine's cost estimate: above the ask limit it answers with the estimate (the app
// asks), unless the request says `acceptCost`. Kept apart from the worker's global scope so it runs in tests as it
// runs in the worker.

import {
  compile, checkRunCost, CostLimitError, budget, budgetSetup, budgetOutcomes, budgetResult, scanIndices, scanParameters, scanPoint, scanResult, CancelledError, fit, readMeasurements, simulate, parameter,
  displayUnit, type BudgetSetup, type Plan, type RunResult, type ScanPoint, type ScanResult,
} from './core-adapter.ts';
import { blockPoints, scanBlocks } from './scan-blocks.ts';
import { costOf } from './cost-ask.ts';
import type { FitData, PlanReply, PlanRequest } from './engine-protocol.ts';

export interface PlanServerOptions {
  now?: () => number;
  /** Gives the event loop a turn (a message, a cancel, can arrive meanwhile). */
  pause?: () => Promise<void>;
  /** How long a scan runs between two pauses (ms). */
  sliceMs?: number;
  /** How often progress is posted at most (ms). */
  progressMs?: number;
}

export interface PlanServer {
  /** Handles one request; resolves once its answer is posted (a cancel resolves at once). */
  handle(req: PlanRequest): Promise<void>;
}

const defaultPause = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

export function createPlanServer(post: (m: PlanReply) => void, opts: PlanServerOptions = {}): PlanServer {
  const now = opts.now ?? (() => performance.now());
  const pause = opts.pause ?? defaultPause;
  const sliceMs = opts.sliceMs ?? 40;
  const progressMs = opts.progressMs ?? 50;
  let compiled: { text: string; plan: Plan } | undefined;
  const cancelled = new Set<number>();

  const planOf = (text: string): Plan => {
    if (compiled?.text === text) return compiled.plan;
    const r = compile(text);
    if (!r.ok) throw new Error(`the document cannot be read: ${r.problems.join('; ')}`);
    compiled = { text, plan: r.plan };
    setup = undefined;
    return r.plan;
  };

  // the evaluations of the last budget shared out (its share, then its finish, find them once)
  let setup: { plan: Plan; key: string; value: BudgetSetup } | undefined;
  const setupOf = (plan: Plan, req: { draws: number; seed: number; acceptCost?: boolean }): BudgetSetup => {
    const key = `${req.draws} ${req.seed} ${req.acceptCost === true}`;
    if (setup?.plan === plan && setup.key === key) return setup.value;
    const value = budgetSetup(plan, { draws: req.draws, seed: req.seed, ...accept(req) });
    setup = { plan, key, value };
    return value;
  };

  /** The document's line by the engine's cost estimate, before a scan's points (each then skips its own): a
   *  CostLimitError above the ask limit (unless `acceptCost`) or the hard one. A budget, fit or simulated run checks
   *  its line in the engine. */
  const checkCost = (plan: Plan, acceptCost: boolean | undefined) => checkRunCost(plan.line, acceptCost === true);
  const accept = (req: { acceptCost?: boolean }) => (req.acceptCost ? { acceptCost: true } : {});

  const progress = (seq: number) => {
    let last = -Infinity;
    return (fraction: number) => {
      const t = now();
      if (t - last >= progressMs || fraction >= 1) {
        last = t;
        post({ type: 'plan-progress', seq, fraction });
      }
    };
  };

  const runScan = async (req: PlanRequest & { kind: 'scan' }) => {
    const t0 = now();
    const plan = planOf(req.text);
    const params = scanParameters(plan, req.axes);
    checkCost(plan, req.acceptCost);
    const all = scanIndices(params.map((p) => p.values.length));
    // a block of a scan spread over a pool: its share of the points only
    const indices = req.block ? all.slice(req.block.start, req.block.end) : all;
    const warnings = new Map<string, number>();
    const points: ScanPoint[] = [];
    const tell = progress(req.seq);
    const isCancelled = () => cancelled.has(req.seq);
    // checked once above (checkCost): the points are not estimated again
    const opts = { isCancelled, costChecked: true };
    let slice = now();
    for (let k = 0; k < indices.length; k++) {
      if (now() - slice >= sliceMs) {
        await pause();
        slice = now();
      }
      if (isCancelled()) throw new CancelledError('scan: cancelled');
      points.push(scanPoint(plan, params, indices[k], warnings, opts));
      tell((k + 1) / indices.length);
    }
    const titled = (r: ScanResult) => {
      if (req.title !== undefined && req.title !== '') r.title = req.title;
      return r;
    };
    if (req.block) {
      // the frame without points (its warnings the document's own) and the points with their warnings by text
      const head = titled(scanResult(plan, params, [], new Map()));
      post({ type: 'scan-block', seq: req.seq, block: req.block, head, points: blockPoints(points, [...warnings.keys()]), ms: now() - t0 });
      return;
    }
    post({ type: 'scan-result', seq: req.seq, result: titled(scanResult(plan, params, points, warnings)), ms: now() - t0 });
  };

  const runBudget = (req: PlanRequest & { kind: 'budget' }) => {
    const t0 = now();
    const plan = planOf(req.text);
    if (req.share) {
      // a share of a budget spread over a pool: its evaluations' outcomes, in order
      const setup = setupOf(plan, req);
      // the contiguous blocks a scan's points are dealt out in (scan-blocks.ts), here of the budget's evaluations
      const block = scanBlocks(setup.sets.length, req.share.count)[req.share.index];
      const sets = block ? setup.sets.slice(block.start, block.end) : [];
      const tell = progress(req.seq);
      let done = 0;
      const outcomes = budgetOutcomes(plan, setup.ids, sets, { isCancelled: () => cancelled.has(req.seq) }, () => tell(++done / sets.length));
      post({ type: 'budget-block', seq: req.seq, share: req.share, outcomes, ms: now() - t0 });
      return;
    }
    const result = budget(plan, { draws: req.draws, seed: req.seed, onProgress: progress(req.seq), isCancelled: () => cancelled.has(req.seq), ...accept(req) });
    post({ type: 'budget-result', seq: req.seq, result, ms: now() - t0 });
  };

  /** The budget made from the outcomes of every share, in order (the setup is the one the shares were found from). */
  const finishBudget = (req: PlanRequest & { kind: 'budget-finish' }) => {
    const t0 = now();
    const plan = planOf(req.text);
    // (budgetResult refuses outcomes that are not one per evaluation)
    post({ type: 'budget-result', seq: req.seq, result: budgetResult(plan, setupOf(plan, req), req.outcomes), ms: now() - t0 });
  };

  const runFit = (req: PlanRequest & { kind: 'fit' }) => {
    const t0 = now();
    const plan = planOf(req.text);
    const m = readMeasurements(req.csv, plan, req.fileName);
    const result = fit(plan, m, { free: req.free, state: req.state, isCancelled: () => cancelled.has(req.seq), ...accept(req) });
    const columns = m.columns.map((c) => {
      const slot = parameter(plan, c.name);
      const u = displayUnit(slot.dimension);
      return { name: slot.name, unit: u.unit, factor: u.factor };
    });
    const data: FitData = { columns, readings: m.readings.map((r) => ({ line: r.line, detector: r.detector, values: columns.map((c) => r.setPoints[c.name]) })) };
    post({ type: 'fit-result', seq: req.seq, result, data, ms: now() - t0 });
  };

  const runSimulate = (req: PlanRequest & { kind: 'simulate' }) => {
    const t0 = now();
    const plan = planOf(req.text);
    const isCancelled = () => cancelled.has(req.seq);
    // the engine's numbers beside the simulated ones: the run the atoms were drawn along
    let run: RunResult | undefined;
    const result = simulate(plan, { atoms: req.atoms, seed: req.seed, ...(req.bins !== undefined ? { bins: req.bins } : {}), isCancelled, ...accept(req), onRun: (r) => (run = r) });
    const engine = run!.detectors.map((d) => {
      const profiles = run!.leaves.filter((l) => l.target === d.id && l.profile).map((l) => l.profile!);
      return { id: d.id, signal: d.signal, ...(profiles.length ? { profiles } : {}) };
    });
    post({ type: 'simulate-result', seq: req.seq, result, engine, ms: now() - t0 });
  };

  return {
    async handle(req) {
      if (req.kind === 'cancel') {
        cancelled.add(req.seq);
        return;
      }
      try {
        if (req.kind === 'scan') await runScan(req);
        else if (req.kind === 'budget') runBudget(req);
        else if (req.kind === 'budget-finish') finishBudget(req);
        else if (req.kind === 'fit') runFit(req);
        else runSimulate(req);
      } catch (e) {
        if (e instanceof CancelledError) post({ type: 'plan-cancelled', seq: req.seq });
        else {
          // refused by the engine's cost estimate: the estimate goes with the message (the app asks "Run anyway")
          const cost = e instanceof CostLimitError ? costOf(e) : undefined;
          post({ type: 'plan-error', seq: req.seq, message: (e as Error).message ?? String(e), ...(cost ? { cost } : {}) });
        }
      } finally {
        cancelled.delete(req.seq);
      }
    },
  };
}
