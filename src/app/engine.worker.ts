// The engine's worker: runs the normalized line the renderer posts (validated there, once per edit) and
// posts the result (result format v1) with the request's sequence number, and progress on the way
// (engine-serve.ts). The renderer discards stale answers and terminates this worker to cancel.

import { serveEngineRequest } from './engine-serve.ts';
import type { EngineReply, EngineRequest } from './engine-protocol.ts';

const post = (m: EngineReply) => (self as unknown as { postMessage(m: EngineReply): void }).postMessage(m);

self.onmessage = (ev: MessageEvent<EngineRequest>) => serveEngineRequest(ev.data, post);
