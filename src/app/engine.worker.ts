// The engine's worker: reads the posted document text, runs the line, posts the result (result format
// v1) with the request's sequence number, and progress on the way. The renderer discards stale answers
// and terminates this worker to cancel.

import { readDocument, runEngine } from './core-adapter.ts';
import type { EngineReply, EngineRequest } from './engine-protocol.ts';

const post = (m: EngineReply) => (self as unknown as { postMessage(m: EngineReply): void }).postMessage(m);

self.onmessage = (ev: MessageEvent<EngineRequest>) => {
  const { seq, text } = ev.data;
  const t0 = performance.now();
  try {
    const parsed = readDocument(text);
    if (!parsed.ok) {
      post({ type: 'error', seq, message: parsed.problems.map((p) => `${p.path}: ${p.message}`).join('\n') });
      return;
    }
    let last = 0;
    const result = runEngine(parsed.line, {
      onProgress: (f) => {
        const now = performance.now();
        if (now - last > 50) {
          last = now;
          post({ type: 'progress', seq, fraction: f });
        }
      },
    });
    post({ type: 'result', seq, result, ms: performance.now() - t0 });
  } catch (e) {
    post({ type: 'error', seq, message: (e as Error).message ?? String(e) });
  }
};
