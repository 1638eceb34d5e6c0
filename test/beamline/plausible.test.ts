import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseBeamlineText } from '../../src/beamline/index.ts';
import { PLAUSIBLE } from '../../src/beamline/plausible.ts';
import type { Problem } from '../../src/beamline/types.ts';
import { DESIGN_V1 } from './examples.ts';

/** The bench B reference line (bare spin 1/2, two magnets, two detectors) with `edit` applied. */
function read(edit: (d: any) => void): { warnings: Problem[]; ok: boolean } {
  const doc = JSON.parse(DESIGN_V1);
  edit(doc);
  const r = parseBeamlineText(JSON.stringify(doc));
  return { ok: r.ok, warnings: r.ok ? [...r.warnings] : [] };
}
const warned = (r: { warnings: Problem[] }, path: string) => r.warnings.filter((w) => w.path === path);

describe('plausibility warnings: the document reads, with a warning that names the set-point and the reason', () => {
  it('the reference line has none', () => {
    expect(read(() => {}).warnings).toEqual([]);
  });
  it('a magnet field above 10 T (500 T, a unit slip; above 1000 T the reader refuses it)', () => {
    const r = read((d) => (d.elements[0].field = '500 T'));
    expect(r.ok).toBe(true);
    const [w] = warned(r, 'elements[0].field');
    expect(w.message).toMatch(/the field size of 500 T is above 10 T/);
    expect(w.message).toMatch(/superconducting magnets reach about 10–20 T/);
    expect(w.message).toMatch(/from memory/);
    expect(warned(read((d) => (d.elements[0].field = '9.5 T')), 'elements[0].field')).toEqual([]);
  });
  it('a gradient above 1e4 T/m, either sign (above 1e6 T/m the reader refuses it)', () => {
    for (const g of ['1e5 T/m', '-2e4 T/m']) {
      const [w] = warned(read((d) => (d.elements[1].gradient = g)), 'elements[1].gradient');
      expect(w.message).toMatch(/the gradient of -?[\d.e]+ T\/m is above 10000 T\/m/);
      expect(w.message).toMatch(/10²–10⁴ T\/m/);
    }
    expect(warned(read((d) => (d.elements[1].gradient = '250 T/m')), 'elements[1].gradient')).toEqual([]);
  });
  it('an oven above 2500 K, as a velocity temperature or a vapour reservoir', () => {
    const v = read((d) => (d.oven.velocity = { kind: 'effusive', temperature: '3000 K' }));
    expect(warned(v, 'oven.velocity.temperature')[0].message).toMatch(/the oven temperature of 3000 K is above 2500 K/);
    const f = read((d) => (d.oven.flux = { kind: 'vapor', temperature: '2600 K' }));
    expect(warned(f, 'oven.flux.temperature')[0].message).toMatch(/2600 K is above 2500 K.*molybdenum, tantalum or tungsten/);
    expect(read((d) => (d.oven.velocity = { kind: 'effusive', temperature: '450 K' })).warnings).toEqual([]);
  });
  it('a flux above 1e18 /s', () => {
    const [w] = warned(read((d) => (d.oven.flux = '3e20 /s')), 'oven.flux');
    expect(w.message).toMatch(/the flux of 3e20 \/s is above 1e18 \/s/);
    expect(read((d) => (d.oven.flux = '1e12 /s')).warnings).toEqual([]);
  });
  it('a dwell above a day, said in days too', () => {
    const [w] = warned(read((d) => (d.elements[2].dwell = '72 h')), 'elements[2].dwell');
    expect(w.message).toMatch(/the dwell of 259200 s \(3 d\) is above 86400 s/);
    expect(read((d) => (d.elements[2].dwell = '10 h')).warnings).toEqual([]);
    expect(read((d) => (d.elements[2].dwell = '1 day')).warnings).toEqual([]);
  });
  it('a detector efficiency of exactly 0', () => {
    const [w] = warned(read((d) => (d.elements[3].efficiency = 0)), 'elements[3].efficiency');
    expect(w.message).toMatch(/the efficiency is 0: a detector with efficiency 0 counts nothing/);
    expect(read((d) => (d.elements[3].efficiency = 0.001)).warnings).toEqual([]);
  });
  it('the fields of a field region, an RF flipper and a twist', () => {
    const r = read((d) => {
      d.elements[0].ports['+1/2'] = 'F';
      d.elements.push({ id: 'F', kind: 'field', field: { x: '0 T', y: '0 T', z: '40 T' }, length: '1 cm', to: 'RF' });
      d.elements.push({ id: 'RF', kind: 'rf', axis: { roll: '0 deg' }, static: { x: '0 T', y: '0 T', z: '12 T' }, amplitude: '11 T', frequency: '1 MHz', length: '1 cm', to: 'T' });
      d.elements.push({ id: 'T', kind: 'twist', field: '15 T', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '1 cm', to: 'M2' });
    });
    expect(r.ok).toBe(true);
    expect(warned(r, 'elements[4].field')[0].message).toMatch(/the field of 40 T is above 10 T/);
    expect(warned(r, 'elements[5].static')[0].message).toMatch(/the static field of 12 T/);
    expect(warned(r, 'elements[5].amplitude')[0].message).toMatch(/the amplitude of 11 T/);
    expect(warned(r, 'elements[6].field')[0].message).toMatch(/the field size of 15 T/);
  });
  it('every limit states its reason', () => {
    for (const p of Object.values(PLAUSIBLE)) expect(p.reason.length).toBeGreaterThan(30);
  });
});

describe('plausibility: the samples', () => {
  it('every sample reads without a warning', () => {
    const dir = join(import.meta.dirname, '..', '..', 'samples');
    for (const f of readdirSync(dir).filter((n) => n.endsWith('.spinyard'))) {
      const r = parseBeamlineText(readFileSync(join(dir, f), 'utf8'));
      expect(r.ok, f).toBe(true);
      if (r.ok) expect(r.warnings, f).toEqual([]);
    }
  });
});
