// What the engine worker does with one request: runs the normalized line it was sent (runLine of the
// engine's index, through the core adapter) and posts the result with the request's sequence number,
// and progress on the way (at most every 50 ms). A run the engine refuses by its cost estimate (CostLimitError)
// answers with the estimate beside the message; `acceptCost` runs it past the ask limit. Kept apart from the
// worker's global scope so it runs in tests as it runs in the worker.

import { runEngine, CostLimitError, type Beamline } from './core-adapter.ts';
import type { EngineReply, EngineRequest } from './engine-protocol.ts';
import { costOf } from './cost-ask.ts';

/** Freezes a line that arrived as a structured clone (the clone of a frozen object is not frozen): the
 *  engine keeps what it derives from a line by identity, and a line is never changed in place. */
function frozen<T>(o: T): T {
  if (o !== null && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o as Record<string, unknown>)) frozen(v);
  }
  return o;
}

/** Runs request `req` and posts the replies to `post`. */
export function serveEngineRequest(req: EngineRequest, post: (m: EngineReply) => void, now: () => number = () => performance.now()): void {
  const { seq } = req;
  const t0 = now();
  try {
    const line: Beamline = frozen(req.line);
    let last = 0;
    const result = runEngine(line, {
      ...(req.acceptCost ? { acceptCost: true } : {}),
      onProgress: (f) => {
        const t = now();
        if (t - last > 50) {
          last = t;
          post({ type: 'progress', seq, fraction: f });
        }
      },
    });
    post({ type: 'result', seq, result, ms: now() - t0 });
  } catch (e) {
    // a run refused by its estimated cost carries the estimate: the app asks whether to run it anyway
    const cost = e instanceof CostLimitError ? costOf(e) : undefined;
    post({ type: 'error', seq, message: (e as Error).message ?? String(e), ...(cost ? { cost } : {}) });
  }
}
