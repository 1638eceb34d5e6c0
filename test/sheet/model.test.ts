/** The setup-sheet model: what the bench sheet holds for a line and its run. */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { BARE_SPIN_CAUTION, buildSheet, DEFERENCE, writtenValue } from '../../src/sheet/model.ts';
import { LINE_CAUTIONS, lookupSpecies } from '../../src/species/index.ts';
import { DESIGN_V1 } from '../beamline/examples.ts';
import { runSample, runText } from './helpers.ts';

const H = 'bench-h-rb87-mj-then-eigenstate';

describe('buildSheet (Rb-87 sorting line, samples/bench-h)', () => {
  const r = runSample(H);
  const m = buildSheet(r.doc, r.line, r.result, { generatedAt: '2026-12-01 09:00' });

  it('carries the title and the time it was given', () => {
    expect(m.title).toBe(r.doc.title);
    expect(m.generatedAt).toBe('2026-12-01 09:00');
    expect(buildSheet(r.doc, r.line, r.result).generatedAt).toBeUndefined();
  });

  it('gives the species with I, J and its constants with their sources', () => {
    expect(m.species.name).toBe('Rb-87');
    expect(m.species.I).toBe('3/2');
    expect(m.species.J).toBe('1/2');
    const A = m.species.constants.find((c) => c.name === 'A');
    // Steck, "Rubidium 87 D Line Data": ground-state A = 3.417 341 305 452 145(45) GHz
    expect(A?.value).toMatch(/^3417\.3413054\d* MHz$/);
    expect(A?.source).toMatch(/Steck/);
    const mass = m.species.constants.find((c) => c.name === 'mass');
    // AME2020 (Wang et al., Chin. Phys. C 45, 030003): m(87Rb) = 86.909 180 529 u
    expect(mass?.value).toBe('86.909180529 u');
    for (const c of m.species.constants) expect(c.source.length).toBeGreaterThan(5);
  });

  it('gives the oven as written and the flux the run used', () => {
    expect(m.oven.state).toBe('unpolarized');
    expect(m.oven.velocity).toEqual({ kind: 'effusive', parameters: [{ name: 'temperature', value: '420 K' }] });
    expect(m.oven.fluxWritten).toBe('5e8 /s');
    expect(m.oven.flux).toBe(5e8);
    expect(m.oven.aperture).toBe('1 mm × 0.05 mm');
  });

  it('lists the elements in beam order at their entrance, positions from the gaps and lengths of the document', () => {
    expect(m.elements.map((e) => e.id)).toEqual(['S1', 'M1', 'M2', 'D1', 'D2', 'D3', 'D4']);
    // S1: gap 30 cm; M1: 30 + 5; M2: 35 + 5 (M1) + 10; detectors: 50 + 10 (M2) + 40
    const at = Object.fromEntries(m.elements.map((e) => [e.id, e.entranceCm]));
    expect(at.S1).toBeCloseTo(30, 9);
    expect(at.M1).toBeCloseTo(35, 9);
    expect(at.M2).toBeCloseTo(50, 9);
    for (const d of ['D1', 'D2', 'D3', 'D4']) expect(at[d]).toBeCloseTo(100, 9);
    const len = Object.fromEntries(m.elements.map((e) => [e.id, e.lengthCm]));
    expect(len.M1).toBeCloseTo(5, 9);
    expect(len.M2).toBeCloseTo(10, 9);
    expect(len.S1).toBe(0);
    expect(m.lineLengthCm).toBeCloseTo(100, 9);
  });

  it('writes the set-points as the document wrote them, and the routing of every port', () => {
    const m1 = m.elements.find((e) => e.id === 'M1')!;
    expect(m1.kind).toBe('magnet');
    expect(m1.setPoints).toEqual([
      { name: 'gap', value: '5 cm' },
      { name: 'axis', value: 'roll 0 deg' },
      { name: 'field', value: '0.5 T' },
      { name: 'gradient', value: '200 T/m' },
      { name: 'length', value: '5 cm' },
      { name: 'aperture', value: '2 mm × 3 mm' },
      { name: 'group', value: 'mJ' },
    ]);
    expect(m1.routes).toEqual([{ port: 'mJ=+1/2', target: 'M2' }, { port: 'mJ=-1/2', target: 'stop' }]);
    expect(m.elements.find((e) => e.id === 'S1')!.routes).toEqual([{ port: '', target: 'M1' }]);
    const d1 = m.elements.find((e) => e.id === 'D1')!;
    expect(d1.routes).toEqual([]);
    expect(d1.setPoints.find((p) => p.name === 'window')?.value).toBe('1 mm × 1 mm at x 0 mm, z -5.7 mm');
    expect(d1.setPoints.find((p) => p.name === 'background')?.value).toBe('20 /s');
  });

  it('has one leaf row per leaf of the run, detector-plane positions in mm', () => {
    expect(m.leaves).toHaveLength(r.result.leaves.length);
    r.result.leaves.forEach((l, i) => {
      const s = m.leaves[i];
      expect(s.path).toEqual(l.path);
      expect(s.target).toBe(l.target);
      expect(s.yield).toBe(l.yield);
      expect(s.rate).toBe(l.rate);
      if (l.displacement) {
        expect(s.displacementMm!.z).toBeCloseTo(l.displacement.z * 1e3, 12);
        expect(s.spreadMm!.x).toBeCloseTo(l.spread!.x * 1e3, 12);
      } else {
        // stops absorb their sub-beam: no detector-plane figures
        expect(l.target).toBe('stop');
        expect(s.displacementMm).toBeUndefined();
      }
      expect(s.captured).toBe(l.captured);
    });
  });

  it('has one detector row per detector with counts ± σ for its dwell and the time to 1 %', () => {
    expect(m.detectors.map((d) => d.id)).toEqual(['D1', 'D2', 'D3', 'D4']);
    for (const d of m.detectors) {
      const src = r.result.detectors.find((x) => x.id === d.id)!;
      expect(d.counts).toBe(src.counts);
      expect(d.sigma).toBeCloseTo(Math.sqrt(d.counts), 6);
      expect(d.dwell).toBe(30);
      expect(d.epsilon).toBe(0.01);
      expect(d.timeToPrecision).toBe(src.timeToPrecision.seconds);
    }
  });

  it('gives the warnings and the quadrature of the run', () => {
    expect(m.warnings).toEqual([...new Set(r.result.warnings)]);
    expect(m.quadrature).toContain(`${r.result.quadrature!.nodes} nodes`);
  });

  it('gives the species cautions and the line cautions once each, and defers to local rules', () => {
    const rb = lookupSpecies('Rb-87');
    if (!rb || rb.kind !== 'atom') throw new Error('Rb-87 is a library atom');
    const notice = (c: string) => c.startsWith('These notes summarise');
    for (const c of [...(rb.cautions ?? []), ...LINE_CAUTIONS].filter((c) => !notice(c))) expect(m.cautions).toContain(c);
    expect(m.cautions.some((c) => /Alkali metal/.test(c))).toBe(true);
    expect(m.cautions.some((c) => /Strong magnets/.test(c))).toBe(true);
    expect(new Set(m.cautions).size).toBe(m.cautions.length);
    expect(m.cautions.some(notice)).toBe(false);
    expect(m.deference).toBe('These notes summarise common practice; local rules and licensed practice take precedence.');
    expect(DEFERENCE).toBe(m.deference);
  });
});

describe('buildSheet (other species forms)', () => {
  it('a bare spin gives g and mass as the document wrote them', () => {
    const r = runText(DESIGN_V1);
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.species.name).toBe('bare spin 1/2');
    expect(m.species.J).toBe('1/2');
    expect(m.species.constants).toEqual([
      { name: 'g', value: '2.00231930436', source: 'as written in the document' },
      { name: 'mass', value: '106.905 u', source: 'as written in the document' },
    ]);
    // the two-magnet reference document (docs/design.md) has no gaps or lengths: everything sits at the oven aperture
    expect(m.lineLengthCm).toBe(0);
    expect(m.elements.map((e) => e.id)).toEqual(['M1', 'M2', 'D1', 'D2']);
    expect(m.elements[1].setPoints).toEqual([{ name: 'axis', value: 'roll 60 deg' }]);
    // no library cautions for a bare spin: the sheet's own hot-oven caution, then the line cautions
    expect(m.cautions[0]).toBe(BARE_SPIN_CAUTION);
    expect(m.cautions.slice(1)).toEqual(LINE_CAUTIONS.filter((c) => !c.startsWith('These notes summarise')));
  });

  it('a natural mixture lists its isotopes with their fractions (samples/bench-g, silver)', () => {
    const r = runSample('bench-g-silver-split');
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.species.name).toBe('Ag');
    expect(m.species.parts!.map((p) => p.name)).toEqual(['Ag-107', 'Ag-109']);
    // CIAAW: natural silver 51.839 % Ag-107, 48.161 % Ag-109 (both I = 1/2)
    expect(m.species.parts![0].fraction).toBeCloseTo(0.51839, 4);
    expect(m.species.parts!.reduce((s, p) => s + p.fraction, 0)).toBeCloseTo(1, 12);
    expect(m.species.I).toBe('1/2');
    expect(m.cautions.some((c) => /Silver oven/.test(c))).toBe(true);
  });

  it('writes a pure oven state with its axis', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.oven.state = { kind: 'pure', axis: { theta: '90 deg', phi: '0 deg' }, m: '+1/2' };
    const r = runText(JSON.stringify(doc));
    expect(buildSheet(r.doc, r.line, r.result).oven.state).toBe('pure +1/2 along θ 90 deg, φ 0 deg');
  });
});

describe('writtenValue', () => {
  it('writes axes, vectors, rectangles, lists and flags as a person reads them', () => {
    expect(writtenValue({ roll: '60 deg' })).toBe('roll 60 deg');
    expect(writtenValue({ theta: '(pi/4) rad', phi: '0 deg' })).toBe('θ (pi/4) rad, φ 0 deg');
    expect(writtenValue({ x: '5 uT', y: '0 T', z: '0 T' })).toBe('(5 uT, 0 T, 0 T)');
    expect(writtenValue({ width: '0.1 mm', height: '3 mm' })).toBe('0.1 mm × 3 mm');
    expect(writtenValue({ width: '1 mm', height: '1 mm', x: '1.1 mm', z: '0 mm' })).toBe('1 mm × 1 mm at x 1.1 mm, z 0 mm');
    expect(writtenValue(['+1/2', '-1/2'])).toBe('+1/2, -1/2');
    expect(writtenValue({ '+1/2': '90 deg' })).toBe('+1/2: 90 deg');
    expect(writtenValue(true)).toBe('yes');
    expect(writtenValue(0.95)).toBe('0.95');
  });
});

describe('buildSheet: the file the sheet belongs to', () => {
  const r = runSample(H);

  it('names the file and carries the SHA-256 of its UTF-8 text', () => {
    const m = buildSheet(r.doc, r.line, r.result, { source: { fileName: 'bench-h.spinyard', text: r.text } });
    expect(m.source?.fileName).toBe('bench-h.spinyard');
    expect(m.source?.sha256).toBe(createHash('sha256').update(r.text, 'utf8').digest('hex'));
    expect(m.source?.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('a different text gives a different hash; the same text the same one', () => {
    const a = buildSheet(r.doc, r.line, r.result, { source: { fileName: 'x.spinyard', text: r.text } });
    const b = buildSheet(r.doc, r.line, r.result, { source: { fileName: 'x.spinyard', text: `${r.text} ` } });
    const c = buildSheet(r.doc, r.line, r.result, { source: { fileName: 'y.spinyard', text: r.text } });
    expect(a.source!.sha256).not.toBe(b.source!.sha256);
    expect(a.source!.sha256).toBe(c.source!.sha256);
  });

  it('without a source the sheet has none (an unsaved document) and keeps generatedAt', () => {
    const m = buildSheet(r.doc, r.line, r.result, { generatedAt: '2026-12-01 09:00' });
    expect(m.source).toBeUndefined();
    expect(m.generatedAt).toBe('2026-12-01 09:00');
  });
});

describe('buildSheet: positions from the oven aperture, set-points with their units', () => {
  const r = runSample(H);
  const m = buildSheet(r.doc, r.line, r.result);

  it('gives the entrance and the exit of every element in cm from the oven aperture', () => {
    for (const e of m.elements) {
      const p = r.result.positions![e.id];
      expect(e.entranceCm).toBeCloseTo(p.entrance * 100, 9);
      expect(e.exitCm).toBeCloseTo(p.exit * 100, 9);
    }
    // M2: gap 10 cm after M1's exit at 40 cm, length 10 cm (samples/bench-h)
    const m2 = m.elements.find((e) => e.id === 'M2')!;
    expect([m2.entranceCm, m2.exitCm]).toEqual([expect.closeTo(50, 9), expect.closeTo(60, 9)]);
  });

  it('says the unit a plain number carries (a detector efficiency is a fraction); written units stay as written', () => {
    const d1 = m.elements.find((e) => e.id === 'D1')!;
    expect(d1.setPoints.find((p) => p.name === 'efficiency')).toEqual({ name: 'efficiency', value: '0.95', implied: 'fraction of arrivals counted' });
    expect(d1.setPoints.find((p) => p.name === 'dwell')).toEqual({ name: 'dwell', value: '30 s' });
    const m1 = m.elements.find((e) => e.id === 'M1')!;
    expect(m1.setPoints.every((p) => p.implied === undefined)).toBe(true);
  });

  it('a detector key left out is listed with the value the run used, marked as the default', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.elements[2] = { id: 'D1', kind: 'detector' };
    const rr = runText(JSON.stringify(doc));
    const d1 = buildSheet(rr.doc, rr.line, rr.result).elements.find((e) => e.id === 'D1')!;
    const norm = rr.line.elements.find((e) => e.id === 'D1') as { efficiency: number; background: number; dwell: number };
    expect(d1.setPoints).toEqual([
      { name: 'efficiency', value: String(norm.efficiency), implied: 'fraction of arrivals counted', default: true },
      { name: 'background', value: `${norm.background} /s`, default: true },
      { name: 'dwell', value: `${norm.dwell} s`, default: true },
    ]);
    // the written detector D2 has no defaults added
    expect(buildSheet(rr.doc, rr.line, rr.result).elements.find((e) => e.id === 'D2')!.setPoints.some((p) => p.default)).toBe(false);
  });
});

describe('buildSheet: expected results per detector', () => {
  it('splits the rate into signal and background as the run gave them', () => {
    const r = runSample(H);
    const m = buildSheet(r.doc, r.line, r.result);
    for (const d of m.detectors) {
      const src = r.result.detectors.find((x) => x.id === d.id)!;
      expect(d.signal).toBe(src.signal);
      expect(d.background).toBe(src.background);
      expect(d.background).toBe(20); // "background": "20 /s" in samples/bench-h
      expect(d.rate).toBeCloseTo(d.signal + d.background, 6);
    }
  });
});

describe('buildSheet: sign-off lines per caution area', () => {
  it('an alkali line with magnets and detectors: magnets, vacuum and oven, alkali metal, high voltage', () => {
    const r = runSample(H);
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.signOff).toEqual([
      'Magnets and fields checked (posted 0.5 mT line, non-magnetic tools, pinch points)',
      'Vacuum and oven checked (viewports, shields, oven cooled before venting)',
      'Alkali metal handling checked (under oil or dry inert gas, Class D extinguisher at hand)',
      'High voltage checked (interlocks, lockable disconnect, grounding hook)',
    ]);
  });

  it('a bare spin without detectors: no alkali line and no high-voltage line', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.elements = [{ id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'stop', '-1/2': 'stop' } }];
    const r = runText(JSON.stringify(doc));
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.signOff.map((s) => s.split(' (')[0])).toEqual(['Magnets and fields checked', 'Vacuum and oven checked']);
  });

  it('metastable helium from a discharge: a high-voltage line even without a detector, no alkali line', () => {
    const r = runSample('bench-e-metastable-helium-spin1');
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.signOff.some((s) => s.startsWith('High voltage'))).toBe(true);
    expect(m.signOff.some((s) => s.startsWith('Alkali'))).toBe(false);
    const doc = JSON.parse(r.text);
    doc.elements = doc.elements.filter((e: { kind: string }) => e.kind !== 'detector');
    for (const e of doc.elements) if (e.ports) for (const k of Object.keys(e.ports)) e.ports[k] = 'stop';
    const rr = runText(JSON.stringify(doc));
    expect(buildSheet(rr.doc, rr.line, rr.result).signOff.some((s) => s.startsWith('High voltage'))).toBe(true);
  });
});

describe('buildSheet: plain numbers of the oven', () => {
  it('a supersonic speed ratio, written as a plain number, is said to be a ratio without unit; the speed keeps its unit', () => {
    const r = runSample('bench-e-metastable-helium-spin1');
    expect(buildSheet(r.doc, r.line, r.result).oven.velocity).toEqual({
      kind: 'supersonic',
      parameters: [{ name: 'speed', value: '1200 m/s' }, { name: 'ratio', value: '20', implied: 'speed ratio, no unit' }],
    });
  });

  it('a velocity table says its points are speed: relative weight', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.oven.velocity = { kind: 'table', points: [['500 m/s', 1], ['600 m/s', 2]] };
    const r = runText(JSON.stringify(doc));
    expect(buildSheet(r.doc, r.line, r.result).oven.velocity.parameters).toEqual([{ name: 'points', value: '500 m/s: 1, 600 m/s: 2', implied: 'speed: relative weight' }]);
  });
});

describe('the tolerance budget on the sheet', () => {
  it('prints the five largest first-order entries of a document that keeps tolerances, largest relative effect first', () => {
    const r = runSample('bench-c-roll-calibration');
    const m = buildSheet(r.doc, r.line, r.result);
    expect(m.tolerances).toHaveLength(5);
    for (let i = 1; i < 5; i++) expect(m.tolerances![i].relative).toBeLessThanOrEqual(m.tolerances![i - 1].relative);
    // D1 and the flux: ∂S/∂F = η·Y1 with Y1 = ½·cos²(15°), σ_F = 1e8 /s (normal): 0.9 · 0.46651 · 1e8
    const d1 = m.tolerances!.find((t) => t.detector === 'D1' && t.parameter === 'oven.flux')!;
    expect(d1.effect).toBeCloseTo(0.9 * 0.5 * Math.cos(Math.PI / 12) ** 2 * 1e8, 0);
    expect(d1.tolerance).toBe('±1e8 /s normal');
    expect(m.tolerances!.some((t) => t.tolerance === '±0.5 deg uniform')).toBe(true);
  });

  it('prints no budget section for a document without tolerances', () => {
    const r = runSample('bench-a-spin32-rotator');
    expect(buildSheet(r.doc, r.line, r.result).tolerances).toBeUndefined();
  });
});
