import { describe, expect, it } from 'vitest';
import { formatProblem } from '../../src/beamline/check.ts';
import { DEFAULT_MAX_BYTES, checkSize, readBeamlineText } from '../../src/beamline/text.ts';
import { serializeDoc } from '../../src/beamline/serialize.ts';
import { DESIGN_V1 } from './examples.ts';
import { fakeSpecies } from './fakeSpecies.ts';

const read = (text: string, maxBytes?: number) => readBeamlineText(text, fakeSpecies, maxBytes === undefined ? {} : { maxBytes });
const messages = (text: string, maxBytes?: number) => {
  const r = read(text, maxBytes);
  if (r.ok) throw new Error('expected problems');
  return r.problems.map(formatProblem);
};

describe('readBeamlineText', () => {
  it('reads the v1 example text', () => {
    expect(read(DESIGN_V1).ok).toBe(true);
  });
  it('reads a Cs-133 field-sweep document with a 256-point measured velocity table', () => {
    // A time-of-flight table as a lab records it: 256 speeds 4.37 m/s apart with their weights, summing to 1.
    const speeds = Array.from({ length: 256 }, (_, i) => 2.2 + 4.37 * i);
    const raw = speeds.map((v) => v ** 3 * Math.exp(-((v / 250) ** 2)));
    const total = raw.reduce((a, b) => a + b, 0);
    const text = JSON.stringify({
      format: 'spinyard.beamline', version: 1, title: 'Bench W, caesium clock-transition sweep', species: 'Cs-133',
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'table', points: speeds.map((v, i) => [`${v} m/s`, raw[i] / total]) }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.5 T', gradient: '200 T/m', length: '5 cm', group: 'mJ', ports: { 'mJ=+1/2': 'F1', 'mJ=-1/2': 'stop' } },
        { id: 'F1', kind: 'field', field: { x: '0 T', y: '0 T', z: '10 uT' }, length: '20 cm', to: 'M2' },
        { id: 'M2', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.5 T', gradient: '200 T/m', length: '5 cm', group: 'mJ', ports: { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' } },
        { id: 'D1', kind: 'detector' },
        { id: 'D2', kind: 'detector' },
      ],
    }, null, 2);
    const r = read(text);
    if (!r.ok) throw new Error(r.problems.map(formatProblem).join('\n'));
    expect(r.line.species).toEqual({ kind: 'named', name: 'Cs-133' });
    const v = r.line.oven.velocity;
    expect(v.kind === 'table' && v.points.length).toBe(256);
    if (v.kind === 'table') {
      expect(v.points.reduce((a, [, w]) => a + w, 0)).toBeCloseTo(1, 12);
      expect(v.points[255][0]).toBeCloseTo(2.2 + 4.37 * 255, 9);
    }
    expect(r.line.elements.map((e) => e.id)).toEqual(['M1', 'F1', 'M2', 'D1', 'D2']);
  });
  it('rejects an empty file', () => {
    expect(messages('')).toEqual(['the file is empty: a beamline is a JSON object with "format": "spinyard.beamline"']);
    expect(messages(' \n\t')).toHaveLength(1);
  });
  it('rejects malformed JSON with line and column', () => {
    const broken = DESIGN_V1.replace('"flux": "2e9 /s",', '"flux": "2e9 /s"');
    expect(messages(broken)).toEqual(['oven: not valid JSON at line 9, column 5: expected "," or "}", got "\\""']);
  });
  it('rejects a duplicate key that JSON.parse would silently drop', () => {
    const dup = DESIGN_V1.replace('"efficiency": 0.9,', '"efficiency": 0.9, "efficiency": 0.09,');
    expect(messages(dup)).toEqual(['elements[2].efficiency: key "efficiency" appears twice in one object (line 17, column 58)']);
  });
  it('refuses a 50 MB file without parsing it', () => {
    const huge = `{"format": "spinyard.beamline", "junk": "${'x'.repeat(50 * 1024 * 1024)}`; // not even valid JSON
    expect(messages(huge)).toEqual([`the file is at least 50.0 MB, over the 20.0 MB limit for a beamline document; it was not read`]);
  });
  it('counts the limit in UTF-8 bytes', () => {
    const text = serializeDoc(JSON.parse(DESIGN_V1)).replace('Bench B, roll scan', 'µ'.repeat(100));
    const bytes = new TextEncoder().encode(text).length;
    expect(read(text, bytes).ok).toBe(true);
    expect(messages(text, bytes - 1)[0]).toMatch(/over the 0\.0 MB limit/);
  });
  it('checkSize lets a host refuse a file from its size alone', () => {
    expect(checkSize(DEFAULT_MAX_BYTES)).toBeUndefined();
    expect(checkSize(50 * 1024 * 1024)?.message).toBe('the file is 50.0 MB, over the 20.0 MB limit for a beamline document; it was not read');
  });
});
