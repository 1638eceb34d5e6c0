// The engine worker's planning requests, run in Node as the worker runs them: a scan and a budget of bench C's
// text, refused points, cancel between points, a document that cannot be read.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { createPlanServer } from '../../src/app/plan-serve.ts';
import { isPlanRequest, type PlanReply } from '../../src/app/engine-protocol.ts';

const benchC = readFileSync(join(import.meta.dirname, '..', '..', 'samples', 'bench-c-roll-calibration.spinyard'), 'utf8');
const deg = Math.PI / 180;

function server(opts: Parameters<typeof createPlanServer>[1] = {}) {
  const replies: PlanReply[] = [];
  const s = createPlanServer((m) => replies.push(m), opts);
  return { s, replies, last: () => replies.at(-1)! };
}

describe('planning requests in the engine worker', () => {
  it('tells planning requests from run requests by their kind', () => {
    expect(isPlanRequest({ kind: 'scan', seq: 1 })).toBe(true);
    expect(isPlanRequest({ seq: 1, line: {} })).toBe(false);
    expect(isPlanRequest(null)).toBe(false);
  });

  it('scans the analyser roll of bench C: D1 sees ½·cos²(θ/2) of the polarised half, 0.25 at 90°', async () => {
    const { s, replies, last } = server();
    await s.handle({ kind: 'scan', seq: 7, text: benchC, axes: [{ name: 'M2.axis.roll', from: 0, to: 180 * deg, points: 37, spacing: 'linear' }] });
    const r = last();
    expect(r.type).toBe('scan-result');
    if (r.type !== 'scan-result') return;
    expect(r.seq).toBe(7);
    expect(r.result.format).toBe('spinyard.scan');
    expect(r.result.parameters[0]).toMatchObject({ name: 'M2.axis.roll', unit: 'deg' });
    expect(r.result.parameters[0].present).toBeCloseTo(30 * deg, 14);
    // spin-1/2 analyser rolled by θ after a polariser: transmission cos²(θ/2) of the +1/2 half (standard result,
    // e.g. Sakurai & Napolitano, Modern Quantum Mechanics, §1.1 and §3.2)
    r.result.points.forEach((p) => {
      const theta = p.values[0];
      expect(p.detectors!.find((d) => d.id === 'D1')!.yield).toBeCloseTo(0.5 * Math.cos(theta / 2) ** 2, 12);
    });
    expect(r.result.points[18].values[0]).toBeCloseTo(90 * deg, 14);
    expect(r.result.points[18].detectors!.find((d) => d.id === 'D1')!.yield).toBeCloseTo(0.25, 12);
    expect(replies.filter((m) => m.type === 'plan-progress').at(-1)).toMatchObject({ fraction: 1 });
  });

  it('keeps the title asked for, and a point the reader refuses carries its reason and no numbers', async () => {
    const { s, last } = server();
    await s.handle({ kind: 'scan', seq: 1, title: 'efficiency', text: benchC, axes: [{ name: 'D1.efficiency', from: 0.5, to: 1.5, points: 5, spacing: 'linear' }] });
    const r = last();
    if (r.type !== 'scan-result') throw new Error(`expected a scan result, got ${JSON.stringify(r)}`);
    expect(r.result.title).toBe('efficiency');
    const refused = r.result.points.filter((p) => p.error);
    expect(refused.map((p) => p.values[0])).toEqual([1.25, 1.5]);
    for (const p of refused) {
      expect(p.detectors).toBeUndefined();
      expect(p.error).toMatch(/D1\.efficiency/);
    }
  });

  it('stops a scan at a cancel between two points and says so', async () => {
    let pauses = 0;
    const box: { s?: ReturnType<typeof createPlanServer> } = {};
    const { s, replies } = server({
      sliceMs: 0,
      pause: async () => {
        pauses += 1;
        if (pauses === 3) await box.s!.handle({ kind: 'cancel', seq: 4 });
      },
    });
    box.s = s;
    await s.handle({ kind: 'scan', seq: 4, text: benchC, axes: [{ name: 'M2.axis.roll', from: 0, to: Math.PI, points: 200, spacing: 'linear' }] });
    expect(replies.at(-1)).toEqual({ type: 'plan-cancelled', seq: 4 });
    expect(replies.some((m) => m.type === 'scan-result')).toBe(false);
    expect(pauses).toBe(3);
    // the next request of the same number runs (a cancel is forgotten once answered)
    await s.handle({ kind: 'scan', seq: 4, text: benchC, axes: [{ name: 'M2.axis.roll', from: 0, to: Math.PI, points: 3, spacing: 'linear' }] });
    expect(replies.at(-1)!.type).toBe('scan-result');
  });

  it('runs the budget of bench C\'s tolerances: D1\'s first-order σ is 4.34e7 /s', async () => {
    const { s, last, replies } = server();
    await s.handle({ kind: 'budget', seq: 2, text: benchC, draws: 200, seed: 1 });
    const r = last();
    if (r.type !== 'budget-result') throw new Error(`expected a budget, got ${JSON.stringify(r)}`);
    const d1 = r.result.detectors.find((d) => d.id === 'D1')!;
    // by hand: S = 2e9 × ½cos²(15°) × 0.9 = 8.397e8 /s; flux ±1e8 (1σ) gives S × 5 % = 4.199e7, the efficiency ±0.02 uniform
    // (σ = 0.01155) S/0.9 × σ = 1.077e7, the rolls of M1 and M2 (σ = 0.2887°) dS/dθ·σ = S·tan(15°)·σ = 1.13e6 each:
    // √(4.199² + 1.077² + 2 × 0.113²) × 1e7 = 4.34e7
    expect(d1.linearSigma / 4.34e7).toBeGreaterThan(0.99);
    expect(d1.linearSigma / 4.34e7).toBeLessThan(1.01);
    expect(d1.monteCarlo?.draws).toBe(200);
    expect(r.result.monteCarlo.seed).toBe(1);
    expect(replies.some((m) => m.type === 'plan-progress')).toBe(true);
  });

  it('answers with the reader\'s message for a document that cannot be read, a parameter the line lacks, or a bad scan', async () => {
    const { s, last } = server();
    await s.handle({ kind: 'scan', seq: 1, text: '{"format": "spinyard.beamline"', axes: [{ name: 'M2.axis.roll', from: 0, to: 1, points: 2, spacing: 'linear' }] });
    expect(last()).toMatchObject({ type: 'plan-error', seq: 1 });
    await s.handle({ kind: 'scan', seq: 2, text: benchC, axes: [{ name: 'M9.axis.roll', from: 0, to: 1, points: 2, spacing: 'linear' }] });
    expect(last()).toMatchObject({ type: 'plan-error', seq: 2 });
    expect((last() as { message: string }).message).toMatch(/M9\.axis\.roll/);
    await s.handle({ kind: 'scan', seq: 3, text: benchC, axes: [{ name: 'M2.axis.roll', from: 0, to: 1, points: 5, spacing: 'log' }] });
    expect((last() as { message: string }).message).toMatch(/logarithmic/);
    await s.handle({ kind: 'budget', seq: 4, text: benchC, draws: -1, seed: 1 });
    expect((last() as { message: string }).message).toMatch(/draws/);
  });
});
