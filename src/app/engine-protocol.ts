// Messages between the renderer and the engine worker.
import type { Beamline } from './core-adapter.ts';
import type { RunResultView } from './results.ts';

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
