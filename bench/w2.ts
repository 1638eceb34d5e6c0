/**
 * `npm run bench -- w2 [--json OUT] [--no-peers]`: workload W2 of ../shared/peers (W1's line with M2 rolled: a
 * 100 × 100 map over F1.field.x and M2.axis.roll), computed by the engine's 2-D scan (src/engine/scan.ts) beside
 * the NumPy peer in the same run. Prints both times and their ratio, and
 * `W2 spinyard points=10000 seconds=<best of 10 after a warm-up, as the peer given --repeat 10> maxdiff_vs_expected=<max |result − w2-expected.json|>`; with
 * `--json OUT` it writes the peer's shape: `b_T`, `alpha_deg`, `result` (100 × 100 × [D1, D2]), `result_shape`.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { compile, scan, type ScanResult } from '../src/engine/index.ts';
import { EvaluationSession } from '../src/engine/replay.ts';

export interface W2Expected { b_T: number[]; alpha_deg: number[]; result: [number, number][][] }

/** W2's map by the engine: the scan result and the 100 × 100 × 2 yields of D1 and D2 (row b, column α). */
export function w2Map(peersDir: string, expected: W2Expected, session = new EvaluationSession()): { scan: ScanResult; result: [number, number][][]; maxdiff: number } {
  const c = compile(readFileSync(join(peersDir, 'w1.spinyard'), 'utf8'));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  const nb = expected.b_T.length, na = expected.alpha_deg.length;
  // the scan's own session, passed to count its walks (src/engine/replay.ts)
  const s = scan(c.plan, [
    { name: 'F1.field.x', from: expected.b_T[0], to: expected.b_T[nb - 1], points: nb },
    { name: 'M2.axis.roll', from: expected.alpha_deg[0] * Math.PI / 180, to: expected.alpha_deg[na - 1] * Math.PI / 180, points: na },
  ], { session });
  const result: [number, number][][] = Array.from({ length: nb }, () => []);
  let maxdiff = 0;
  for (const p of s.points) {
    if (!p.detectors) throw new Error(`W2: point ${p.index.join(', ')} has no result: ${p.error}`);
    const [i, j] = p.index;
    const d1 = p.detectors.find((d) => d.id === 'D1')!.yield, d2 = p.detectors.find((d) => d.id === 'D2')!.yield;
    result[i][j] = [d1, d2];
    maxdiff = Math.max(maxdiff, Math.abs(d1 - expected.result[i][j][0]), Math.abs(d2 - expected.result[i][j][1]));
  }
  return { scan: s, result, maxdiff };
}

const REPEAT = 10;

export function benchW2(peersDir: string, jsonOut: string | null, peers: boolean): string {
  const expected = JSON.parse(readFileSync(join(peersDir, 'w2-expected.json'), 'utf8')) as W2Expected;
  const out: string[] = [];
  const timed = () => {
    const session = new EvaluationSession();
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    const r = w2Map(peersDir, expected, session);
    const c = process.cpuUsage(c0);
    return { ...r, seconds: (performance.now() - t0) / 1000, cpu: (c.user + c.system) / 1e6, walks: session.stats };
  };
  out.push(`load average: ${loadavg().map((x) => x.toFixed(2)).join(', ')}`);
  const first = timed();
  out.push(`W2 first map (cold: the JIT and the caches fill): ${first.seconds.toFixed(3)} s`);
  // a JIT-compiled map reaches its steady speed after a few maps: both sides are timed as the best of REPEAT after a
  // warm-up (the peer's --repeat)
  let best = first;
  for (let i = 0; i < REPEAT; i++) {
    const r = timed();
    if (r.seconds < best.seconds) best = r;
  }
  out.push(`walks of the points: ${best.walks.recorded} whole and recorded, ${best.walks.replayed} replayed from a record, ${best.walks.plain} whole without one (src/engine/replay.ts); ${best.walks.batched} formed from their row's first run without a walk (src/engine/batch.ts)`);
  out.push(`W2 on the engine's 2-D scan, one thread: best of ${REPEAT} = ${best.seconds.toFixed(3)} s for ${expected.b_T.length * expected.alpha_deg.length} points (${(best.seconds * 1000 / (expected.b_T.length * expected.alpha_deg.length)).toFixed(3)} ms per point; CPU ${best.cpu.toFixed(3)} s), max |Δ| vs w2-expected.json = ${best.maxdiff.toExponential(2)} (check 1e-6: ${best.maxdiff <= 1e-6 ? 'pass' : 'FAIL'})`);
  if (peers) {
    const r = spawnSync('/usr/bin/python3', [join(peersDir, 'peer_numpy_w2.py'), '--repeat', String(REPEAT)], { encoding: 'utf8', env: { ...process.env, OPENBLAS_NUM_THREADS: '1' }, timeout: 600_000 });
    const line = (r.stdout ?? '').trim().split('\n').pop() ?? '';
    const m = /points=(\d+) seconds=([0-9.eE+-]+)/.exec(line);
    if (r.status === 0 && m) {
      out.push(`peer ${line}`);
      const ratio = Number(m[2]) / best.seconds;
      out.push(`W2 ratio numpy/spinyard = ${ratio.toFixed(3)} (${ratio >= 1 ? `spinyard ${ratio.toFixed(2)}× faster` : `spinyard ${(1 / ratio).toFixed(1)}× slower`})`);
    } else out.push(`W2 numpy peer did not run: ${(r.stderr ?? '').trim().split('\n').pop() ?? r.status}`);
  }
  if (jsonOut) {
    writeFileSync(jsonOut, `${JSON.stringify({
      workload: 'W2', implementation: 'spinyard', points: expected.b_T.length * expected.alpha_deg.length, b_T: expected.b_T, alpha_deg: expected.alpha_deg,
      columns: ['D1', 'D2'], result: best.result, result_shape: [expected.b_T.length, expected.alpha_deg.length, 2], seconds: best.seconds,
    })}\n`);
    out.push(`wrote ${jsonOut}`);
  }
  out.push(`W2 spinyard points=${expected.b_T.length * expected.alpha_deg.length} seconds=${best.seconds.toFixed(4)} maxdiff_vs_expected=${best.maxdiff.toExponential(3)}`);
  return out.join('\n');
}
