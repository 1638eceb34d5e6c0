/**
 * The setup sheet as one self-contained HTML document for print (portrait; A4 or Letter as the printer
 * chooses): inline CSS only, no scripts, no external resources, black and grey ink only. Every printed
 * page carries the file name, a short hash of the file's text and "Page n of m" in CSS paged-media margin
 * boxes. A to-scale side view of the line (inline SVG, sub-beams told apart by line style and letter),
 * then the tables, with blank "measured / checked by / date" cells beside every set-point for the bench,
 * the cautions and sign-off lines. Every string that comes from the document or the run is escaped (in
 * CSS strings too).
 */
import type { SheetElement, SheetModel, SheetSetPoint } from './model.ts';
import { FIGURES, ROUND_OFF, formatColumn, formatCountsColumn, formatValue, isRoundOff } from '../beamline/numbers.ts';
import { branchLayout } from './layout-rule.ts';

/** Text safe inside HTML/SVG element content and double- or single-quoted attributes. */
export function escapeHtml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}
const e = escapeHtml;

/**
 * A CSS string literal (with its quotes) that reads back as `s`: everything but letters, digits, space and
 * a few plain marks is a hex escape, so no quote, backslash, newline or "</style>" can leave the string.
 */
export function cssString(s: string): string {
  let out = '';
  for (const ch of s) {
    out += /^[A-Za-z0-9 _.,:;()+=#@!?/-]$/.test(ch) ? ch : `\\${ch.codePointAt(0)!.toString(16)} `;
  }
  return `"${out}"`;
}

/** How many hex digits of the SHA-256 the sheet prints. */
export const SHORT_HASH = 12;

/** What the head of every page says about the document: "FILE · sha256 1a2b3c4d5e6f", or that it is unsaved. */
export function sourceLine(m: SheetModel): string {
  return m.source ? `${m.source.fileName} · sha256 ${m.source.sha256.slice(0, SHORT_HASH)}` : 'unsaved document (no file, no hash)';
}

/** A number by the one rule of src/beamline/numbers.ts (`sig` significant figures, exponent form outside [1e-4, 1e6)), with a typeset minus. */
export function sheetNumber(x: number | undefined, sig = 4): string {
  if (x === undefined || Number.isNaN(x)) return '–';
  return formatValue(x, sig, '−');
}

/** A column of the sheet's tables by the one rule: one notation, typeset minus, "–" for a blank cell. */
const column = (values: readonly (number | undefined)[], spec: Parameters<typeof formatColumn>[1]) => formatColumn(values, spec, { minus: '−', blank: '–' });


/**
 * A finite duration (s) in the unit a person reads it in (µs, ms, s, min, h, d), its number written by
 * `num` to 3 significant digits; shared by the sheet, the CLI and the app, each with its own numbers.
 */
export function durationIn(seconds: number, num: (x: number, sig: number) => string): string {
  if (seconds < 1e-3) return `${num(seconds * 1e6, 3)} µs`;
  if (seconds < 1) return `${num(seconds * 1e3, 3)} ms`;
  if (seconds < 120) return `${num(seconds, 3)} s`;
  if (seconds < 7200) return `${num(seconds / 60, 3)} min`;
  if (seconds < 172800) return `${num(seconds / 3600, 3)} h`;
  return `${num(seconds / 86400, 3)} d`;
}

function duration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds >= 1e300) return 'never';
  return durationIn(seconds, sheetNumber);
}

// ------------------------------------------------------------------ side view (SVG, mm units)
const SVG_W = 186;
const X0 = 18; // oven aperture (0 cm along the beam)
const X1 = 182;
const LANE_H = 17;
const CHAR_W = 1.45; // label width per character at font-size 2.6 (mm), a generous estimate

/** A round scale-bar length near a fifth of the line: 1, 2 or 5 × 10^k cm. */
function scaleBarCm(lineCm: number): number {
  const target = lineCm / 5;
  const p = 10 ** Math.floor(Math.log10(target));
  return [5, 2, 1].map((m) => m * p).find((v) => v <= target) ?? p;
}

/** Elements drawn as one mark: same row, kind, place and length (detectors side by side on one plane). */
interface Mark {
  kind: string;
  ids: string[];
  row: number;
  entranceCm: number;
  lengthCm: number;
}

/** A row of the drawing: one branch of the line, from where it leaves its parent row to its last exit (cm). */
interface Row {
  parent: number;
  fromCm: number;
  toCm: number;
  /** Where its beam comes from: the element and the port(s) routed to the row's first element; none for row 0. */
  origin?: { id: string; ports: string[]; first: string };
}

/**
 * Line styles of the sub-beams, in order: row 0 (the beam from the oven) solid, then dashed, dotted,
 * dash-dot, long dash, dash-dot-dot; with more rows they repeat, and the row letter tells them apart.
 */
export const BEAM_STYLES: readonly { name: string; dash: string }[] = [
  { name: 'solid', dash: '' },
  { name: 'dashed', dash: '2 1' },
  { name: 'dotted', dash: '0.35 0.75' },
  { name: 'dash-dot', dash: '2.4 0.8 0.35 0.8' },
  { name: 'long dash', dash: '4.5 1.2' },
  { name: 'dash-dot-dot', dash: '2.4 0.7 0.35 0.7 0.35 0.7' },
];

/** Where a row's beam comes from, in words: "port -1 of M1", "every other port of N1", "from S2". */
function originText(o: NonNullable<Row['origin']>): string {
  const named = o.ports.filter((p) => p !== '*');
  const rest = o.ports.includes('*');
  if (!named.length && !rest) return `from ${o.id}`;
  const list = named.length ? `port${named.length > 1 ? 's' : ''} ${named.join(', ')}${rest ? ' and every other port' : ''}` : 'every other port';
  return `${list} of ${o.id}`;
}

/** The letter of row i: A, B, …, Z, AA, AB, … */
export function rowLetter(i: number): string {
  return i < 26 ? String.fromCharCode(65 + i) : rowLetter(Math.floor(i / 26) - 1) + rowLetter(i % 26);
}

/**
 * Rows by routing and the marks in them, by the shared rule of layout-rule.ts (the app's schematic follows it too):
 * from the oven, each element's first target continues its row; a target at the same place as that first one
 * (sibling detectors on one plane) shares it; any other target opens a new row below, which starts at the element's
 * exit. Elements the oven does not reach get rows of their own.
 */
function layout(m: SheetModel): { marks: Mark[]; rows: Row[] } {
  const els = m.elements.map((el) => ({ id: el.id, kind: el.kind, entrance: el.entranceCm ?? 0, length: el.lengthCm ?? 0, routes: el.routes }));
  const { rows, marks } = branchLayout(els, m.oven.to, 1e-6);
  return {
    rows: rows.map((r) => ({ parent: r.parent, fromCm: r.from, toCm: r.to, ...(r.origin ? { origin: r.origin } : {}) })),
    marks: marks.map((mk) => ({ kind: mk.kind, ids: mk.ids, row: mk.row, entranceCm: mk.entrance, lengthCm: mk.length })),
  };
}

/** Where a mark's box and labels go (mm); labels near the page edge are anchored inward. */
function extent(mk: Mark, x: (cm: number) => number) {
  const start = x(mk.entranceCm);
  const w = Math.max(x(mk.entranceCm + mk.lengthCm) - start, 1);
  const cx = start + w / 2;
  const label = Math.max(mk.ids.join(', ').length, sheetNumber(mk.entranceCm, 3).length) * CHAR_W;
  if (cx + label / 2 > SVG_W - 1) {
    const tx = Math.max(start + w, X1);
    return { start, w, tx, anchor: 'end', left: tx - label, right: tx };
  }
  if (cx - label / 2 < 1) return { start, w, tx: start, anchor: 'start', left: start, right: start + label };
  return { start, w, tx: cx, anchor: 'middle', left: cx - label / 2, right: cx + label / 2 };
}

function shape(kind: string, x: number, w: number, axisY: number): string {
  const h = kind === 'magnet' ? 6 : kind === 'detector' ? 5 : kind === 'slit' ? 6 : 4;
  const y = axisY - h / 2;
  if (kind === 'slit') {
    const jw = Math.max(w, 0.8);
    return `<rect x="${x}" y="${y}" width="${jw}" height="${h / 2 - 0.6}" class="solid"/>`
      + `<rect x="${x}" y="${axisY + 0.6}" width="${jw}" height="${h / 2 - 0.6}" class="solid"/>`;
  }
  const cls = kind === 'magnet' ? 'magnet' : kind === 'detector' ? 'solid' : 'open';
  return `<rect x="${x}" y="${y}" width="${Math.max(w, kind === 'detector' ? 1 : 0.8)}" height="${h}" class="${cls}"/>`;
}

/**
 * The line seen from the side, to scale along the beam: oven, beam axis, each element as a box at its
 * entrance with its length. Elements of different paths that would overlap on paper go into rows below.
 */
export function sideViewSvg(m: SheetModel): string {
  const L = m.lineLengthCm;
  if (!(L > 0) || m.elements.every((el) => el.entranceCm === undefined)) {
    return '<p class="note">No gaps or lengths are written in this line: there is no geometry to draw to scale.</p>';
  }
  const s = (X1 - X0) / L;
  const x = (cm: number) => X0 + cm * s;
  const { marks, rows } = layout(m);
  const n = rows.length;
  const top = 8;
  const axisY = (r: number) => top + 3 + r * LANE_H;
  const legendH = n > 1 ? n * 3.4 + 1 : 0;
  const height = top + n * LANE_H + 6 + legendH;
  const parts: string[] = [];
  const style = (i: number) => BEAM_STYLES[i % BEAM_STYLES.length];
  const beam = (x1: number, y1: number, x2: number, y2: number, i: number) =>
    `<line x1="${x1}" y1="${y1}" x2="${x2}" y2="${y2}" class="axis beam-${rowLetter(i)}"${style(i).dash ? ` stroke-dasharray="${style(i).dash}"` : ''}/>`;
  rows.forEach((r, i) => {
    const end = i === 0 ? x(Math.max(r.toCm, L)) : x(r.toCm);
    if (i === 0) parts.push(beam(X0, axisY(0), end, axisY(0), 0));
    else {
      const from = x(r.fromCm);
      if (r.parent >= 0) parts.push(beam(from, axisY(r.parent), from, axisY(i), i));
      else parts.push(beam(from, axisY(i) - 1.5, from, axisY(i) + 1.5, i));
      parts.push(beam(from, axisY(i), end, axisY(i), i));
    }
    // the row's letter at its far end, so a sub-beam is named on the drawing and not by its line alone
    if (n > 1) parts.push(`<text x="${end + 1.2}" y="${axisY(i) + 0.9}" class="tag">${rowLetter(i)}</text>`);
  });
  parts.push(`<rect x="3" y="${axisY(0) - 4}" width="${X0 - 5}" height="8" class="open"/>`,
    `<text x="${(X0 - 2) / 2 + 1.5}" y="${axisY(0) + 1}" class="lbl" text-anchor="middle">oven</text>`,
    `<line x1="${X0}" y1="${axisY(0) - 4}" x2="${X0}" y2="${axisY(0) + 4}" class="tick"/>`);
  // Labels that would overlap in a row step out to a second (third, …) tier above and below the axis.
  const tierEnds = new Map<number, number[]>();
  const placed = [...marks].sort((a, b) => a.row - b.row || a.entranceCm - b.entranceCm);
  for (const mk of placed) {
    const { start, w, tx, anchor, left, right } = extent(mk, x);
    const ends = tierEnds.get(mk.row) ?? [];
    tierEnds.set(mk.row, ends);
    let tier = ends.findIndex((end) => end + 0.8 <= left);
    if (tier < 0) tier = ends.push(right) - 1;
    else ends[tier] = right;
    const ay = axisY(mk.row);
    parts.push(`<g>${shape(mk.kind, start, w, ay)}`
      + `<text x="${tx}" y="${ay - 4 - tier * 3.2}" class="lbl" text-anchor="${anchor}">${e(mk.ids.join(', '))}</text>`
      + `<text x="${tx}" y="${ay + 6.2 + tier * 2.8}" class="pos" text-anchor="${anchor}">${e(sheetNumber(mk.entranceCm, 3))}</text></g>`);
  }
  const bar = scaleBarCm(L);
  const by = height - 4 - legendH;
  parts.push(`<line x1="${X0}" y1="${by}" x2="${x(bar)}" y2="${by}" class="bar"/>`,
    `<line x1="${X0}" y1="${by - 1.2}" x2="${X0}" y2="${by + 1.2}" class="tick"/>`,
    `<line x1="${x(bar)}" y1="${by - 1.2}" x2="${x(bar)}" y2="${by + 1.2}" class="tick"/>`,
    `<text x="${x(bar) + 1.5}" y="${by + 0.9}" class="pos">${e(sheetNumber(bar))} cm</text>`,
    `<text x="${X1}" y="${by + 0.9}" class="pos" text-anchor="end">beam (+y) →   line length ${e(sheetNumber(L, 4))} cm from the oven aperture; figures under the elements: entrance in cm</text>`);
  if (n > 1) {
    rows.forEach((r, i) => {
      const ly = by + 4.6 + i * 3.4;
      const what = i === 0 ? 'the beam from the oven' : r.origin ? `${originText(r.origin)} → ${r.origin.first}` : 'not reached from the oven';
      parts.push(beam(X0, ly - 0.8, X0 + 10, ly - 0.8, i),
        `<text x="${X0 + 12}" y="${ly}" class="legend"><tspan class="tagi">${rowLetter(i)}</tspan> (${style(i).name}): ${e(what)}</text>`);
    });
  }
  return `<svg xmlns="http://www.w3.org/2000/svg" class="side" viewBox="0 0 ${SVG_W} ${height}" width="${SVG_W}mm" height="${height}mm" role="img" aria-label="Side view of the line to scale">`
    + `<style>.axis{stroke:#000;stroke-width:0.35;fill:none}.tick{stroke:#000;stroke-width:0.3}`
    + `.tag{font:700 2.6px sans-serif;fill:#000}.tagi{font-weight:700}.legend{font:2.3px sans-serif;fill:#000}`
    + `.bar{stroke:#000;stroke-width:0.7}.magnet{fill:#bbb;stroke:#000;stroke-width:0.3}.solid{fill:#000}`
    + `.open{fill:#fff;stroke:#000;stroke-width:0.3}.lbl{font:600 2.6px sans-serif;fill:#000}.pos{font:2.2px sans-serif;fill:#333}</style>`
    + `${parts.join('')}</svg>`;
}

// ------------------------------------------------------------------ tables
const blank = '<td class="blank"></td>';

/** A set-point's value as written, then the unit a plain number implies and whether the run used a default. */
function valueCell(p: SheetSetPoint): string {
  const notes = [...(p.implied ? [p.implied] : []), ...(p.default ? ['default; not written in the file'] : [])];
  return `<td class="val">${e(p.value)}${notes.length ? ` <span class="implied">(${e(notes.join('; '))})</span>` : ''}</td>`;
}

function elementRows(el: SheetElement): string {
  const sp = el.setPoints.length ? el.setPoints : [{ name: '', value: '' }];
  const routes = el.routes.length
    ? el.routes.map((r) => `<span class="nw">${r.port ? `${e(r.port)} → ` : '→ '}${e(r.target)}</span>`).join('<br>')
    : '<span class="dim">leaf</span>';
  const span = sp.length > 1 ? ` rowspan="${sp.length}"` : '';
  const rows = sp.map((p, i) => {
    const head = i === 0
      ? `<th scope="row"${span}>${e(el.id)}</th><td class="kind"${span}>${e(el.kind)}</td><td class="num"${span}>${e(sheetNumber(el.entranceCm, 4))}</td><td class="num"${span}>${e(sheetNumber(el.exitCm, 4))}</td>`
      : '';
    const tail = i === 0 ? `<td class="routes"${span}>${routes}</td>` : '';
    return `<tr>${head}<td class="sp">${e(p.name)}</td>${valueCell(p)}${blank}${blank}${blank}${tail}</tr>`;
  });
  return `<tbody>${rows.join('')}</tbody>`;
}

function elementsTable(m: SheetModel): string {
  return `<table class="elements"><colgroup>${[6, 10, 8, 7, 11, 17, 10, 9, 8, 14].map((w) => `<col style="width:${w}%">`).join('')}</colgroup>`
    + '<thead><tr><th rowspan="2">id</th><th rowspan="2">kind</th><th colspan="2" class="from">from the oven aperture (cm)</th><th rowspan="2">set-point</th>'
    + '<th rowspan="2">as written</th><th rowspan="2">measured</th><th rowspan="2">checked by</th><th rowspan="2">date</th><th rowspan="2">routes</th></tr>'
    + '<tr><th class="num">entrance</th><th class="num">exit</th></tr></thead>'
    + `${m.elements.map(elementRows).join('')}</table>`;
}

/** The stated absolute error of the yields, carried to a quantity proportional to a yield (a rate, counts). */
function carried(error: number | undefined, quantity: number, yieldValue: number): number | undefined {
  return error === undefined || !(error > 0) || !(yieldValue > 0) ? undefined : (error * quantity) / yieldValue;
}

function leavesTable(m: SheetModel): string {
  const geo = m.leaves.some((l) => l.displacementMm);
  const head = ['path', 'target', 'yield', 'rate (/s)', ...(geo ? ['x (mm)', 'z (mm)', 'rms x (mm)', 'rms z (mm)', 'captured'] : [])];
  const flux = m.oven.flux;
  const error = m.yieldError;
  const yields = column(m.leaves.map((l) => l.yield), { figures: FIGURES.yield, floor: ROUND_OFF, error });
  const rates = column(m.leaves.map((l) => l.rate), m.leaves.map((l) => ({ figures: FIGURES.rate, floor: ROUND_OFF * flux, error: carried(error, l.rate, l.yield) })));
  // millimetres on the detector plane: below 1e-9 mm (rounding noise of a centred beam) as 0
  const lengths = (f: (l: SheetModel['leaves'][number]) => number | undefined) =>
    column(m.leaves.map((l) => { const v = f(l); return v === undefined ? undefined : Math.abs(v) < 1e-9 ? 0 : v; }), { figures: FIGURES.length });
  const geoCols = geo
    ? [lengths((l) => l.displacementMm?.x), lengths((l) => l.displacementMm?.z), lengths((l) => l.spreadMm?.x), lengths((l) => l.spreadMm?.z),
        column(m.leaves.map((l) => l.captured), { figures: FIGURES.ratio })]
    : [];
  const rows = m.leaves.map((l, i) => {
    const path = l.path.length ? l.path.map((p) => `<span class="nw">${e(p)}</span>`).join(' ') : '<span class="dim">(no magnet on the way)</span>';
    const cells = [`<td class="path">${path}</td>`, `<td>${e(l.target)}</td>`,
      `<td class="num">${yields[i]}</td>`, `<td class="num">${rates[i]}</td>`, ...geoCols.map((c) => `<td class="num">${c[i]}</td>`)];
    return `<tr>${cells.join('')}</tr>`;
  });
  const cols = geo ? [27, 8, 11, 10, 9, 9, 8, 8, 10] : [46, 14, 20, 20];
  return `<table class="leaves"><colgroup>${cols.map((c) => `<col style="width:${c}%">`).join('')}</colgroup><thead><tr>${head.map((h, i) => `<th${i >= 2 ? ' class="num"' : ''}>${h}</th>`).join('')}</tr></thead>`
    + `<tbody>${rows.join('')}</tbody></table>`;
}

function detectorsTable(m: SheetModel): string {
  if (!m.detectors.length) return '<p class="note">This line has no detector.</p>';
  const eps = m.detectors[0].epsilon;
  const flux = m.oven.flux;
  const error = m.yieldError;
  const ds = m.detectors;
  // a signal of round-off (below 1e-12 of the oven flux) has S/B 0 and no time to precision
  const none = ds.map((d) => d.signal === 0 || isRoundOff(d.signal, flux));
  const yields = column(ds.map((d) => d.yield), { figures: FIGURES.yield, floor: ROUND_OFF, error });
  const rate = (f: (d: SheetModel['detectors'][number]) => number, err: boolean) =>
    column(ds.map(f), ds.map((d) => ({ figures: FIGURES.rate, floor: ROUND_OFF * flux, error: err ? carried(error, d.signal, d.yield) : undefined })));
  const signals = rate((d) => d.signal, true);
  const backgrounds = rate((d) => d.background, false);
  const totals = rate((d) => d.rate, true);
  const counts = formatCountsColumn(ds.map((d) => ({ counts: d.counts, sigma: d.sigma, floor: ROUND_OFF * flux * d.dwell, error: carried(error, d.signal * d.dwell, d.yield) })), { minus: '−' });
  const sbs = column(ds.map((d, i) => (d.signalToBackground === undefined ? undefined : none[i] ? 0 : d.signalToBackground)), { figures: FIGURES.ratio });
  const rows = ds.map((d, i) => {
    const sb = d.signalToBackground === undefined ? '∞ (no background)' : sbs[i];
    return `<tr><th scope="row">${e(d.id)}</th><td class="num">${yields[i]}</td>`
      + `<td class="num">${signals[i]}</td><td class="num">${backgrounds[i]}</td><td class="num">${totals[i]}</td>`
      + `<td class="num counts">${counts[i].split(' ± ').map((x) => `<span class="nw">${x}</span>`).join(' ± ')}</td><td class="num">${duration(d.dwell)}</td>`
      + `<td class="num">${sb}</td><td class="num">${none[i] || d.timeToPrecision === undefined ? 'no signal' : duration(d.timeToPrecision)}</td>${blank}</tr>`;
  });
  const pct = sheetNumber(eps * 100);
  return '<table class="detectors"><colgroup>'
    + [8, 10, 9, 11, 9, 18, 6, 7, 8, 14].map((w) => `<col style="width:${w}%">`).join('')
    + '</colgroup><thead><tr><th>detector</th><th class="num">yield</th><th class="num">signal<br>(counts/s)</th>'
    + '<th class="num">background<br>(counts/s)</th><th class="num">total<br>(counts/s)</th>'
    + `<th class="num">counts ± σ<br>in the dwell</th><th class="num">dwell</th><th class="num">S/B</th><th class="num">time to<br>${pct} %</th><th>measured counts</th></tr></thead>`
    + `<tbody>${rows.join('')}</tbody></table>`
    + `<p class="note">Signal: oven flux × yield × efficiency (× the fraction inside the window). S/B: signal over background. Time to ${pct} %: `
    + `the counting time for a ${pct} % relative uncertainty on the signal with the background known, t = (S + B)/(S² ε²). `
    + `Numbers: yields to 6 significant figures, rates to 4, counts to the place of σ (2 figures); below the engine's round-off (1e-12 of the oven flux) as 0`
    + `${error !== undefined && error > 0 ? `; no finer than the velocity average's estimated error (${sheetNumber(error, 2)} on the yields)` : ''}.</p>`;
}

function speciesBlock(m: SheetModel): string {
  const sp = m.species;
  const constRows = (cs: SheetModel['species']['constants']) =>
    cs.map((c) => `<tr><th scope="row">${e(c.name)}</th><td class="num">${e(c.value)}</td><td class="src">${e(c.source)}</td></tr>`).join('');
  const parts = sp.parts
    ? sp.parts.map((p) => `<tbody><tr><th colspan="3" class="sub">${e(p.name)}: I = ${e(p.I)}, J = ${e(p.J)}, fraction ${sheetNumber(p.fraction, 4)}</th></tr>${constRows(p.constants)}</tbody>`).join('')
    : `<tbody>${constRows(sp.constants)}</tbody>`;
  return `<p><b>${e(sp.name)}</b> — ${e(sp.label)}; I = ${e(sp.I)}, J = ${e(sp.J)}</p>`
    + `<table class="consts"><colgroup><col style="width:16%"><col style="width:20%"><col></colgroup>`
    + `<thead><tr><th>constant</th><th class="num">value</th><th>source</th></tr></thead>${parts}</table>`;
}

function ovenBlock(m: SheetModel): string {
  const o = m.oven;
  const rows: [string, string][] = [
    ['state', o.state],
    ['velocity', `${o.velocity.kind}${o.velocity.parameters.length ? `: ${o.velocity.parameters.map((p) => `${p.name} ${p.value}${p.implied ? ` (${p.implied})` : ''}`).join(', ')}` : ''}`],
    ['flux (as written)', o.fluxWritten],
    ['flux (used)', `${sheetNumber(o.flux)} atoms/s`],
  ];
  if (o.aperture) rows.push(['aperture', o.aperture]);
  return `<table class="oven"><colgroup><col style="width:16%"><col style="width:48%"><col style="width:18%"><col style="width:18%"></colgroup>`
    + '<thead><tr><th></th><th>as written</th><th>measured</th><th>checked by / date</th></tr></thead><tbody>'
    + rows.map(([k, v]) => `<tr><th scope="row">${e(k)}</th><td class="val">${e(v)}</td>${blank}${blank}</tr>`).join('')
    + '</tbody></table>';
}

/**
 * The page: portrait on the paper the printer or the PDF export chooses (A4 or Letter; no fixed size, so
 * a chosen format is kept), and the margin boxes that put the document's identity and the page count on
 * every printed page (CSS Paged Media Level 3, printed by Chromium from version 131).
 */
function pageCss(m: SheetModel): string {
  const box = 'font: 7pt "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: #000;';
  return `@page { size: portrait; margin: 14mm 12mm 14mm 12mm;
  @top-left { content: ${cssString(sourceLine(m))}; ${box} vertical-align: bottom; padding-bottom: 2mm; }
  @top-right { content: "Spinyard setup sheet"; ${box} vertical-align: bottom; padding-bottom: 2mm; }
  @bottom-left { content: ${cssString(m.generatedAt ? `generated ${m.generatedAt}` : '')}; ${box} vertical-align: top; padding-top: 2mm; }
  @bottom-right { content: "Page " counter(page) " of " counter(pages); ${box} vertical-align: top; padding-top: 2mm; }
}`;
}

const CSS = `
* { box-sizing: border-box; }
html { color: #000; background: #fff; }
body { margin: 0 auto; max-width: 186mm; font: 8.5pt/1.3 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
header { border-bottom: 1.2pt solid #000; padding-bottom: 2mm; margin-bottom: 3mm; }
.kicker { font-size: 7.5pt; letter-spacing: 0.08em; text-transform: uppercase; margin: 0; }
h1 { font-size: 12pt; line-height: 1.25; margin: 1mm 0; font-weight: 700; overflow-wrap: anywhere; }
.meta { margin: 0; font-size: 8pt; }
h2 { font-size: 9.5pt; margin: 4mm 0 1.5mm; padding-bottom: 0.5mm; border-bottom: 0.5pt solid #000; break-after: avoid; page-break-after: avoid; }
p { margin: 1mm 0; }
table { width: 100%; border-collapse: collapse; table-layout: fixed; page-break-inside: avoid; break-inside: avoid; margin: 1mm 0 2mm; }
table.elements, table.leaves, table.detectors { page-break-inside: auto; break-inside: auto; }
tr { page-break-inside: avoid; break-inside: avoid; }
table.elements tbody, table.consts tbody { page-break-inside: avoid; break-inside: avoid; }
thead { display: table-header-group; break-inside: avoid; }
h2 + table, h2 + p, h2 + svg { break-before: avoid; page-break-before: avoid; }
th, td { border: 0.5pt solid #000; padding: 0.6mm 1mm; text-align: left; vertical-align: top; overflow-wrap: break-word; }
.nw { white-space: nowrap; }
td.val { overflow-wrap: anywhere; }
thead th { font-weight: 700; font-size: 7.5pt; background: #e6e6e6; vertical-align: bottom; }
tbody th { font-weight: 700; }
.num { text-align: right; font-variant-numeric: tabular-nums; }
td.val { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.5pt; }
td.blank { height: 5.5mm; }
td.src { font-size: 6.8pt; color: #222; }
table.detectors td.num, table.leaves td.num { font-size: 7.5pt; white-space: nowrap; }
table.detectors td.counts { white-space: normal; }
td.path { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.5pt; }
td.routes { font-size: 7pt; }
td.sp, td.kind { font-size: 7.5pt; }
thead th { font-size: 7pt; }
th.from { text-align: center; font-weight: 400; font-style: italic; }
.implied { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; font-size: 6.5pt; color: #333; }
th.sub { background: #f2f2f2; font-weight: 700; }
.dim, .note { color: #444; }
.note { font-style: italic; }
svg.side { display: block; max-width: 100%; height: auto; margin: 1mm 0 2mm; page-break-inside: avoid; break-inside: avoid; }
ul { margin: 1mm 0; padding-left: 5mm; }
li { margin: 0.5mm 0; }
.cautions { border: 1pt solid #000; padding: 1.5mm 2.5mm; page-break-inside: avoid; break-inside: avoid; }
.cautions h2 { margin-top: 0; }
.defer { font-weight: 700; }
table.signoff td { height: 7mm; }
table.signoff th[scope="row"] { font-weight: 400; font-size: 7.5pt; }
section.signoff { break-inside: avoid; page-break-inside: avoid; }
.source { font-weight: 700; }
@media screen { body { padding: 10mm; } }
`;

/** Sign-off: who prepared and checked the sheet and aligned the line, then one line per caution area. */
function signOffTable(m: SheetModel): string {
  const lines = ['Sheet prepared by', 'Line aligned by', 'Sheet checked by', ...m.signOff];
  return '<table class="signoff"><colgroup><col style="width:46%"><col style="width:20%"><col style="width:20%"><col style="width:14%"></colgroup>'
    + '<thead><tr><th></th><th>name</th><th>signature</th><th>date</th></tr></thead><tbody>'
    + lines.map((l) => `<tr><th scope="row">${e(l)}</th>${blank}${blank}${blank}</tr>`).join('')
    + '</tbody></table>';
}

/** The first page's line about the file: which version of which file this sheet belongs to. */
function sourceMeta(m: SheetModel): string {
  if (!m.source) {
    return '<p class="meta source">Unsaved document: this sheet belongs to no file. Save the line and print the sheet again to tie it to the file.</p>';
  }
  return `<p class="meta">File <span class="source">${e(m.source.fileName)}</span> · sha256 <span class="source">${e(m.source.sha256.slice(0, SHORT_HASH))}</span>`
    + ' (the first digits of the SHA-256 of the file\'s text, on every page: this sheet belongs to this version of the file only)</p>';
}

/** The largest entries of the first-order tolerance budget, where the document keeps tolerances. */
function tolerancesBlock(m: SheetModel): string {
  if (!m.tolerances && !m.tolerancesNote) return '';
  const head = `<section><h2>Tolerances that move the signals most (first order)</h2>`;
  if (!m.tolerances) return `${head}<p>No budget: ${e(m.tolerancesNote ?? '')}</p></section>\n`;
  const pct = (x: number) => `${sheetNumber(x * 100)} %`;
  const rows = m.tolerances.map((t) => `<tr><td>${e(t.detector)}</td><td>${e(t.parameter)}</td><td>${e(t.tolerance)}</td><td class="num">${sheetNumber(t.effect)}</td><td class="num">${pct(t.relative)}</td><td class="num">${pct(t.share)}</td></tr>`).join('');
  // (room for a set-point name such as oven.velocity.temperature on one line)
  return `${head}<table class="tolerances"><colgroup>${[10, 28, 20, 16, 11, 15].map((w) => `<col style="width:${w}%">`).join('')}</colgroup><thead><tr><th>detector</th><th>set-point</th><th>tolerance</th><th class="num">σ of signal (counts/s)</th><th class="num">of signal</th><th class="num">share of its variance</th></tr></thead><tbody>${rows}</tbody></table>`
    + `<p class="meta">Each row: the spread of one detector's signal from one set-point's tolerance alone, largest relative first (the document's "tolerances"; central differences). <code>spinyard budget FILE</code> gives every entry, the combined spread and a Monte Carlo.</p></section>\n`;
}

/** The complete printable HTML document of the setup sheet. */
export function sheetHtml(m: SheetModel): string {
  const generated = m.generatedAt ? ` · generated ${e(m.generatedAt)}` : '';
  const notes = [
    `Lost (apertures, slits): ${formatValue(m.lost, { figures: FIGURES.yield, floor: ROUND_OFF, error: m.yieldError }, '−')} of the oven flux.`,
    ...(m.quadrature ? [`Velocity quadrature: ${e(m.quadrature)}.`] : []),
  ];
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Setup sheet: ${e(m.title)}</title>
<style>${pageCss(m)}${CSS}</style>
</head>
<body>
<header>
<p class="kicker">Spinyard setup sheet</p>
<h1>${e(m.title)}</h1>
${sourceMeta(m)}
<p class="meta">Species ${e(m.species.name)} · oven flux ${sheetNumber(m.oven.flux)} atoms/s · ${m.elements.length} elements, ${m.detectors.length} detectors${generated}</p>
<p class="meta"><b>Read the cautions at the end of this sheet before working on the line.</b></p>
</header>
<section><h2>Side view (to scale along the beam; positions in cm from the oven aperture)</h2>
${sideViewSvg(m)}</section>
<section><h2>Species</h2>
${speciesBlock(m)}</section>
<section><h2>Oven</h2>
${ovenBlock(m)}</section>
<section><h2>Elements in beam order (positions in cm measured from the oven aperture)</h2>
${elementsTable(m)}</section>
<section><h2>Leaves (expected)</h2>
${leavesTable(m)}</section>
<section><h2>Detectors (expected)</h2>
${detectorsTable(m)}</section>
${tolerancesBlock(m)}<section><h2>Run notes</h2>
<ul>${notes.map((n) => `<li>${n}</li>`).join('')}</ul>
${m.warnings.length ? `<p><b>Warnings</b></p><ul>${m.warnings.map((w) => `<li>${e(w)}</li>`).join('')}</ul>` : '<p>No warnings.</p>'}
</section>
<section class="cautions"><h2>Cautions</h2>
<ul>${m.cautions.map((c) => `<li>${e(c)}</li>`).join('')}</ul>
<p class="defer">${e(m.deference)}</p>
</section>
<section class="signoff"><h2>Sign-off</h2>
${signOffTable(m)}
</section>
</body>
</html>
`;
}
