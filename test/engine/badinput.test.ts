import { describe, it, expect } from 'vitest';
import { runDocumentText } from '../../src/engine/document.ts';

const doc = (over: Record<string, unknown>) => JSON.stringify({ format: 'spinyard.beamline', version: 1, title: 'bad input', ...over });
const det = { id: 'D1', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' };
const rb = (magnet: Record<string, unknown>, oven: Record<string, unknown> = {}) => doc({
  species: 'Rb-87',
  oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: '420 K' }, to: 'M1', ...oven },
  elements: [{ id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '*': 'D1' }, ...magnet }, det],
});

describe('runDocumentText: bad input of real beams (issue 3)', () => {
  it('an unknown species lists the known ones', () => {
    const r = runDocumentText(rb({}).replace('"Rb-87"', '"Rb-88"'));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.join('\n')).toMatch(/Rb-88[\s\S]*Rb-87/);
  });
  it('a port label the magnet does not produce is named', () => {
    const r = runDocumentText(rb({ field: '0.5 T', ports: { 'mJ=+3/2': 'D1', '*': 'stop' } }));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.join('\n')).toMatch(/mJ=\+3\/2/);
  });
  it('a hyperfine magnet without a field (no quantisation of its ports) is an error that names it', () => {
    const r = runDocumentText(rb({}));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.join('\n')).toMatch(/elements\[0\]\.field: .*field > 0/);
    const z = runDocumentText(rb({ field: '0 T' }));
    expect(z.ok).toBe(false);
  });
  it('negative lengths and temperatures are refused with their paths', () => {
    const r = runDocumentText(rb({ field: '0.5 T', length: '-5 cm' }, { velocity: { kind: 'effusive', temperature: '-3 K' } }));
    expect(r.ok).toBe(false);
    if (!r.ok) {
      const all = r.problems.join('\n');
      expect(all).toMatch(/elements\[0\]\.length/);
      expect(all).toMatch(/oven\.velocity\.temperature/);
    }
  });
  it('velocity tables that are empty, negative or unsorted are refused', () => {
    for (const points of [[], [['-10 m/s', 1]], [['300 m/s', 1], ['200 m/s', 1]]]) {
      const r = runDocumentText(rb({ field: '0.5 T' }, { velocity: { kind: 'table', points } }));
      expect(r.ok, JSON.stringify(points)).toBe(false);
      if (!r.ok) expect(r.problems.join('\n')).toMatch(/oven\.velocity\.points/);
    }
  });
  it('a pole-gap aperture narrower than the collimated beam is a warning, and the clipped part is lost', () => {
    const r = runDocumentText(doc({
      species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, aperture: { width: '2 mm', height: '2 mm' }, to: 'S1' },
      elements: [
        { id: 'S1', kind: 'slit', gap: '20 cm', width: '1 mm', height: '1 mm', to: 'M1' },
        { id: 'M1', kind: 'magnet', gap: '5 cm', axis: { roll: '0 deg' }, aperture: { width: '0.5 mm', height: '3 mm' }, ports: { '*': 'D1' } },
        det,
      ],
    }));
    expect(r.ok).toBe(true);
    if (r.ok) {
      expect(r.result.warnings.join('\n')).toMatch(/elements\[1\]\.aperture: the collimated beam .* wide against a 0\.500 mm pole gap/);
      expect(r.result.lost).toBeGreaterThan(0.3);
      expect(Math.abs(r.result.leaves.reduce((s, l) => s + l.yield, 0) + r.result.lost - 1)).toBeLessThan(1e-12);
    }
  });
  it('a quadrature that cannot converge says so with the achieved error (a twist after a fast precession)', () => {
    const r = runDocumentText(doc({
      species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
      oven: { state: { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: '1300 K' }, to: 'F1' },
      elements: [
        { id: 'F1', kind: 'field', field: { x: '2 mT', y: '0 T', z: '0 T' }, length: '20 cm', to: 'T1' },
        { id: 'T1', kind: 'twist', field: '1 uT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '1 cm', to: 'M1' },
        { id: 'M1', kind: 'magnet', axis: { roll: '90 deg' }, ports: { '+1/2': 'D1', '-1/2': 'stop' } },
        det,
      ],
    }));
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.result.warnings.join('\n')).toMatch(/elements\[1\]: the speed-by-speed average after the field twist did not converge to 1e-9: the yields moved by up to \d/);
  });
});
