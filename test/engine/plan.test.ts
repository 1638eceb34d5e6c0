/**
 * Compile once, evaluate many (src/engine/plan.ts): parameters by the element's id and key, values read by the
 * reader itself, untouched parts of the line shared, and the same numbers as a line read from the document.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { validateBeamline } from '../../src/beamline/index.ts';
import { compile, evaluate, lineAt, parameter, parameterValue, type Plan } from '../../src/engine/plan.ts';
import { runLine, RunError } from '../../src/engine/index.ts';

const samplesDir = new URL('../../samples/', import.meta.url);
const text = (name: string) => readFileSync(new URL(name, samplesDir), 'utf8');

function plan(name: string): Plan {
  const c = compile(JSON.parse(text(name)));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

const d = (r: ReturnType<typeof evaluate>, id: string) => r.detectors.find((x) => x.id === id)!;

describe('compile', () => {
  it('lists every quantity of bench C by id and key, with its dimension, SI value and what the document writes', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const roll = parameter(p, 'M2.axis.roll');
    expect(roll).toMatchObject({ path: 'elements[1].axis.roll', dimension: 'angle', written: '30 deg', unit: 'deg' });
    expect(roll.value).toBe(Math.PI / 6);
    expect(parameter(p, 'elements[1].axis.roll')).toBe(roll);
    expect(parameter(p, 'oven.flux')).toMatchObject({ dimension: 'rate', value: 2e9 });
    expect(parameter(p, 'oven.velocity.speed')).toMatchObject({ dimension: 'speed', value: 550 });
    // an optional key the document leaves out is a parameter at its default
    expect(parameter(p, 'D1.gap')).toMatchObject({ dimension: 'length', value: 0 });
    expect(parameter(p, 'D1.gap').written).toBeUndefined();
    expect(parameter(p, 'D1.efficiency')).toMatchObject({ dimension: 'dimensionless', value: 0.9 });
  });

  it('keeps an axis as written: θ and φ where the document gives them, a roll where it gives a roll', () => {
    const p = plan('bench-b-idealised-axis.spinyard');
    const names = p.parameters.map((s) => s.name);
    expect(names).toContain('M2.axis.theta');
    expect(names).toContain('M2.axis.phi');
    expect(names).not.toContain('M2.axis.roll');
  });

  it('gives every problem of a bad document instead of a plan', () => {
    const c = compile({ format: 'spinyard.beamline', version: 1, species: 'Rb-87', oven: {}, elements: [] });
    expect(c.ok).toBe(false);
    if (!c.ok) expect(c.problems.join('\n')).toMatch(/oven/);
  });
});

describe('evaluate', () => {
  it('gives every sample\'s numbers bit for bit as a run of the line read from the document', () => {
    for (const name of readdirSync(samplesDir).filter((f) => f.endsWith('.spinyard'))) {
      const p = plan(name);
      const r = validateBeamline(JSON.parse(text(name)));
      if (!r.ok) throw new Error(name);
      const direct = runLine(r.line);
      direct.warnings.unshift(...r.warnings.map((w) => `${w.path}: ${w.message}`));
      expect(JSON.stringify(evaluate(p)), name).toBe(JSON.stringify(direct));
    }
  }, 120_000);

  it('sets a roll through the reader: bench C with M2 at 90° gives D1 ½·cos²(45°) = 0.25 and back at 30° the first numbers bit for bit', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const a = JSON.stringify(evaluate(p));
    const b = evaluate(p, { 'M2.axis.roll': Math.PI / 2 });
    // spin ½ selected along z, analysed along an axis at angle α: P(+) = cos²(α/2) (common practice)
    expect(d(b, 'D1').yield).toBeCloseTo(0.5 * Math.cos(Math.PI / 4) ** 2, 13);
    expect(JSON.stringify(evaluate(p, { 'M2.axis.roll': Math.PI / 6 }))).toBe(a);
    expect(JSON.stringify(evaluate(p))).toBe(a);
  });

  it('reads a new value again only where it is: every other element, the oven and the ambient field keep their identity', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const l = lineAt(p, { 'M2.axis.roll': 1 });
    expect(l).not.toBe(p.line);
    l.elements.forEach((e, i) => (e.id === 'M2' ? expect(e).not.toBe(p.line.elements[i]) : expect(e).toBe(p.line.elements[i])));
    expect(l.oven).toBe(p.line.oven);
    const m2 = l.elements.find((e) => e.id === 'M2')!;
    expect(m2.kind === 'magnet' && m2.axis).toMatchObject({ x: Math.sin(1), y: 0, z: Math.cos(1) });
    expect(Object.isFrozen(l) && Object.isFrozen(m2) && Object.isFrozen(l.elements)).toBe(true);
    const o = lineAt(p, { 'oven.flux': 1e9 });
    expect(o.oven).not.toBe(p.line.oven);
    expect(o.elements).toBe(p.line.elements);
    expect(evaluate(p, { 'oven.flux': 1e9 }).detectors[0].signal).toBeCloseTo(evaluate(p).detectors[0].signal / 2, 6);
  });

  it('refuses what the reader refuses, naming the parameter and the bound', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    expect(() => evaluate(p, { 'D1.efficiency': 1.5 })).toThrow(RunError);
    expect(() => evaluate(p, { 'D1.efficiency': 1.5 })).toThrow(/D1\.efficiency.*\[0, 1\]/);
    expect(() => evaluate(p, { 'oven.velocity.speed': 0 })).toThrow(/speed must be positive/);
    expect(() => evaluate(p, { 'M2.axis.rol': 0 })).toThrow(/no parameter "M2.axis.rol".*M2\.axis\.roll/);
    expect(() => evaluate(p, { 'M2.axis.roll': Number.NaN })).toThrow(/finite/);
  });

  it('refuses a gap that moves the first slit onto the oven', () => {
    const p = plan('bench-g-silver-split.spinyard');
    const slit = p.line.elements.find((e) => e.kind === 'slit')!;
    // every element before the first slit at gap 0 and the slit too: 0 m from the aperture
    const zero: Record<string, number> = {};
    for (const e of p.line.elements) {
      zero[`${e.id}.gap`] = 0;
      if (e === slit) break;
    }
    expect(() => evaluate(p, zero)).toThrow(/first after the oven/);
  });

  it('reads a value as a user writes it, in the parameter\'s dimension', () => {
    const p = plan('bench-c-roll-calibration.spinyard');
    const roll = parameter(p, 'M2.axis.roll');
    expect(parameterValue(roll, '90 deg', '--from')).toBe(Math.PI / 2);
    expect(() => parameterValue(roll, '90 mm', '--from')).toThrow(/--from: expected an angle.*M2\.axis\.roll is an angle/);
    expect(parameterValue(parameter(p, 'D1.efficiency'), '0.5', '--to')).toBe(0.5);
  });
});

describe('a bounded session', () => {
  it('keeps the caches within their bounds over many evaluations with a new value each time, and numbers survive a clear', async () => {
    const { engineCacheStats, clearEngineCaches } = await import('../../src/engine/session.ts');
    const p = plan('bench-c-roll-calibration.spinyard');
    const first = JSON.stringify(evaluate(p, { 'M2.axis.roll': 0.3 }));
    for (let i = 0; i < 600; i++) evaluate(p, { 'M2.axis.roll': i * 0.005 + 1e-4 }, { light: true });
    for (const s of engineCacheStats()) if (Number.isFinite(s.bound) && s.size >= 0) expect(s.size, s.name).toBeLessThanOrEqual(s.bound);
    const sortings = engineCacheStats().find((s) => s.name === 'magnet sortings')!;
    expect(sortings.evictions).toBeGreaterThan(0);
    const selections = engineCacheStats().find((s) => s.name === 'port selections per state')!;
    expect(selections.evictions).toBeGreaterThan(0);
    expect(JSON.stringify(evaluate(p, { 'M2.axis.roll': 0.3 }))).toBe(first);
    clearEngineCaches();
    expect(engineCacheStats().find((s) => s.name === 'magnet sortings')!.size).toBe(0);
    expect(JSON.stringify(evaluate(p, { 'M2.axis.roll': 0.3 }))).toBe(first);
  });
});
