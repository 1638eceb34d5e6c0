/**
 * Worker threads of the planning commands (`spinyard scan --workers N`, `spinyard budget --workers N`): a worker runs
 * one of the command line's worker modules, the built one beside the built command line or, where this file runs as
 * TypeScript (tsx, the tests), a small module that registers tsx's loader in the worker and imports the source.
 */
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';

export function startWorker(name: 'scan-worker' | 'budget-worker', workerData: unknown): Worker {
  const here = import.meta.url;
  if (!here.endsWith('.ts')) return new Worker(new URL(`./${name}.mjs`, here), { workerData });
  // the ESM entry of tsx's API (its package.json "./esm/api" → "import"), found from its package folder
  const pkg = createRequire(here).resolve('tsx/package.json');
  const api = pathToFileURL(join(dirname(pkg), 'dist', 'esm', 'api', 'index.mjs')).href;
  const source = new URL(`./${name}.ts`, here).href;
  const boot = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(source)}); });`;
  return new Worker(boot, { eval: true, workerData });
}

/** Contiguous blocks of `items` for at most `workers` workers (none empty). */
export function blocksOf<T>(items: readonly T[], workers: number): T[][] {
  const n = Math.max(1, Math.min(workers, items.length));
  const size = Math.ceil(items.length / n);
  return Array.from({ length: n }, (_, w) => items.slice(w * size, (w + 1) * size)).filter((b) => b.length);
}
