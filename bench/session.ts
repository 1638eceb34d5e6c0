/**
 * `npm run bench -- session [--evaluations N]`: the engine's memory over many evaluations of one compiled line,
 * each with a changed parameter (bench C, analyser M2's roll; bench H, M1's roll on Rb-87), as a scan, a
 * budget or a fit does. Reports the heap after a forced collection at the start and every N/10 evaluations,
 * the time per evaluation and the engine's cache statistics. Needs `node --expose-gc` (the script adds it).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { compile, evaluate } from '../src/engine/plan.ts';
import { clearEngineCaches, engineCacheStats } from '../src/engine/session.ts';

function heapMb(): number {
  (globalThis as { gc?: () => void }).gc?.();
  (globalThis as { gc?: () => void }).gc?.();
  return process.memoryUsage().heapUsed / 2 ** 20;
}

function one(root: string, sample: string, param: string, n: number): string {
  const c = compile(JSON.parse(readFileSync(join(root, 'samples', sample), 'utf8')));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  const plan = c.plan;
  evaluate(plan);
  const h0 = heapMb();
  const lines = [`${sample}, ${param} changed at every evaluation, ${n} evaluations`];
  const t0 = performance.now();
  let last = h0;
  for (let i = 0; i < n; i++) {
    // a new value each time (no two alike): 0 … 180° in n steps, irrational offsets
    evaluate(plan, { [param]: ((i * 0.6180339887) % 1) * Math.PI }, { light: true });
    if ((i + 1) % Math.max(1, Math.floor(n / 10)) === 0) {
      last = heapMb();
      lines.push(`  after ${String(i + 1).padStart(7)}: heap ${last.toFixed(1)} MB (+${(last - h0).toFixed(1)} MB)`);
    }
  }
  const ms = (performance.now() - t0) / n;
  lines.push(`  growth ${(last - h0).toFixed(1)} MB over ${n} evaluations; ${(ms * 1000).toFixed(0)} µs per evaluation (with the heap samples)`);
  for (const s of engineCacheStats()) {
    const size = !Number.isFinite(s.bound) ? `${s.size} made (kept by identity, freed with their keys)` : s.size < 0 ? `at most ${s.bound} per state` : `${s.size}/${s.bound} entries`;
    lines.push(`  cache ${s.name}: ${size}, ${s.hits} hits, ${s.misses} misses, ${s.evictions} evicted`);
  }
  clearEngineCaches();
  return lines.join('\n');
}

export function benchSession(root: string, args: readonly string[]): string {
  const k = args.indexOf('--evaluations');
  const n = k >= 0 ? Number(args[k + 1]) : 100_000;
  if (!Number.isInteger(n) || n < 10) throw new Error(`--evaluations: a whole number of at least 10, not ${args[k + 1]}`);
  if (!(globalThis as { gc?: unknown }).gc) throw new Error('the session bench needs node --expose-gc (npm run bench -- session adds it)');
  return [
    one(root, 'bench-c-roll-calibration.spinyard', 'M2.axis.roll', n),
    one(root, 'bench-h-rb87-mj-then-eigenstate.spinyard', 'M1.axis.roll', Math.max(10, Math.floor(n / 10))),
  ].join('\n');
}
