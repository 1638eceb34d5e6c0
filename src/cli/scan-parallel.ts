/**
 * A scan spread over worker threads (`spinyard scan --workers N`): the points are dealt out in contiguous blocks,
 * each worker compiles the document once and evaluates its block, and the points are put back in scan order. A
 * point's numbers do not depend on which worker or in what company it was evaluated (every evaluation is a function
 * of the document and the point), and the warnings are numbered by their first appearance in scan order, as a scan
 * in one thread numbers them: the result is the same, bit for bit, for any number of workers.
 */
import { compile, scanIndices, scanParameters, scanResult, RunError, type ScanAxis, type ScanPoint, type ScanResult } from '../engine/index.ts';
import type { ScanWorkerReply } from './scan-worker.ts';
import { blocksOf, startWorker } from './workers.ts';

export async function scanParallel(text: string, axes: readonly ScanAxis[], workers: number): Promise<ScanResult> {
  const c = compile(text);
  if (!c.ok) throw new RunError(c.problems.join('\n'));
  const params = scanParameters(c.plan, axes);
  const indices = scanIndices(params.map((p) => p.values.length));
  const blocks = blocksOf(indices, workers);
  const replies = await Promise.all(blocks.map((block) => new Promise<ScanWorkerReply>((resolve, reject) => {
    const worker = startWorker('scan-worker', { text, axes });
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
