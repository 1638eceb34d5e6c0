import { describe, expect, it } from 'vitest';
import { checkBeamline } from '../../src/beamline/check.ts';
import { serializeDoc } from '../../src/beamline/serialize.ts';
import { readBeamlineText } from '../../src/beamline/text.ts';
import { DESIGN_V1, completedBeamKeys } from './examples.ts';
import { fakeSpecies } from './fakeSpecies.ts';

function roundTrip(doc: unknown) {
  const a = checkBeamline(doc, fakeSpecies);
  if (!a.ok) throw new Error('fixture does not validate');
  const text = serializeDoc(a.doc);
  const b = readBeamlineText(text, fakeSpecies);
  if (!b.ok) throw new Error('serialized text does not validate');
  return { a, b, text };
}

describe('serializeDoc', () => {
  it('round-trips the reference documents of docs/design.md: the normalized line is identical', () => {
    for (const doc of [JSON.parse(DESIGN_V1), completedBeamKeys()]) {
      const { a, b, text } = roundTrip(doc);
      expect(b.line).toEqual(a.line);
      expect(serializeDoc(b.doc)).toBe(text);
    }
  });
  it('writes keys in the stable order, 2-space indent, newline at the end', () => {
    const d = JSON.parse(DESIGN_V1);
    const shuffled = { elements: d.elements.map((e: Record<string, unknown>) => Object.fromEntries(Object.entries(e).reverse())), oven: d.oven, species: d.species, version: 1, title: d.title, format: d.format };
    const text = serializeDoc(shuffled);
    expect(text.endsWith('}\n')).toBe(true);
    expect(text.split('\n').slice(0, 4)).toEqual(['{', '  "format": "spinyard.beamline",', '  "version": 1,', '  "title": "Bench B, roll scan",']);
    expect(Object.keys(JSON.parse(text))).toEqual(['format', 'version', 'title', 'species', 'oven', 'elements']);
    expect(Object.keys(JSON.parse(text).elements[0])).toEqual(['id', 'kind', 'axis', 'ports']);
    expect(text).toBe(serializeDoc(d));
  });
  it('orders element keys as docs/design.md lists them', () => {
    const text = serializeDoc(completedBeamKeys());
    const els = JSON.parse(text).elements;
    expect(Object.keys(els[1])).toEqual(['id', 'kind', 'gap', 'axis', 'field', 'gradient', 'length', 'group', 'ports']);
    expect(Object.keys(els[3])).toEqual(['id', 'kind', 'gap', 'field', 'start', 'end', 'length', 'to']);
    expect(Object.keys(els[5].window)).toEqual(['x', 'z', 'width', 'height']);
    expect(Object.keys(JSON.parse(text).oven)).toEqual(['state', 'flux', 'velocity', 'aperture', 'to']);
    // port labels keep the order written, "*" included
    expect(Object.keys(els[4].ports)).toEqual(['F=2,mF=+2', 'F=2,mF=+1', '*']);
  });
  it('writes each [speed, weight] pair of a table on one line', () => {
    const d = JSON.parse(DESIGN_V1);
    d.oven.velocity = { kind: 'table', points: [['300 m/s', 0.25], ['400 m/s', 0.75]] };
    const text = serializeDoc(d);
    expect(text).toContain('      "points": [\n        ["300 m/s", 0.25],\n        ["400 m/s", 0.75]\n      ]');
    const { a, b } = roundTrip(d);
    expect(b.line).toEqual(a.line);
  });
  it('keeps keys it does not know after the known ones', () => {
    const d = { ...JSON.parse(DESIGN_V1), zzz: 1 };
    expect(Object.keys(JSON.parse(serializeDoc(d))).at(-1)).toBe('zzz');
  });
});
