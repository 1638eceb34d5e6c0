/**
 * A worker thread of `spinyard scan --workers N` (scan-parallel.ts): compiles the document it is given and reads the
 * scan's parameters once, then evaluates the chunks of scan points it is sent, returning each point with its warnings
 * by their text.
 */
import { workerData } from 'node:worker_threads';
import { compile, scanParameters, type ScanAxis } from '../engine/index.ts';
import { scanChunk } from './scan-parallel.ts';
import { serveChunks } from './workers.ts';

export interface ScanWorkerData { text: string; axes: ScanAxis[] }

const { text, axes } = workerData as ScanWorkerData;
const c = compile(text);
const params = c.ok ? scanParameters(c.plan, axes) : [];
serveChunks((indices: number[][]) => (c.ok ? scanChunk(c.plan, params, indices) : []), c.ok ? undefined : c.problems.join('\n'));
