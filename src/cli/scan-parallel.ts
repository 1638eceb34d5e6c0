/**
 * A scan spread over threads (`spinyard scan --workers N`): the points are cut into chunks in scan order and dealt
 * out to this thread and N − 1 worker threads as each asks for more (workers.ts dealOut); each worker compiles the
 * document once. A point's numbers do not depend on which thread or in what company it was evaluated (every
 * evaluation is a function of the document and the point), and the warnings are numbered by their first appearance
 * in scan order, as a scan in one thread numbers them: the result is the same, bit for bit, for any number of workers.
 */
import { compile, scanIndices, scanParameters, scanPoint, scanResult, RunError, type Plan, type ScanAxis, type ScanPoint, type ScanResult } from '../engine/index.ts';
import { dealOut, startWorker } from './workers.ts';

/** A scan point as a thread hands it over: its warnings by their text. */
export type ScanPointOut = ScanPoint & { warningTexts?: string[] };

/** The points at `indices`, each with its warnings by their text. */
export function scanChunk(plan: Plan, params: ReturnType<typeof scanParameters>, indices: readonly number[][]): ScanPointOut[] {
  const warnings = new Map<string, number>();
  return indices.map((idx) => {
    const p = scanPoint(plan, params, idx, warnings, { costChecked: true });
    const texts = [...warnings.keys()];
    const out: ScanPointOut = { ...p };
    if (p.warnings) {
      out.warningTexts = p.warnings.map((i) => texts[i]);
      delete out.warnings;
    }
    return out;
  });
}

export async function scanParallel(text: string, axes: readonly ScanAxis[], workers: number, onProgress?: (fraction: number) => void, worthMs?: number): Promise<ScanResult> {
  const c = compile(text);
  if (!c.ok) throw new RunError(c.problems.join('\n'));
  const params = scanParameters(c.plan, axes);
  const indices = scanIndices(params.map((p) => p.values.length));
  const outs = await dealOut(indices, workers, () => startWorker('scan-worker', { text, axes }), (chunk) => scanChunk(c.plan, params, chunk),
    onProgress && ((done) => onProgress(done / indices.length)), worthMs);
  const warnings = new Map<string, number>();
  const points: ScanPoint[] = outs.map((p) => {
    const { warningTexts, ...point } = p;
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
