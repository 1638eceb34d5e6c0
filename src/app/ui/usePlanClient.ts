// The planning panels' one client setup (plan-client.ts): the client made once per panel (with `poolSize` workers for
// a scan), its status as state, the latest answer handler, the workers ended when the panel goes; and a refusal by the
// engine's cost estimate handed to `onCost` (the app's "Run anyway" / "Don't run" question), whose "Run anyway" starts
// the same request again with acceptCost. The panel hears every answer, the refusal too (its message stays in the
// panel when the user does not run it).
import { useEffect, useMemo, useRef, useState } from 'react';
import { createPlanClient, type PlanAnswer, type PlanClient, type PlanStatus } from '../plan-client.ts';
import type { WorkerLike } from '../engine-client.ts';
import { asksFirst, type CostQuestion } from '../cost-ask.ts';

export interface PlanClientOptions {
  /** Workers a scan is spread over (1: one worker). */
  poolSize?: number;
  /** Asks whether to run work the engine refused by its cost estimate. */
  onCost?(q: CostQuestion): void;
}

export function usePlanClient(makeWorker: () => WorkerLike, onAnswer: (a: PlanAnswer) => void, opts: PlanClientOptions = {}): { client: PlanClient; status: PlanStatus } {
  const [status, setStatus] = useState<PlanStatus>({ running: false, seq: 0, progress: 0, cancelling: false });
  const latest = useRef({ makeWorker, onAnswer, onCost: opts.onCost });
  latest.current = { makeWorker, onAnswer, onCost: opts.onCost };
  const poolSize = opts.poolSize ?? 1;
  const client = useMemo(() => {
    const c: PlanClient = createPlanClient(() => latest.current.makeWorker(), (a) => {
      latest.current.onAnswer(a);
      if ('error' in a && asksFirst(a.cost)) {
        const { job, cost, kind } = a;
        latest.current.onCost?.({ what: kind, cost, runAnyway: () => c.start({ ...job, acceptCost: true }) });
      }
    }, setStatus, 400, poolSize);
    return c;
  }, [poolSize]);
  useEffect(() => () => client.dispose(), [client]);
  return { client, status };
}
