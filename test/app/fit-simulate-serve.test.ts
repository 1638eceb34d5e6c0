// The engine worker's fit and simulated-run requests, run in Node as the worker runs them, and their client side
// (a fit or a simulated run cannot pause: Cancel ends the worker). Bench C's demonstration data were made with M2 at
// 31.2 deg and an oven flux of 1.93e9 /s (the comment at the head of samples/bench-c-roll-calibration.counts.csv).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { createPlanServer } from '../../src/app/plan-serve.ts';
import { createPlanClient, type PlanAnswer } from '../../src/app/plan-client.ts';
import { isPlanRequest, type PlanReply, type PlanRequest } from '../../src/app/engine-protocol.ts';
import type { WorkerLike } from '../../src/app/engine-client.ts';

const SAMPLES = join(import.meta.dirname, '..', '..', 'samples');
const benchC = readFileSync(join(SAMPLES, 'bench-c-roll-calibration.spinyard'), 'utf8');
const benchG = readFileSync(join(SAMPLES, 'bench-g-silver-split.spinyard'), 'utf8');
const counts = readFileSync(join(SAMPLES, 'bench-c-roll-calibration.counts.csv'), 'utf8');
const deg = Math.PI / 180;

async function ask(req: PlanRequest): Promise<PlanReply> {
  const replies: PlanReply[] = [];
  await createPlanServer((m) => replies.push(m)).handle(req);
  return replies.at(-1)!;
}

describe('fit requests in the engine worker', () => {
  it('are planning requests', () => {
    expect(isPlanRequest({ kind: 'fit', seq: 1 })).toBe(true);
    expect(isPlanRequest({ kind: 'simulate', seq: 1 })).toBe(true);
  });

  it('fits M2.axis.roll and oven.flux of bench C to its data: 31.2 deg and 1.93e9 /s within 3σ, with the readings\' set-points', async () => {
    const r = await ask({ kind: 'fit', seq: 4, text: benchC, csv: counts, fileName: 'counts.csv', free: [{ name: 'M2.axis.roll' }, { name: 'oven.flux' }], state: false });
    if (r.type !== 'fit-result') throw new Error(`expected a fit result, got ${JSON.stringify(r)}`);
    expect(r.seq).toBe(4);
    const [roll, flux] = r.result.parameters;
    expect(roll).toMatchObject({ name: 'M2.axis.roll', unit: 'deg' });
    expect(Math.abs(roll.value - 31.2 * deg)).toBeLessThan(3 * roll.sigma!);
    expect(Math.abs(flux.value - 1.93e9)).toBeLessThan(3 * flux.sigma!);
    expect(r.result.converged).toBe(true);
    expect(r.result.readings).toBe(30);
    // the data's one set-point column (M3's roll in deg) and every reading's value of it, by its line in the file
    expect(r.data.columns).toEqual([{ name: 'M3.axis.roll', unit: 'deg', factor: deg }]);
    expect(r.data.readings).toHaveLength(30);
    expect(r.data.readings[0]).toEqual({ line: 4, detector: 'D1', values: [0] });
    expect(r.data.readings[29].values[0]).toBeCloseTo(180 * deg, 12);
    expect(new Set(r.result.residuals.map((x) => x.line))).toEqual(new Set(r.data.readings.map((x) => x.line)));
  }, 30_000);

  it('names the row and column of bad data, and a parameter the line does not have', async () => {
    const bad = counts.replace('D2,4544573,1,0', 'D2,-5,1,0');
    const r = await ask({ kind: 'fit', seq: 1, text: benchC, csv: bad, fileName: 'counts.csv', free: [{ name: 'M2.axis.roll' }], state: false });
    expect(r.type).toBe('plan-error');
    if (r.type === 'plan-error') expect(r.message).toMatch(/counts\.csv.*line 5/);
    const u = await ask({ kind: 'fit', seq: 2, text: benchC, csv: counts, fileName: 'counts.csv', free: [{ name: 'M9.axis.roll' }], state: false });
    expect(u.type).toBe('plan-error');
    if (u.type === 'plan-error') expect(u.message).toMatch(/M9\.axis\.roll/);
  });
});

describe('simulated runs in the engine worker', () => {
  it('simulates bench G with the engine\'s signal beside each detector; the same seed gives the same numbers', async () => {
    const req: PlanRequest = { kind: 'simulate', seq: 9, text: benchG, atoms: 20_000, seed: 7 };
    const r = await ask(req);
    if (r.type !== 'simulate-result') throw new Error(`expected a simulated run, got ${JSON.stringify(r)}`);
    expect(r.result.atoms).toBe(20_000);
    expect(r.engine.map((e) => e.id)).toEqual(r.result.detectors.map((d) => d.id));
    for (const d of r.result.detectors) {
      const e = r.engine.find((x) => x.id === d.id)!.signal;
      expect(e).toBeGreaterThan(0);
      // sampling error of 20,000 atoms: the two agree within 4.5σ (false alarm below 1e-5 per detector)
      expect(Math.abs(d.signal - e)).toBeLessThan(4.5 * d.signalSigma);
      expect(d.map!.counts.flat().reduce((a, b) => a + b, 0)).toBe(d.hits);
    }
    const again = await ask(req);
    expect(again.type === 'simulate-result' && again.result.detectors).toEqual(r.result.detectors);
  }, 30_000);

  it('refuses a document that cannot be read', async () => {
    const r = await ask({ kind: 'simulate', seq: 1, text: '{ "format": ', atoms: 10, seed: 1 });
    expect(r).toMatchObject({ type: 'plan-error', seq: 1 });
  });
});

describe('the client of a fit or a simulated run', () => {
  function fake() {
    const made: (WorkerLike & { posted: PlanRequest[]; terminated: boolean })[] = [];
    const make = () => {
      const w = { posted: [] as PlanRequest[], terminated: false, onmessage: null as WorkerLike['onmessage'], onerror: null as WorkerLike['onerror'],
        postMessage(m: unknown) { this.posted.push(m as PlanRequest); }, terminate() { this.terminated = true; } };
      made.push(w);
      return w;
    };
    return { made, make };
  }

  it('posts the job with its sequence number, hands over the answer with the data, and ends the worker at Cancel', () => {
    const { made, make } = fake();
    const answers: PlanAnswer[] = [];
    const c = createPlanClient(make, (a) => answers.push(a), () => {});
    const job = { kind: 'fit' as const, text: 'T', csv: 'C', fileName: 'f.csv', free: [{ name: 'M2.axis.roll', lower: 0 }], state: true };
    const seq = c.start(job);
    expect(made[0].posted).toEqual([{ ...job, seq }]);
    const data = { columns: [], readings: [] };
    made[0].onmessage?.({ data: { type: 'fit-result', seq, result: { format: 'spinyard.fit' }, data, ms: 3 } } as unknown as MessageEvent);
    expect(answers).toEqual([{ seq, kind: 'fit', result: { format: 'spinyard.fit' }, data, ms: 3 }]);

    const s2 = c.start({ kind: 'simulate', text: 'T', atoms: 100, seed: 2 });
    expect(made[0].posted.at(-1)).toEqual({ kind: 'simulate', text: 'T', atoms: 100, seed: 2, seq: s2 });
    c.cancel();
    expect(made[0].terminated).toBe(true);
    expect(made[0].posted.some((m) => m.kind === 'cancel')).toBe(false);
    expect(answers.at(-1)).toEqual({ seq: s2, kind: 'simulate', cancelled: true });
    // the next job gets a fresh worker
    c.start({ kind: 'simulate', text: 'T', atoms: 100, seed: 2 });
    expect(made).toHaveLength(2);
    c.dispose();
  });
});

describe('the hits\' profile beside the engine\'s', () => {
  it('bench G: the sub-beam profiles ride with the engine\'s signals, and the hits along z follow the engine\'s shape (χ² per bin)', async () => {
    const { profileComparison } = await import('../../src/app/fit-view.ts');
    const r = await ask({ kind: 'simulate', seq: 1, text: benchG, atoms: 200_000, seed: 5 });
    if (r.type !== 'simulate-result') throw new Error(`expected a simulated run, got ${JSON.stringify(r)}`);
    for (const d of r.result.detectors) {
      const e = r.engine.find((x) => x.id === d.id)!;
      expect(e.profiles?.length).toBe(1);
      expect(e.profiles![0].axis).toBe('z');
      const f = profileComparison(d, e, { font: { color: '#000' }, xaxis: {}, yaxis: {}, margin: {} })!;
      const [hits, engine] = f.data as { y: number[]; error_y?: { array: number[] } }[];
      // χ² of the normalised shapes over the bins with an error (the engine's curve is exact up to its grid)
      let chi2 = 0;
      let bins = 0;
      hits.y.forEach((y, j) => {
        const s = hits.error_y!.array[j];
        if (s > 0) {
          chi2 += ((y - engine.y[j]) / s) ** 2;
          bins += 1;
        }
      });
      console.log(`${d.id}: χ² ${chi2.toFixed(1)} on ${bins - 1} degrees of freedom (${d.hits} hits)`);
      expect(bins).toBeGreaterThan(30);
      // a fixed seed; χ² above dof + 5√(2·dof) would be a false alarm below about 1e-5
      expect(chi2).toBeLessThan(bins - 1 + 5 * Math.sqrt(2 * (bins - 1)));
    }
  }, 60_000);
});
