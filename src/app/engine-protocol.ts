// Messages between the renderer and the engine worker.
import type { RunResultView } from './results.ts';

export interface EngineRequest {
  seq: number;
  /** The document as file text (the worker reads it as a file would be read). */
  text: string;
}

export type EngineReply =
  | { type: 'progress'; seq: number; fraction: number }
  | { type: 'result'; seq: number; result: RunResultView; ms: number }
  | { type: 'error'; seq: number; message: string };
