/**
 * A worker thread of `spinyard scan --workers N` (scan-parallel.ts): compiles the document it is given once and
 * evaluates the scan points it is sent, in order, returning each point and the warnings by their text.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { compile, scanParameters, scanPoint, type ScanAxis, type ScanPoint } from '../engine/index.ts';

export interface ScanWorkerData { text: string; axes: ScanAxis[] }
export interface ScanWorkerJob { indices: number[][] }
export interface ScanWorkerReply { points: (ScanPoint & { warningTexts?: string[] })[]; error?: string }

const { text, axes } = workerData as ScanWorkerData;
const c = compile(text);
parentPort!.on('message', (job: ScanWorkerJob) => {
  if (!c.ok) {
    parentPort!.postMessage({ points: [], error: c.problems.join('\n') } satisfies ScanWorkerReply);
    return;
  }
  try {
    const params = scanParameters(c.plan, axes);
    const warnings = new Map<string, number>();
    const points = job.indices.map((idx) => {
      const p = scanPoint(c.plan, params, idx, warnings, { costChecked: true });
      const texts = [...warnings.keys()];
      const out: ScanPoint & { warningTexts?: string[] } = { ...p };
      if (p.warnings) {
        out.warningTexts = p.warnings.map((i) => texts[i]);
        delete out.warnings;
      }
      return out;
    });
    parentPort!.postMessage({ points } satisfies ScanWorkerReply);
  } catch (e) {
    parentPort!.postMessage({ points: [], error: (e as Error).message } satisfies ScanWorkerReply);
  }
});
