/**
 * The second thread of `npm run bench -- w3`: it compiles the workload's line, and for each request {first, end} on
 * its port makes the simulation (the engine's run of the line included, as a host's worker would) and draws those
 * blocks of atoms; it answers with the tally (its hits' buffers transferred) and then raises the shared flag, so that
 * the main thread can wait for it without an event loop (the bench is synchronous).
 */
import { workerData, type MessagePort } from 'node:worker_threads';
import { compile } from '../src/engine/index.ts';
import { simulation } from '../src/engine/simulate.ts';

const { doc, atoms, seed, port, flag } = workerData as { doc: unknown; atoms: number; seed: number; port: MessagePort; flag: Int32Array };
const c = compile(doc as Parameters<typeof compile>[0]);
if (!c.ok) throw new Error(c.problems.join('\n'));
const plan = c.plan;
const done = () => {
  Atomics.add(flag, 0, 1);
  Atomics.notify(flag, 0);
};
port.on('message', (m: { first: number; end: number }) => {
  const tally = simulation(plan, { atoms, seed }).run(m.first, m.end);
  const buffers = new Set(tally.hits.flatMap((h) => [...h.x, ...h.z].map((a) => a.buffer as ArrayBuffer)));
  port.postMessage(tally, [...buffers]);
  done();
});
done();
