/** The printable setup sheet: a complete, self-contained, escaped HTML document with the side view. */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { formatCountsColumn } from '../../src/beamline/numbers.ts';
import { BEAM_STYLES, cssString, escapeHtml, rowLetter, sheetHtml, sheetNumber, sideViewSvg } from '../../src/sheet/html.ts';
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

  it('is one complete HTML document for print in portrait (the paper size left to the printer) with inline CSS only', () => {
    expect(html.startsWith('<!DOCTYPE html>\n<html lang="en">')).toBe(true);
    expect(html.trimEnd().endsWith('</html>')).toBe(true);
    expect(html).toContain('<meta charset="utf-8">');
    // no fixed size: a PDF export that asks for A4 or Letter (and prefers the CSS page size) gets that paper
    expect(html).toMatch(/@page \{ size: portrait; margin: [^;]+;/);
    expect(html).not.toMatch(/size: (A4|letter)/i);
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
      // counts ± σ by the one rule: σ to 2 significant figures, the counts to σ's place
      const row = det.slice(det.indexOf(`<th scope="row">${d.id}</th>`)).split('</tr>')[0];
      const [, c, sg] = /<td class="num counts"><span class="nw">([\d.e−-]+)<\/span> ± <span class="nw">([\d.e−-]+)<\/span><\/td>/.exec(row)!;
      expect(sg.replace(/e.*/, '').replace('.', '').replace(/^0+/, '')).toHaveLength(2);
      expect(Math.abs(Number(sg) - d.sigma)).toBeLessThanOrEqual(0.05 * d.sigma);
      expect(Math.abs(Number(c) - d.counts)).toBeLessThanOrEqual(0.1 * d.sigma);
      expect(`${c} ± ${sg}`).toBe(formatCountsColumn([{ counts: d.counts, sigma: d.sigma }])[0]);
    }
  });

  it('puts blank measured / checked by / date cells beside every set-point', () => {
    const t = table(html, 'elements');
    expect(t).toMatch(/<th rowspan="2">measured<\/th><th rowspan="2">checked by<\/th><th rowspan="2">date<\/th>/);
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
  it('says so instead of drawing when the line has no geometry (the two-magnet reference document of docs/design.md)', () => {
    const r = runText(DESIGN_V1);
    const out = sideViewSvg(buildSheet(r.doc, r.line, r.result));
    expect(out).not.toContain('<svg');
    expect(out).toContain('no geometry to draw to scale');
  });

  it('draws the branches of a line in rows below their branch point (samples/bench-k)', () => {
    const svg = sideViewSvg(sheetOf('bench-k-field-twist-passage'));
    // row B: one drop at M1's exit and its row, plus its sample in the legend
    expect(svg.match(/class="axis beam-B"/g)?.length).toBe(3);
    expect(svg).toContain('>DA1, DA0, DA2</text>');
    expect(svg).toContain('>DS1, DS0, DS2</text>');
  });

  it('tells the sub-beams apart by line style and letter, not by colour (samples/bench-k)', () => {
    const svg = sideViewSvg(sheetOf('bench-k-field-twist-passage'));
    const lines = (row: string) => svg.match(new RegExp(`<line [^>]*class="axis beam-${row}"[^>]*/>`, 'g')) ?? [];
    // A, the beam from the oven: solid (no dash pattern); B: dashed
    expect(lines('A').length).toBeGreaterThanOrEqual(2);
    for (const l of lines('A')) expect(l).not.toContain('stroke-dasharray');
    for (const l of lines('B')) expect(l).toContain(`stroke-dasharray="${BEAM_STYLES[1].dash}"`);
    expect(BEAM_STYLES[1].name).toBe('dashed');
    // each row carries its letter on the drawing, and the legend names where its beam comes from
    expect(svg).toContain('class="tag">A</text>');
    expect(svg).toContain('class="tag">B</text>');
    expect(svg).toContain('<tspan class="tagi">A</tspan> (solid): the beam from the oven');
    expect(svg).toContain('<tspan class="tagi">B</tspan> (dashed): port -1 of M1 → T2');
    // no stroke or fill but black, white and greys
    for (const c of svg.match(/(?:stroke|fill):[^;}"]+/g) ?? []) expect(c, c).toMatch(/:(#000|#fff|#([0-9a-f])\2\2|none)$/);
  });

  it('gives every row a different dash pattern up to six rows, then a different letter', () => {
    expect(new Set(BEAM_STYLES.map((s) => s.dash)).size).toBe(BEAM_STYLES.length);
    expect(BEAM_STYLES.map((s) => s.name)).toEqual(['solid', 'dashed', 'dotted', 'dash-dot', 'long dash', 'dash-dot-dot']);
    expect([0, 1, 25, 26, 27].map(rowLetter)).toEqual(['A', 'B', 'Z', 'AA', 'AB']);
  });

  it('a line with one row draws it solid, without letters or legend (samples/bench-h)', () => {
    const svg = sideViewSvg(sheetOf('bench-h-rb87-mj-then-eigenstate'));
    expect(svg).not.toContain('stroke-dasharray');
    expect(svg).not.toContain('class="tag"');
    expect(svg).not.toContain('class="legend"');
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

/** Reads a CSS string literal back: hex escapes ("\3c " → "<") and escaped characters. */
function readCssString(lit: string): string {
  expect(lit.startsWith('"') && lit.endsWith('"')).toBe(true);
  return lit.slice(1, -1).replace(/\\([0-9a-fA-F]{1,6}) ?|\\(.)/g, (_, h, c) => (h ? String.fromCodePoint(parseInt(h, 16)) : c));
}

/** The content of the @page margin box NAME. */
function marginBox(html: string, name: string): string {
  const m = new RegExp(`@${name} \\{ content: ((?:"(?:[^"\\\\]|\\\\.)*"|counter\\(\\w+\\)| )+);`).exec(html);
  expect(m, `@${name}`).not.toBeNull();
  return m![1];
}

describe('sheetHtml: the file and the page count on every printed page', () => {
  const r = runSample('bench-h-rb87-mj-then-eigenstate');
  const withSource = (fileName: string, text = r.text) =>
    sheetHtml(buildSheet(r.doc, r.line, r.result, { generatedAt: '2026-12-01 09:00 UTC', source: { fileName, text } }));
  const hash = createHash('sha256').update(r.text, 'utf8').digest('hex');

  it('puts the file name and the first 12 hex digits of the SHA-256 in the top-left margin box of every page', () => {
    const html = withSource('bench-h-rb87-mj-then-eigenstate.spinyard');
    expect(readCssString(marginBox(html, 'top-left'))).toBe(`bench-h-rb87-mj-then-eigenstate.spinyard · sha256 ${hash.slice(0, 12)}`);
    // and on the first page in the header, in words
    expect(html).toContain(`File <span class="source">bench-h-rb87-mj-then-eigenstate.spinyard</span> · sha256 <span class="source">${hash.slice(0, 12)}</span>`);
    expect(html).not.toContain(hash.slice(0, 13));
  });

  it('numbers the pages "Page n of m" in the bottom-right margin box, the time it was generated bottom left', () => {
    const html = withSource('x.spinyard');
    expect(marginBox(html, 'bottom-right')).toBe('"Page " counter(page) " of " counter(pages)');
    expect(readCssString(marginBox(html, 'bottom-left'))).toBe('generated 2026-12-01 09:00 UTC');
    expect(readCssString(marginBox(html, 'top-right'))).toBe('Spinyard setup sheet');
  });

  it('an unsaved document says so on every page and in the header, and prints no hash', () => {
    const html = sheetHtml(buildSheet(r.doc, r.line, r.result));
    expect(readCssString(marginBox(html, 'top-left'))).toBe('unsaved document (no file, no hash)');
    expect(html).toContain('Unsaved document: this sheet belongs to no file.');
    expect(html).not.toMatch(/sha256 [0-9a-f]{12}/);
    expect(readCssString(marginBox(html, 'bottom-left'))).toBe('');
  });

  it('a file name cannot leave its CSS string or the style element, and reads back as it was', () => {
    const evil = 'a"b\\c\n</style><script>x()</script>{}; é 😀.spinyard';
    const html = withSource(evil);
    const style = html.slice(html.indexOf('<style>'), html.indexOf('</style>') + 8);
    expect(style.match(/<\/style>/g)).toHaveLength(1);
    expect(html).not.toContain('<script');
    expect(readCssString(marginBox(html, 'top-left'))).toBe(`${evil} · sha256 ${hash.slice(0, 12)}`);
    expect(readCssString(cssString(evil))).toBe(evil);
    const inner = cssString(evil).slice(1, -1);
    expect(inner).not.toMatch(/["<>{}\n]/);
    expect(inner).not.toMatch(/\\(?![0-9a-f])/);
    expect(html).toContain(`<span class="source">${escapeHtml(evil)}</span>`);
  });
});

describe('sheetHtml: what the bench needs (samples/bench-h)', () => {
  const r = runSample('bench-h-rb87-mj-then-eigenstate');
  const m = buildSheet(r.doc, r.line, r.result, { source: { fileName: 'h.spinyard', text: r.text } });
  const html = sheetHtml(m);

  it('gives entrance and exit of every element, in cm from the oven aperture, said in the column header', () => {
    const t = table(html, 'elements');
    expect(t).toContain('<th colspan="2" class="from">from the oven aperture (cm)</th>');
    expect(t).toContain('<tr><th class="num">entrance</th><th class="num">exit</th></tr></thead>');
    // M2 enters at 50 cm and leaves at 60 cm
    expect(t).toMatch(/<th scope="row" rowspan="\d+">M2<\/th><td class="kind" rowspan="\d+">magnet<\/td><td class="num" rowspan="\d+">50<\/td><td class="num" rowspan="\d+">60<\/td>/);
  });

  it('says the unit of a plain-number set-point beside its value', () => {
    expect(table(html, 'elements')).toContain('<td class="val">0.95 <span class="implied">(fraction of arrivals counted)</span></td>');
  });

  it('marks a default the run used where the document wrote none', () => {
    const doc = JSON.parse(DESIGN_V1);
    doc.elements[3] = { id: 'D2', kind: 'detector', efficiency: 0.9 };
    const rr = runText(JSON.stringify(doc));
    const t = table(sheetHtml(buildSheet(rr.doc, rr.line, rr.result)), 'elements');
    expect(t).toContain('<td class="sp">dwell</td><td class="val">1 s <span class="implied">(default; not written in the file)</span></td>');
  });

  it('gives per detector the yield, signal, background, total, counts, S/B and the time to 1 %', () => {
    const t = table(html, 'detectors');
    for (const h of ['yield', 'signal<br>(counts/s)', 'background<br>(counts/s)', 'total<br>(counts/s)', 'counts ± σ<br>in the dwell', 'dwell', 'S/B', 'time to<br>1 %']) {
      expect(t).toContain(`<th class="num">${h}</th>`);
    }
    const d1 = m.detectors[0];
    // yields to 6 figures and rates to 4 (src/beamline/numbers.ts), as on the command line
    expect(t).toContain(`<th scope="row">D1</th><td class="num">${sheetNumber(d1.yield, 6)}</td><td class="num">${sheetNumber(d1.signal)}</td><td class="num">20</td><td class="num">${sheetNumber(d1.rate)}</td>`);
  });

  it('has sign-off lines with blank cells: prepared, aligned, checked, then one per caution area', () => {
    const t = table(html, 'signoff');
    expect(t).toContain('<th></th><th>name</th><th>signature</th><th>date</th>');
    const rows = ['Sheet prepared by', 'Line aligned by', 'Sheet checked by', ...m.signOff];
    expect(bodyRows(t)).toBe(rows.length);
    for (const l of rows) expect(t).toContain(`<tr><th scope="row">${escapeHtml(l)}</th><td class="blank"></td><td class="blank"></td><td class="blank"></td></tr>`);
    expect(t).toContain('Alkali metal handling checked');
  });

  it('a detector that gets no signal (a yield of round-off) shows yield 0, S/B 0 and no time, not a number of days', () => {
    const k = runSample('bench-k-field-twist-passage');
    const mk = buildSheet(k.doc, k.line, k.result);
    const dead = mk.detectors.find((d) => d.yield !== 0 && Math.abs(d.yield) < 1e-15);
    expect(dead, 'samples/bench-k has a detector whose yield is rounding noise').toBeDefined();
    const t = table(sheetHtml(mk), 'detectors');
    const row = t.slice(t.indexOf(`<th scope="row">${dead!.id}</th>`)).split('</tr>')[0];
    expect(row).toMatch(/^<th scope="row">DA2<\/th><td class="num">0<\/td><td class="num">0<\/td>/);
    expect(row).toContain('<td class="num">no signal</td>');
    expect(row).not.toMatch(/e-16|e-7/);
    expect(row).not.toMatch(/\d d</);
  });

  it('keeps table rows whole, repeats table headers on each page, and never ends a page on a heading', () => {
    expect(html).toMatch(/\btr \{[^}]*break-inside: avoid/);
    // an element's set-points stay together; a long leaves or detectors table may break between rows
    expect(html).toMatch(/table\.elements tbody[^{]*\{[^}]*break-inside: avoid/);
    expect(html).toMatch(/table\.elements, table\.leaves, table\.detectors \{[^}]*break-inside: auto/);
    expect(html).toMatch(/thead \{ display: table-header-group/);
    expect(html).toMatch(/h2 \{[^}]*break-after: avoid/);
    expect(html).toMatch(/section\.signoff \{[^}]*break-inside: avoid/);
    expect(html).toMatch(/\.cautions \{[^}]*break-inside: avoid/);
  });

  it('prints in black and grey only', () => {
    for (const c of html.match(/#[0-9a-fA-F]{3,6}\b/g) ?? []) expect(c, c).toMatch(/^#(?:([0-9a-f])\1\1|([0-9a-f]{2})\2\2)$/i);
    expect(html).not.toMatch(/\b(rgb|hsl)a?\(/);
  });
});

describe('sideViewSvg: many sub-beams', () => {
  /** Spin 3/2: M1 sends each port to a rotator and a magnet of its own at its own place; N1 sends "*" on to Q1. */
  function fan() {
    const ports = ['+3/2', '+1/2', '-1/2', '-3/2'];
    const els: Record<string, unknown>[] = [{ id: 'M1', kind: 'magnet', gap: '10 cm', axis: { roll: '0 deg' }, gradient: '100 T/m', length: '5 cm', ports: Object.fromEntries(ports.map((p, i) => [p, `R${i + 1}`])) }];
    ports.forEach((_, i) => {
      els.push({ id: `R${i + 1}`, kind: 'rotator', gap: `${3 + 4 * i} cm`, axis: { roll: '90 deg' }, angle: '45 deg', to: `N${i + 1}` });
      els.push({ id: `N${i + 1}`, kind: 'magnet', gap: '5 cm', axis: { roll: '0 deg' }, gradient: '100 T/m', length: '4 cm', ports: { '+3/2': `D${i + 1}`, '*': i === 0 ? 'Q1' : 'stop' } });
      els.push({ id: `D${i + 1}`, kind: 'detector', gap: '20 cm' });
    });
    els.push({ id: 'Q1', kind: 'detector', gap: '30 cm' });
    return runText(JSON.stringify({
      format: 'spinyard.beamline', version: 1, title: 'Fan of sub-beams', species: { spin: '3/2', g: 1.3, mass: '52.94 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'M1' }, elements: els,
    }));
  }

  it('gives five rows five line styles and letters, and names where each comes from', () => {
    const r = fan();
    const svg = sideViewSvg(buildSheet(r.doc, r.line, r.result));
    const dashOf = (row: string) => [...new Set((svg.match(new RegExp(`class="axis beam-${row}"[^>]*`, 'g')) ?? []).map((l) => /stroke-dasharray="([^"]+)"/.exec(l)?.[1] ?? ''))];
    const dashes = ['A', 'B', 'C', 'D', 'E'].map(dashOf);
    for (const d of dashes) expect(d).toHaveLength(1); // one style per row, its drop and its legend sample alike
    expect(new Set(dashes.map((d) => d[0])).size).toBe(5);
    for (const row of ['A', 'B', 'C', 'D', 'E']) expect(svg).toContain(`class="tag">${row}</text>`);
    expect(svg).toContain('(dashed): every other port of N1 → Q1');
    expect(svg).toContain('(dotted): port +1/2 of M1 → R2');
    expect(svg).toContain('(dash-dot): port -1/2 of M1 → R3');
    expect(svg).toContain('(long dash): port -3/2 of M1 → R4');
  });
});

describe('sheetHtml: the oven', () => {
  it('says the unit a plain number of the oven implies (samples/bench-e)', () => {
    const r = runSample('bench-e-metastable-helium-spin1');
    expect(table(sheetHtml(buildSheet(r.doc, r.line, r.result)), 'oven'))
      .toContain('<td class="val">supersonic: speed 1200 m/s, ratio 20 (speed ratio, no unit)</td>');
  });
});

describe('the tolerance section', () => {
  it('shows the budget\'s largest entries with their units, and nothing for a line without tolerances', async () => {
    const { runSample } = await import('./helpers.ts');
    const { buildSheet } = await import('../../src/sheet/model.ts');
    const { sheetHtml } = await import('../../src/sheet/html.ts');
    const c = runSample('bench-c-roll-calibration');
    const html = sheetHtml(buildSheet(c.doc, c.line, c.result));
    expect(html).toContain('Tolerances that move the signals most (first order)');
    expect(html).toMatch(/<td>D1<\/td><td>oven\.flux<\/td><td>±1e8 \/s normal<\/td>/);
    const a = runSample('bench-a-spin32-rotator');
    expect(sheetHtml(buildSheet(a.doc, a.line, a.result))).not.toContain('Tolerances that move');
  });
});

describe('the sheet prints results by the one number rule (src/beamline/numbers.ts)', () => {
  const cellsOf = (t: string, id: string) => {
    const row = t.slice(t.indexOf(id)).split('</tr>')[0];
    return [...row.matchAll(/<td class="num[^"]*">(.*?)<\/td>/g)].map((x) => x[1].replace(/<[^>]+>/g, ''));
  };
  it('writes round-off as 0: bench H\'s closed ports (3.5e-33) and bench D\'s lost fraction (2.8e-16)', () => {
    const h = sheetOf('bench-h-rb87-mj-then-eigenstate');
    const leaves = table(sheetHtml(h), 'leaves');
    expect(leaves).not.toMatch(/e-3\d/);
    const noise = h.leaves.filter((l) => l.yield !== 0 && l.yield < 1e-30);
    expect(noise.length).toBeGreaterThan(0);
    for (const l of noise) {
      const row = leaves.split('<tr>').find((r) => r.includes(`<span class="nw">${escapeHtml(l.path[l.path.length - 1])}</span>`))!;
      expect(row).toContain('<td class="num">0</td><td class="num">0</td>');
    }
    const d = sheetOf('bench-d-recombiner-closure');
    expect(d.lost).toBeGreaterThan(0);
    expect(sheetHtml(d)).toContain('Lost (apertures, slits): 0 of the oven flux.');
  });
  it('prints bench K\'s DA0 no finer than the run\'s stated error, and says which error', () => {
    const k = sheetOf('bench-k-field-twist-passage');
    expect(k.yieldError).toBeGreaterThan(1e-9);
    const html = sheetHtml(k);
    const da0 = k.detectors.find((d) => d.id === 'DA0')!;
    expect(da0.yield).toBeCloseTo(1.37193e-8, 12);
    expect(cellsOf(table(html, 'detectors'), '<th scope="row">DA0</th>')[0]).toBe('1.4e-8');
    expect(html).toContain(`no finer than the velocity average's estimated error (${sheetNumber(k.yieldError, 2)} on the yields)`);
  });
  it('prints equal values equally (bench A: S/B of D2 and D3, 9.375e6)', () => {
    const a = sheetOf('bench-a-spin32-rotator');
    const t = table(sheetHtml(a), 'detectors');
    expect(cellsOf(t, '<th scope="row">D2</th>')[6]).toBe('9.38e6');
    expect(cellsOf(t, '<th scope="row">D3</th>')[6]).toBe('9.38e6');
    expect(cellsOf(t, '<th scope="row">D1</th>')[6]).toBe(cellsOf(t, '<th scope="row">D4</th>')[6]);
  });
  it('writes each column in one notation', () => {
    const k = sheetOf('bench-k-field-twist-passage');
    const t = table(sheetHtml(k), 'detectors');
    const yields = k.detectors.map((d) => cellsOf(t, `<th scope="row">${d.id}</th>`)[0]).filter((c) => c !== '0');
    expect(yields.every((c) => c.includes('e'))).toBe(true);
  });
});
