/**
 * `npm run bench`            samples and the synthetic trees: evaluations per second, time per leaf
 * `npm run bench -- w1 [--json OUT] [--no-peers] [--rounds N]`
 *                            workload W1 of ../shared/peers (Cs-133, 1000-point field sweep × 256 speeds), when
 *                            that folder is beside the checkout (it says so and stops when it is not);
 *                            N rounds (default 3) of Spinyard's best of 3 scans, each followed by the NumPy peer
 * `npm run bench -- ui`      the browser: time from an edit to the updated table and chart, per sample
 * `npm run bench -- session [--evaluations N]`
 *                            the engine's heap over N evaluations of one compiled line with a changed parameter
 * `npm run bench -- w3 [--json OUT] [--no-peers]`
 *                            workload W3 of ../shared/peers (10⁶ silver atoms, simulate) beside its NumPy peer
 * `npm run bench -- w2 [--json OUT] [--no-peers]`
 *                            workload W2 of ../shared/peers (W1's line, a 100 × 100 map over the field and M2's roll)
 *                            by the engine's 2-D scan beside its NumPy peer
 * `npm run bench -- planning [--quick] [--only KEY,…]` (or plan) scans, maps, budgets, fits (a spin-1 state among
 *                            them) and simulated runs on the samples; a scan in 1 and 2 worker threads; --quick leaves
 *                            out bench H's map and its budget of 10⁴ draws, --only runs the items of those keys
 * `npm run bench -- cost [--long]` the cost estimate made before a run beside the run's measured CPU time (samples, long
 *                            lines; --long adds bench J with a field twist over its effusive beam, minutes)
 * `npm run bench -- startup` cold starts: `spinyard --help`, `spinyard run`, the app's load to its first result
 * Figures go into docs/bench.md by hand, with the machine they were taken on.
 */
import { readFileSync, readdirSync, writeFileSync, existsSync } from 'node:fs';
import { join, dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';
import { cpus } from 'node:os';
import { parseBeamlineText, validateBeamline } from '../src/beamline/index.ts';
import type { Beamline } from '../src/beamline/types.ts';
import { runLine, runScan, withParameter } from '../src/engine/index.ts';
import { setKernelsEnabled } from '../src/physics/kernels.ts';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const peersDir = resolve(root, '..', 'shared', 'peers');

/**
 * Per-call times of fn: calls for `warmMs` first (the JIT settles), then for at least `minMs` and 20
 * calls; returns the median, the 90th percentile and the mean of the measured calls.
 */
function timeIt(fn: () => void, minMs = 600, warmMs = 300): { median: number; p90: number; mean: number; calls: number } {
  const w0 = performance.now();
  do fn(); while (performance.now() - w0 < warmMs);
  const times: number[] = [];
  const t0 = performance.now();
  while (performance.now() - t0 < minMs || times.length < 20) {
    const a = performance.now();
    fn();
    times.push(performance.now() - a);
  }
  times.sort((x, y) => x - y);
  const at = (q: number) => times[Math.min(times.length - 1, Math.floor(q * times.length))];
  return { median: at(0.5), p90: at(0.9), mean: times.reduce((x, y) => x + y, 0) / times.length, calls: times.length };
}

function fmtMs(ms: number): string {
  return ms < 1 ? `${(ms * 1000).toFixed(1)} µs` : `${ms.toFixed(2)} ms`;
}

function table(rows: string[][]): string {
  const w = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
  return rows.map((r) => r.map((x, c) => (c === 0 ? x.padEnd(w[c]) : x.padStart(w[c]))).join('  ')).join('\n');
}

/** A tree of distinct magnets: every port of every magnet goes to a new magnet, `depth` levels, then to detectors. */
function syntheticTree(spin: string, j2: number, depth: number): Beamline {
  const labels = Array.from({ length: j2 + 1 }, (_, k) => {
    const m2 = j2 - 2 * k;
    return m2 === 0 ? '0' : `${m2 > 0 ? '+' : '-'}${Math.abs(m2) % 2 === 0 ? Math.abs(m2) / 2 : `${Math.abs(m2)}/2`}`;
  });
  const elements: Record<string, unknown>[] = [];
  let n = 0;
  const make = (level: number): string => {
    const id = `M${++n}`;
    const el: Record<string, unknown> = { id, kind: 'magnet', gap: '2 cm', axis: { roll: `${(17 * n) % 180} deg` }, ports: {} };
    elements.push(el);
    for (const l of labels) (el.ports as Record<string, string>)[l] = level + 1 < depth ? make(level + 1) : `D${labels.indexOf(l) + 1}`;
    return id;
  };
  const first = make(0);
  labels.forEach((_, i) => elements.push({ id: `D${i + 1}`, kind: 'detector', gap: '10 cm', efficiency: 0.5, background: '5 /s', dwell: '10 s' }));
  const r = validateBeamline({
    format: 'spinyard.beamline', version: 1, title: `synthetic spin-${spin} tree, depth ${depth}`,
    species: { spin, g: 2, mass: '100 u' },
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '500 m/s' }, to: first },
    elements,
  });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return r.line;
}

function benchLines(): string {
  const rows = [['line (from its text, as the app\'s worker)', 'leaves', 'median', '90th pct', 'mean', 'per leaf (median)']];
  const dir = join(root, 'samples');
  const files = existsSync(dir) ? readdirSync(dir).filter((f) => f.endsWith('.spinyard')).sort() : [];
  for (const f of files) {
    const p = parseBeamlineText(readFileSync(join(dir, f), 'utf8'));
    if (!p.ok) {
      rows.push([f, 'invalid', '', '', '']);
      continue;
    }
    const leaves = runLine(p.line).leaves.length;
    const text = readFileSync(join(dir, f), 'utf8');
    const t = timeIt(() => {
      const q = parseBeamlineText(text);
      if (q.ok) runLine(q.line);
    });
    rows.push([f, String(leaves), fmtMs(t.median), fmtMs(t.p90), fmtMs(t.mean), fmtMs(t.median / leaves)]);
  }
  for (const [spin, j2, depth] of [['3/2', 3, 6], ['7/2', 7, 3]] as const) {
    const line = syntheticTree(spin, j2, depth);
    const leaves = runLine(line).leaves.length;
    const t = timeIt(() => runLine(line), 1000);
    rows.push([`synthetic spin-${spin}, depth ${depth}`, String(leaves), fmtMs(t.median), fmtMs(t.p90), fmtMs(t.mean), fmtMs(t.median / leaves)]);
  }
  return table(rows);
}

interface W1Run {
  seconds: number;
  result: [number, number][];
  maxdiff: number;
}

function w1(jsonOut: string | null, peers: boolean, nRounds: number): string {
  const out: string[] = [];
  const text = readFileSync(join(peersDir, 'w1.spinyard'), 'utf8');
  const expected = JSON.parse(readFileSync(join(peersDir, 'w1-expected.json'), 'utf8')) as { b_T: number[]; result: [number, number][] };
  const p = parseBeamlineText(text);
  if (!p.ok) throw new Error(p.problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
  const f1 = p.line.elements.find((e) => e.id === 'F1');
  if (!f1 || f1.kind !== 'field') throw new Error('w1: no field region F1');
  const values = expected.b_T.map((b) => ({ x: b, y: f1.field.y, z: f1.field.z }));
  const scan = (line: Beamline): W1Run => {
    const t0 = performance.now();
    const rs = runScan(line, { element: 'F1', key: 'field', values });
    const seconds = (performance.now() - t0) / 1000;
    const result = rs.map((r) => [r.detectors.find((d) => d.id === 'D1')!.yield, r.detectors.find((d) => d.id === 'D2')!.yield] as [number, number]);
    let maxdiff = 0;
    result.forEach((row, i) => { maxdiff = Math.max(maxdiff, Math.abs(row[0] - expected.result[i][0]), Math.abs(row[1] - expected.result[i][1])); });
    return { seconds, result, maxdiff };
  };
  const warm = (line: Beamline): void => {
    // untimed warm-up: V8 compiles the hot functions (JavaScript and WebAssembly tiers) over the first
    // scans of a process (measured here: 0.5–0.6 s, then 0.35 s, then the steady 0.12–0.25 s), so the
    // warm-up is three scans; the peers' warm-up is one run (../shared/peers/README.md), which is their
    // steady state
    for (let i = 0; i < 3; i++) scan(line);
  };
  const bestOf3 = (line: Beamline): W1Run => {
    let b: W1Run | null = null;
    for (let i = 0; i < 3; i++) {
      const r = scan(line);
      if (!b || r.seconds < b.seconds) b = r;
    }
    return b!;
  };
  const best = (line: Beamline): W1Run => {
    warm(line);
    return bestOf3(line);
  };
  const peer = (script: string, args: readonly string[]): { line: string; points: number; seconds: number } | string => {
    const r = spawnSync('/usr/bin/python3', [join(peersDir, script), ...args], { encoding: 'utf8', env: { ...process.env, OPENBLAS_NUM_THREADS: '1' }, timeout: 600_000 });
    const last = (r.stdout ?? '').trim().split('\n').pop() ?? '';
    const m = /points=(\d+) seconds=([0-9.eE+-]+)/.exec(last);
    if (!m) return `peer ${script}: no result (${(r.stderr ?? '').trim().split('\n').pop() ?? r.status})`;
    return { line: last, points: Number(m[1]), seconds: Number(m[2]) };
  };
  // The comparison with the NumPy peer runs in rounds: Spinyard's best of 3 scans, then the peer (its own
  // best of 3), and again. This machine's speed drifts by 20–50 % from one minute to the next, so two
  // figures taken a minute apart compare the moments as much as the programs; within a round both are
  // timed within a few seconds. Each round's ratio is printed, and the headline compares the best of
  // each over all rounds (the usual estimator of a program's time on a noisy machine).
  warm(p.line);
  const rounds: { ours: W1Run; peer: { line: string; points: number; seconds: number } | string | null }[] = [];
  for (let i = 0; i < (peers ? nRounds : 1); i++) {
    const ours = bestOf3(p.line);
    rounds.push({ ours, peer: peers ? peer('peer_numpy.py', []) : null });
  }
  const table256 = rounds.reduce((b, r) => (r.ours.seconds < b.seconds ? r.ours : b), rounds[0].ours);
  out.push(`W1 on the 256 tabulated speeds: best of 3 (after 3 warm-up scans) = ${table256.seconds.toFixed(3)} s for 1000 points (${table256.seconds.toFixed(3)} ms per point), max |Δ| vs w1-expected.json = ${table256.maxdiff.toExponential(2)} (check 1e-6: ${table256.maxdiff <= 1e-6 ? 'pass' : 'FAIL'})${rounds.length > 1 ? `; best of the ${rounds.length} rounds below` : ''}`);
  const worst = rounds.reduce((w, r) => Math.max(w, r.ours.maxdiff), 0);
  if (worst > table256.maxdiff) out.push(`  the largest max |Δ| of any round: ${worst.toExponential(2)} (check 1e-6: ${worst <= 1e-6 ? 'pass' : 'FAIL'})`);
  setKernelsEnabled(false);
  const jsOnly = best(p.line);
  setKernelsEnabled(true);
  out.push(`W1 on the 256 tabulated speeds with the WebAssembly kernel off (the JavaScript path): best of 3 = ${jsOnly.seconds.toFixed(3)} s, max |Δ| vs w1-expected.json = ${jsOnly.maxdiff.toExponential(2)}`);
  const effLine: Beamline = { ...p.line, oven: { ...p.line.oven, velocity: { kind: 'effusive', temperature: 400 } } };
  const eff = best(effLine);
  let effVsGrid = 0;
  eff.result.forEach((row, i) => { effVsGrid = Math.max(effVsGrid, Math.abs(row[0] - table256.result[i][0])); });
  out.push(`W1 over the effusive distribution itself (400 K, each frequency on its own): best of 3 = ${eff.seconds.toFixed(3)} s; it differs from the 256-node grid by up to ${effVsGrid.toExponential(2)} (the grid is not a converged average: ../shared/peers/README.md)`);
  const one = runLine(withParameter(effLine, 'F1', 'field', values[999]));
  out.push(`  quadrature at 20 µT: ${one.quadrature?.nodes} nodes, estimated error ${one.quadrature?.error.toExponential(1)} (${one.quadrature?.method})`);
  if (peers) {
    const done = rounds.filter((r) => typeof r.peer === 'object' && r.peer !== null) as { ours: W1Run; peer: { line: string; points: number; seconds: number } }[];
    for (const r of rounds) if (typeof r.peer === 'string') out.push(r.peer);
    if (done.length > 0) {
      const ratio = (peerS: number, points: number, oursS: number): string => `${((peerS / points) / (oursS / 1000)).toFixed(1)}×`;
      done.forEach((r, i) => out.push(`round ${i + 1}: spinyard ${r.ours.seconds.toFixed(3)} s, peer ${r.peer.line}; peer / spinyard = ${ratio(r.peer.seconds, r.peer.points, r.ours.seconds)}`));
      const bestPeer = done.reduce((b, r) => (r.peer.seconds < b.peer.seconds ? r : b), done[0]).peer;
      out.push(`peer ${bestPeer.line} (best of ${done.length} rounds)`);
      out.push(`  ratio per point: peer / spinyard = ${ratio(bestPeer.seconds, bestPeer.points, table256.seconds)} (best against best; rounds ${done.map((r) => ratio(r.peer.seconds, r.peer.points, r.ours.seconds)).join(', ')})`);
    }
    const q = peer('peer_qutip.py', ['--points', '50']);
    if (typeof q === 'string') out.push(q);
    else {
      out.push(`peer ${q.line}`);
      out.push(`  ratio per point: peer / spinyard = ${((q.seconds / q.points) / (table256.seconds / 1000)).toFixed(1)}×`);
    }
  }
  if (jsonOut) {
    writeFileSync(jsonOut, JSON.stringify({
      workload: 'W1', implementation: 'spinyard', points: 1000, rows: 1000, b_T: expected.b_T, columns: ['D1', 'D2'],
      result: table256.result, seconds: table256.seconds,
    }, null, 1));
    out.push(`wrote ${jsonOut}`);
  }
  out.push(`W1 spinyard points=1000 seconds=${table256.seconds.toFixed(4)} maxdiff_vs_expected=${table256.maxdiff.toExponential(3)}`);
  return out.join('\n');
}

async function main(): Promise<void> {
  const args = process.argv.slice(2);
  console.log(`machine: ${cpus()[0]?.model ?? 'unknown'} × ${cpus().length}, node ${process.version}`);
  if (args[0] === 'w1') {
    if (!existsSync(join(peersDir, 'w1.spinyard'))) {
      console.log(`W1 not run: it needs the shared performance peers (w1.spinyard, w1-expected.json and the NumPy peers) in ${peersDir}, which this machine does not have`);
      return;
    }
    const j = args.indexOf('--json');
    const r = args.indexOf('--rounds');
    const nRounds = r >= 0 ? Number(args[r + 1]) : 3;
    if (!Number.isInteger(nRounds) || nRounds < 1) throw new Error(`--rounds: a whole number of rounds of at least 1, not ${args[r + 1]}`);
    console.log(w1(j >= 0 ? args[j + 1] : null, !args.includes('--no-peers'), nRounds));
    return;
  }
  if (args[0] === 'startup') {
    const { benchStartup } = await import('./startup.ts');
    console.log(await benchStartup());
    return;
  }
  if (args[0] === 'session') {
    if (!(globalThis as { gc?: unknown }).gc) {
      // run again with the collector exposed: the heap figures need a collection before each reading
      const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', fileURLToPath(import.meta.url), ...args], { stdio: 'inherit' });
      process.exit(r.status ?? 1);
    }
    const { benchSession } = await import('./session.ts');
    console.log(benchSession(root, args));
    return;
  }
  if (args[0] === 'w3') {
    if (!existsSync(join(peersDir, 'w3-expected.json'))) {
      console.log(`W3 not run: it needs the shared performance peers (w3-expected.json and the NumPy peer) in ${peersDir}, which this machine does not have`);
      return;
    }
    const j = args.indexOf('--json');
    const { benchW3 } = await import('./w3.ts');
    console.log(benchW3(peersDir, j >= 0 ? args[j + 1] : null, !args.includes('--no-peers')));
    return;
  }
  if (args[0] === 'w2') {
    if (!existsSync(join(peersDir, 'w2-expected.json'))) {
      console.log(`W2 not run: it needs the shared performance peers (w1.spinyard, w2-expected.json and the NumPy peer) in ${peersDir}, which this machine does not have`);
      return;
    }
    const j = args.indexOf('--json');
    const { benchW2 } = await import('./w2.ts');
    console.log(benchW2(peersDir, j >= 0 ? args[j + 1] : null, !args.includes('--no-peers')));
    return;
  }
  if (args[0] === 'planning' || args[0] === 'plan') {
    const { benchPlanning } = await import('./planning.ts');
    const o = args.indexOf('--only');
    console.log(benchPlanning(root, { quick: args.includes('--quick'), ...(o >= 0 ? { only: (args[o + 1] ?? '').split(',') } : {}) }));
    return;
  }
  if (args[0] === 'cost') {
    const { benchCost } = await import('./cost.ts');
    console.log(benchCost(root, args.includes('--long')));
    return;
  }
  if (args[0] === 'ui') {
    const { benchUi } = await import('./ui.ts');
    console.log(await benchUi());
    return;
  }
  console.log(benchLines());
}

main().catch((err) => {
  console.error(err instanceof Error ? err.message : String(err));
  process.exit(1);
});
