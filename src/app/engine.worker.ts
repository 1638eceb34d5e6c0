// The engine's worker: runs the normalized line the renderer posts (validated there, once per edit) and
// posts the result (result format v1) with the request's sequence number, and progress on the way
// (engine-serve.ts). The renderer discards stale answers and terminates this worker to cancel a run.
// A planning request (a scan or a tolerance budget of the document's text, plan-serve.ts) is told apart by
// its `kind`; a scan stops at a cancel message between two points.

import { serveEngineRequest } from './engine-serve.ts';
import { createPlanServer } from './plan-serve.ts';
import { isPlanRequest, type WorkerReply, type WorkerRequest } from './engine-protocol.ts';

const post = (m: WorkerReply) => (self as unknown as { postMessage(m: WorkerReply): void }).postMessage(m);
const planner = createPlanServer(post);

self.onmessage = (ev: MessageEvent<WorkerRequest>) => {
  const m = ev.data;
  if (isPlanRequest(m)) void planner.handle(m);
  else serveEngineRequest(m, post);
};
