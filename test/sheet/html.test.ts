/** The printable setup sheet: a complete, self-contained, escaped HTML document with the side view. */
import { describe, expect, it } from 'vitest';
import { escapeHtml, sheetHtml, sheetNumber, sideViewSvg } from '../../src/sheet/html.ts';
import { buildSheet } from '../../src/sheet/model.ts';
import { DESIGN_V1 } from '../beamline/examples.ts';
import { runSample, runText } from './helpers.ts';

const sheetOf = (name: string) => {
  const r = runSample(name);
  return buildSheet(r.doc, r.line, r.result, { generatedAt: '2026-12-01 09:00' });
};

/** The inner HTML of the first <table class="NAME">. */
function table(html: string, name: string): string {
  const start = html.indexOf(`<table class="${name}">`);
  expect(start).toBeGreaterThan(0);
  return html.slice(start, html.indexOf('</table>', start));
}

const bodyRows = (t: string) => t.slice(t.indexOf('</thead>')).match(/<tr>/g)?.length ?? 0;

describe('sheetHtml (samples/bench-h)', () => {
  const m = sheetOf('bench-h-rb87-mj-then-eigenstate');
  const html = sheetHtml(m);

  it('is one complete HTML document for A4 print with inline CSS only', () => {
    expect(html.startsWith('<!DOCTYPE html>\n<html lang="en">')).toBe(true);
    expect(html.trimEnd().endsWith('</html>')).toBe(true);
    expect(html).toContain('<meta charset="utf-8">');
    expect(html).toMatch(/@page \{ size: A4 portrait; margin: [^}]+\}/);
    expect(html).toContain('page-break-inside: avoid');
  });

  it('has no script and loads nothing from outside', () => {
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/\bon[a-z]+=/i);
    expect(html).not.toMatch(/\b(src|href)=/i);
    expect(html).not.toMatch(/url\(|@import|<link/i);
    // the only URL is the SVG namespace name, which is not fetched
    expect(html.match(/https?:\/\/[^"\s]+/g)).toEqual(['http://www.w3.org/2000/svg']);
  });

  it('draws the side view as inline SVG with every element, the oven and a scale bar', () => {
    const svg = html.slice(html.indexOf('<svg'), html.indexOf('</svg>'));
    expect(svg.length).toBeGreaterThan(100);
    for (const id of ['S1', 'M1', 'M2']) expect(svg).toContain(`>${id}</text>`);
    expect(svg).toContain('>D1, D2, D3, D4</text>'); // four collectors on one plane: one mark
    expect(svg).toContain('>oven</text>');
    // a 100 cm line gets a 20 cm bar (1, 2 or 5 × 10^k near a fifth of the line)
    expect(svg).toContain('>20 cm</text>');
  });

  it('places the elements to scale: box widths and offsets proportional to lengths and positions', () => {
    const svg = sideViewSvg(m);
    const rect = (id: string) => {
      const g = svg.split('<g>').find((s) => s.includes(`>${id}</text>`))!;
      const [, x, w] = g.match(/<rect x="([\d.]+)" y="[\d.]+" width="([\d.]+)"/)!;
      return { x: Number(x), w: Number(w) };
    };
    const m1 = rect('M1');
    const m2 = rect('M2');
    expect(m2.w / m1.w).toBeCloseTo(10 / 5, 9); // 10 cm against 5 cm
    const s1 = rect('S1');
    expect((m2.x - m1.x) / (m1.x - s1.x)).toBeCloseTo((50 - 35) / (35 - 30), 9);
  });

  it('has a row for every leaf and every detector', () => {
    const leaves = table(html, 'leaves');
    expect(bodyRows(leaves)).toBe(m.leaves.length);
    for (const l of m.leaves) expect(leaves).toContain(l.path.map((p) => `<span class="nw">${escapeHtml(p)}</span>`).join(' '));
    const det = table(html, 'detectors');
    expect(bodyRows(det)).toBe(m.detectors.length);
    for (const d of m.detectors) {
      expect(det).toContain(`<th scope="row">${d.id}</th>`);
      expect(det).toContain(`${sheetNumber(d.counts)} ± ${sheetNumber(d.sigma, 3)}`);
    }
  });

  it('puts blank measured / checked by / date cells beside every set-point', () => {
    const t = table(html, 'elements');
    expect(t).toMatch(/<th>measured<\/th><th>checked by<\/th><th>date<\/th>/);
    const setPoints = m.elements.reduce((n, e) => n + Math.max(1, e.setPoints.length), 0);
    expect(bodyRows(t)).toBe(setPoints);
    expect(t.match(/<td class="blank"><\/td>/g)).toHaveLength(3 * setPoints);
    expect(t).toContain('<td class="sp">gradient</td><td class="val">200 T/m</td><td class="blank"></td><td class="blank"></td><td class="blank"></td>');
    expect(t).toContain('mJ=+1/2 → M2');
  });

  it('shows every caution and the line that defers to local rules', () => {
    const box = html.slice(html.indexOf('<section class="cautions">'));
    for (const c of m.cautions) expect(box).toContain(escapeHtml(c));
    expect(box).toContain('These notes summarise common practice; local rules and licensed practice take precedence.');
  });

  it('shows the warnings and the quadrature', () => {
    for (const w of m.warnings) expect(html).toContain(escapeHtml(w));
    expect(html).toContain(escapeHtml(m.quadrature!));
  });
});

describe('sheetHtml escaping', () => {
  const ATTACK = '<script>alert("x")</script> & <img src=x onerror=alert(1)> \'q\'';

  it('escapes a hostile title that came through the document', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.title = ATTACK;
    const r = runText(JSON.stringify(doc));
    const html = sheetHtml(buildSheet(r.doc, r.line, r.result));
    expect(html).not.toContain('<script>');
    expect(html).not.toContain('<img');
    expect(html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &lt;img src=x onerror=alert(1)&gt; &#39;q&#39;');
    expect(html).toContain(`<title>Setup sheet: ${escapeHtml(ATTACK)}</title>`);
  });

  it('escapes every string of the model: ids, kinds, set-points, routes, paths, warnings, constants', () => {
    const m = sheetOf('bench-h-rb87-mj-then-eigenstate');
    m.elements[0].id = ATTACK;
    m.elements[1].setPoints[0] = { name: ATTACK, value: ATTACK };
    m.elements[1].routes[0] = { port: ATTACK, target: ATTACK };
    m.leaves[0].path = [ATTACK];
    m.leaves[0].target = ATTACK;
    m.detectors[0].id = ATTACK;
    m.warnings = [ATTACK];
    m.species.constants[0].source = ATTACK;
    m.oven.state = ATTACK;
    m.generatedAt = ATTACK;
    const html = sheetHtml(m);
    expect(html).not.toMatch(/<script|<img/);
    expect(html.split(escapeHtml(ATTACK)).length - 1).toBeGreaterThanOrEqual(12);
  });

  it('escapeHtml maps the five HTML-special characters', () => {
    expect(escapeHtml(`a<b>&"'`)).toBe('a&lt;b&gt;&amp;&quot;&#39;');
  });
});

describe('sideViewSvg', () => {
  it('says so instead of drawing when the line has no geometry (design.md v1 example)', () => {
    const r = runText(DESIGN_V1);
    const out = sideViewSvg(buildSheet(r.doc, r.line, r.result));
    expect(out).not.toContain('<svg');
    expect(out).toContain('no geometry to draw to scale');
  });

  it('draws the branches of a line in rows below their branch point (samples/bench-k)', () => {
    const svg = sideViewSvg(sheetOf('bench-k-field-twist-passage'));
    expect(svg.match(/class="axis branch"/g)?.length).toBe(2); // one drop at M1's exit, one dashed row
    expect(svg).toContain('>DA1, DA0, DA2</text>');
    expect(svg).toContain('>DS1, DS0, DS2</text>');
  });
});

describe('sheetNumber', () => {
  it('writes 4 significant digits, exponents outside [1e-4, 1e6), a true minus sign', () => {
    expect(sheetNumber(0.0991212567)).toBe('0.09912');
    expect(sheetNumber(1765703.35)).toBe('1.766e6');
    expect(sheetNumber(-5.680648)).toBe('−5.681');
    expect(sheetNumber(2.5e-5)).toBe('2.5e-5');
    expect(sheetNumber(0)).toBe('0');
    expect(sheetNumber(undefined)).toBe('–');
  });
});

describe('a detector without background', () => {
  it('shows its signal-to-background as unbounded, not as the largest double', () => {
    const r = runText(JSON.stringify({
      format: 'spinyard.beamline', version: 1, title: 'Bench B, dark detector check',
      species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '1e8 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'M1' },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, ports: { '+1/2': 'D1', '-1/2': 'D2' } },
        { id: 'D1', kind: 'detector', background: '0 /s' },
        { id: 'D2', kind: 'detector', background: '2 /s' },
      ],
    }));
    const t = table(sheetHtml(buildSheet(r.doc, r.line, r.result)), 'detectors');
    expect(t).toContain('∞ (no background)');
    expect(t).not.toContain('e308');
    // the detector with background keeps its number: 5e7 /s over 2 /s
    expect(t).toContain('2.5e7');
  });
});
