/**
 * A scan spread over worker threads (`spinyard scan --workers N`): the points are dealt out in contiguous blocks,
 * each worker compiles the document once and evaluates its block, and the points are put back in scan order. A
 * point's numbers do not depend on which worker or in what company it was evaluated (every evaluation is a function
 * of the document and the point), and the warnings are numbered by their first appearance in scan order, as a scan
 * in one thread numbers them: the result is the same, bit for bit, for any number of workers.
 */
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { compile, scanIndices, scanParameters, scanResult, RunError, type ScanAxis, type ScanPoint, type ScanResult } from '../engine/index.ts';
import type { ScanWorkerReply } from './scan-worker.ts';

/**
 * A worker running scan-worker: the built module beside the built command line, or, where this file runs as
 * TypeScript (tsx, the tests), a small module that registers tsx's loader in the worker and imports the source.
 */
function startWorker(workerData: unknown): Worker {
  const here = import.meta.url;
  if (!here.endsWith('.ts')) return new Worker(new URL('./scan-worker.mjs', here), { workerData });
  // the ESM entry of tsx's API (its package.json "./esm/api" → "import"), found from its package folder
  const pkg = createRequire(here).resolve('tsx/package.json');
  const api = pathToFileURL(join(dirname(pkg), 'dist', 'esm', 'api', 'index.mjs')).href;
  const source = new URL('./scan-worker.ts', here).href;
  const boot = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(source)}); });`;
  return new Worker(boot, { eval: true, workerData });
}

export async function scanParallel(text: string, axes: readonly ScanAxis[], workers: number): Promise<ScanResult> {
  const c = compile(text);
  if (!c.ok) throw new RunError(c.problems.join('\n'));
  const params = scanParameters(c.plan, axes);
  const indices = scanIndices(params.map((p) => p.values.length));
  const n = Math.max(1, Math.min(workers, indices.length));
  const size = Math.ceil(indices.length / n);
  const blocks = Array.from({ length: n }, (_, w) => indices.slice(w * size, (w + 1) * size)).filter((b) => b.length);
  const replies = await Promise.all(blocks.map((block) => new Promise<ScanWorkerReply>((resolve, reject) => {
    const worker = startWorker({ text, axes });
    worker.once('message', (m: ScanWorkerReply) => {
      resolve(m);
      void worker.terminate();
    });
    worker.once('error', reject);
    worker.postMessage({ indices: block });
  })));
  const failed = replies.find((r) => r.error);
  if (failed) throw new RunError(failed.error!);
  const warnings = new Map<string, number>();
  const points: ScanPoint[] = replies.flatMap((r) => r.points).map((p) => {
    const { warningTexts, ...point } = p as ScanPoint & { warningTexts?: string[] };
    if (warningTexts) {
      point.warnings = warningTexts.map((t) => {
        let i = warnings.get(t);
        if (i === undefined) warnings.set(t, (i = warnings.size));
        return i;
      }).sort((a, b) => a - b);
    }
    return point;
  });
  return scanResult(c.plan, params, points, warnings);
}
