/**
 * `npm run bench -- w3 [--json OUT] [--no-peers]`: workload W3 of ../shared/peers (10⁶ silver atoms through a
 * collimator and one magnet to a detector plane), simulated by the engine (src/engine/simulate.ts), beside the
 * NumPy peer in the same run. Prints `W3 spinyard points=1000000 seconds=<best of 3> maxdiff_vs_expected=<x>`, x
 * the largest |mean z − analytic|/SE over the two ports as the peer defines it, and the χ² of the 2 × 202
 * (port, cell) counts against w3-expected.json (cells expecting ≥ 5 counts, the rest pooled).
 *
 * Four ways, each timed as the best of 3 (wall and the process's CPU time, all threads) and each including the
 * harness's own histogram and sums (typed arrays), as the peer's time includes its own: `simulate` with a callback
 * per hit (as `spinyard simulate --hits` takes them); `simulation` in one thread, the histogram from the tally's
 * hits (the whole result, hit maps included); the same without hit maps, the hits histogrammed as each sub-block of
 * atoms hands them out (`maps: false`, `onHits`: what the workload asks for, counts, histograms and moments, and
 * nothing more, as the peer computes it); and the whole result with the blocks split between this thread and a
 * worker thread (bench/w3-worker.ts), each making its own simulation of the line. The four must give the same
 * histogram to the count; the seconds printed last are the one-thread run's without maps (the ratio line gives
 * both one-thread figures).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { spawnSync } from 'node:child_process';
import { MessageChannel, Worker, receiveMessageOnPort } from 'node:worker_threads';
import { compile } from '../src/engine/index.ts';
import { simulate, simulation, type SimulationTally } from '../src/engine/simulate.ts';
import { chiSquareSurvival } from '../src/physics/special.ts';
import { W3_DOC } from '../test/fixtures/w3-line.ts';


export function benchW3(peersDir: string, jsonOut: string | null, peers: boolean): string {
  const expected = JSON.parse(readFileSync(join(peersDir, 'w3-expected.json'), 'utf8')) as {
    ports: string[]; mean_z_m: number[]; bin_edges_m: number[]; fractions: number[][];
  };
  const c = compile(W3_DOC);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  const atoms = 1_000_000;
  const edges = expected.bin_edges_m;
  const lo = edges[0], hi = edges[edges.length - 1], nb = edges.length - 1;
  const port = (d: string) => (d === 'DP' ? 0 : 1);
  // each port's cells (underflow, nb bins, overflow) and its Σz, Σz², n in typed arrays, as the peer keeps its own
  const cells = [new Float64Array(nb + 2), new Float64Array(nb + 2)];
  const acc = [new Float64Array(3), new Float64Array(3)];
  const scale = nb / (hi - lo);
  let hist: number[][] = [];
  const reset = () => {
    cells.forEach((c) => c.fill(0));
    acc.forEach((a) => a.fill(0));
  };
  const add = (p: number, z: number) => {
    const a = acc[p];
    a[0] += z;
    a[1] += z * z;
    a[2]++;
    cells[p][cellOf(z, lo, hi, nb, scale)]++;
  };
  // from the tallies: each chunk of hits in a loop of its own (the same cells and sums, in the same order, as add)
  const addTallies = (ids: string[], tallies: SimulationTally[]) => {
    for (const t of [...tallies].sort((a, b) => a.first - b.first)) {
      t.hits.forEach((h, d) => {
        const p = port(ids[d]);
        for (const chunk of h.z) histogramChunk(chunk, 0, chunk.length, cells[p], acc[p], lo, hi, nb, scale);
      });
    }
  };
  const ways: Record<string, () => void> = {
    'simulate, a callback per hit': () => {
      reset();
      simulate(c.plan, { atoms, seed: 7, onHit: (d, _x, z) => add(port(d), z) });
    },
    'simulation, one thread': () => {
      reset();
      const s = simulation(c.plan, { atoms, seed: 7 });
      const t = s.run(0, s.blocks);
      const r = s.finish([t]);
      addTallies(r.detectors.map((d) => d.id), [t]);
    },
    // what the workload asks for and no more: counts, histograms and moments, the hits taken as each sub-block gives
    // them (no hit maps, no hits kept)
    'simulation, one thread, no maps': () => {
      reset();
      const s = simulation(c.plan, {
        atoms, seed: 7, maps: false,
        onHits: (d, _x, z, from, n) => histogramChunk(z, from, from + n, cells[port(d)], acc[port(d)], lo, hi, nb, scale),
      });
      s.finish([s.run(0, s.blocks)]);
    },
  };
  // the second thread: started once (as a host keeps its pool), waited for through a shared flag
  const worker = startWorker({ doc: W3_DOC, atoms, seed: 7 });
  if (worker) {
    ways['simulation, two threads'] = () => {
      reset();
      const s = simulation(c.plan, { atoms, seed: 7 });
      const half = Math.ceil(s.blocks / 2);
      const seen = Atomics.load(worker.flag, 0);
      worker.port.postMessage({ first: half, end: s.blocks });
      const mine = s.run(0, half);
      Atomics.wait(worker.flag, 0, seen);
      const theirs = receiveMessageOnPort(worker.port)!.message as SimulationTally;
      const r = s.finish([mine, theirs]);
      addTallies(r.detectors.map((d) => d.id), [mine, theirs]);
    };
  }
  const timings: string[] = [];
  const hists: string[] = [];
  let best = Infinity, withMaps = Infinity;
  for (const [name, run] of Object.entries(ways)) {
    run();
    let wall = Infinity, cpu = Infinity;
    for (let i = 0; i < 3; i++) {
      const c0 = process.cpuUsage(), t0 = performance.now();
      run();
      const d = process.cpuUsage(c0);
      wall = Math.min(wall, (performance.now() - t0) / 1000);
      cpu = Math.min(cpu, (d.user + d.system) / 1e6);
    }
    hist = cells.map((c) => Array.from(c));
    hists.push(JSON.stringify(hist));
    timings.push(`W3 ${name}: ${wall.toFixed(4)} s (CPU ${cpu.toFixed(4)} s), best of 3`);
    if (name === 'simulation, one thread') withMaps = wall;
    if (name === 'simulation, one thread, no maps') best = wall;
  }
  worker?.stop();
  if (hists.some((h) => h !== hists[0])) throw new Error('W3: the ways of running gave different histograms');
  const count = acc.map((a) => a[2]);
  const mean = acc.map((a) => a[0] / a[2]);
  const se = acc.map((a, p) => Math.sqrt((a[1] / a[2] - mean[p] ** 2) / a[2]));
  const portIndex = (name: string) => expected.ports.indexOf(name);
  const order = [portIndex('+1/2'), portIndex('-1/2')];
  const x = Math.max(...[0, 1].map((p) => Math.abs(mean[p] - expected.mean_z_m[order[p]]) / se[p]));
  // Pearson χ² over (port, cell), expectation N · ½ · fraction, cells below 5 pooled into one
  let chi2 = 0, dof = -1, poolObs = 0, poolExp = 0;
  for (let p = 0; p < 2; p++) for (let k = 0; k < nb + 2; k++) {
    const e = atoms * 0.5 * expected.fractions[order[p]][k];
    if (e >= 5) {
      chi2 += (hist[p][k] - e) ** 2 / e;
      dof++;
    } else {
      poolObs += hist[p][k];
      poolExp += e;
    }
  }
  if (poolExp > 0) {
    chi2 += (poolObs - poolExp) ** 2 / poolExp;
    dof++;
  }
  const pValue = chiSquareSurvival(chi2, dof);
  if (jsonOut) writeFileSync(jsonOut, `${JSON.stringify({ counts: count, histogram: hist, mean_z_m: mean, se_mean_z_m: se, seconds: best }, null, 2)}\n`);
  const out = [
    ...timings,
    `W3: the ${hists.length} ways give the same histogram, count for count`,
    `W3: mean z per port ${mean.map((m) => `${(m * 1e3).toFixed(5)} mm`).join(', ')} (analytic ${order.map((i) => `${(expected.mean_z_m[i] * 1e3).toFixed(5)} mm`).join(', ')}); χ² ${chi2.toFixed(1)} on ${dof} dof, p = ${pValue.toPrecision(2)}`,
  ];
  if (peers) {
    const r = spawnSync('/usr/bin/python3', [join(peersDir, 'peer_numpy_w3.py')], { encoding: 'utf8', env: { ...process.env, OPENBLAS_NUM_THREADS: '1' } });
    const line = (r.stdout ?? '').trim().split('\n').pop() ?? '';
    out.push(r.status === 0 ? line : `W3 numpy peer did not run: ${(r.stderr ?? '').trim().split('\n').pop()}`);
    const m = /seconds=([\d.]+)/.exec(line);
    if (m) out.push(`W3 ratio numpy/spinyard = ${(Number(m[1]) / best).toFixed(2)} (one thread, no maps; ${(Number(m[1]) / withMaps).toFixed(2)} with the hit maps)`);
  }
  out.push(`W3 spinyard points=${atoms} seconds=${best.toFixed(4)} maxdiff_vs_expected=${x.toFixed(3)}`);
  return out.join('\n');
}

/**
 * bench/w3-worker.ts in a worker thread (tsx's loader registered in it, as src/cli/scan-parallel.ts does), with a
 * port and a shared flag for waiting without an event loop; null where it cannot start.
 */
function startWorker(data: { doc: unknown; atoms: number; seed: number }): { port: import('node:worker_threads').MessagePort; flag: Int32Array; stop: () => void } | null {
  try {
    const here = import.meta.url;
    const pkg = createRequire(here).resolve('tsx/package.json');
    const api = pathToFileURL(join(dirname(pkg), 'dist', 'esm', 'api', 'index.mjs')).href;
    const source = new URL('./w3-worker.ts', here).href;
    const boot = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(source)}); });`;
    const { port1, port2 } = new MessageChannel();
    const flag = new Int32Array(new SharedArrayBuffer(4));
    const w = new Worker(boot, { eval: true, workerData: { ...data, port: port2, flag }, transferList: [port2] });
    w.unref();
    // ready: the worker raises the flag once it has compiled the line
    if (Atomics.wait(flag, 0, 0, 60_000) === 'timed-out') return null;
    return { port: port1, flag, stop: () => void w.terminate() };
  } catch {
    return null;
  }
}

/** The cell of z: 0 below lo, nb + 1 at or above hi, else 1 + ⌊(z − lo)·scale⌋ (at most nb), scale = nb/(hi − lo). */
function cellOf(z: number, lo: number, hi: number, nb: number, scale: number): number {
  if (z < lo) return 0;
  if (z >= hi) return nb + 1;
  const k = ((z - lo) * scale) | 0;
  return 1 + (k < nb - 1 ? k : nb - 1);
}

/** W3's cells (underflow, nb bins on [lo, hi), overflow) and the sums Σz, Σz², n of the hits z[from … end), as the hit callback counts them. */
function histogramChunk(z: Float64Array, from: number, end: number, cells: Float64Array, acc: Float64Array, lo: number, hi: number, nb: number, scale: number): void {
  let s = acc[0], s2 = acc[1];
  for (let i = from; i < end; i++) {
    const v = z[i];
    s += v;
    s2 += v * v;
    cells[cellOf(v, lo, hi, nb, scale)]++;
  }
  acc[0] = s;
  acc[1] = s2;
  acc[2] += end - from;
}
