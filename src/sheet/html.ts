/**
 * The setup sheet as one self-contained HTML document for print (A4 portrait): inline CSS only, no
 * scripts, no external resources, monochrome. A to-scale side view of the line (inline SVG), then the
 * tables, with blank "measured / checked by / date" cells beside every set-point for the bench.
 * Every string that comes from the document or the run is escaped.
 */
import type { SheetElement, SheetModel } from './model.ts';

/** Text safe inside HTML/SVG element content and double- or single-quoted attributes. */
export function escapeHtml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}
const e = escapeHtml;

/** A number to `sig` significant digits, exponent form outside [1e-4, 1e6); −0 and sub-pm noise as 0 where asked. */
export function sheetNumber(x: number | undefined, sig = 4): string {
  if (x === undefined) return '–';
  if (x === 0) return '0';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : x < 0 ? '−∞' : '–';
  const a = Math.abs(x);
  const s = a >= 1e-4 && a < 1e6 ? String(Number(x.toPrecision(sig))) : (() => {
    const [m, ex] = x.toExponential(sig - 1).split('e');
    return `${m.includes('.') ? m.replace(/\.?0+$/, '') : m}e${Number(ex)}`;
  })();
  return s.replace(/^-/, '−');
}

/** Millimetres on the detector plane; below 1e-9 mm (rounding noise of a centred beam) as 0. */
const mm = (v: number | undefined) => (v === undefined ? '–' : sheetNumber(Math.abs(v) < 1e-9 ? 0 : v, 3));

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
}

const near = (a: number, b: number) => Math.abs(a - b) < 1e-6;

/**
 * Rows by routing: from the oven, each element's first target continues its row; a target at the same
 * place as that first one (sibling detectors on one plane) shares it; any other target opens a new row
 * below, which starts at the element's exit. Elements the oven does not reach get rows of their own.
 */
function layout(m: SheetModel): { marks: Mark[]; rows: Row[] } {
  const byId = new Map(m.elements.map((el) => [el.id, el]));
  const rowOf = new Map<string, number>();
  const rows: Row[] = [{ parent: -1, fromCm: 0, toCm: 0 }];
  const at = (el: SheetElement) => el.entranceCm ?? 0;
  const len = (el: SheetElement) => el.lengthCm ?? 0;
  const place = (id: string, row: number) => {
    const el = byId.get(id);
    if (!el || rowOf.has(id)) return;
    rowOf.set(id, row);
    rows[row].toCm = Math.max(rows[row].toCm, at(el) + len(el));
    const targets = [...new Set(el.routes.map((r) => r.target))].filter((t) => byId.has(t) && !rowOf.has(t));
    const first = targets.length ? byId.get(targets[0]) : undefined;
    for (const t of targets) {
      const child = byId.get(t);
      if (!child || rowOf.has(t)) continue;
      const same = first && (t === first.id || (child.kind === first.kind && near(at(child), at(first)) && near(len(child), len(first))));
      if (same) place(t, row);
      else place(t, rows.push({ parent: row, fromCm: at(el) + len(el), toCm: at(el) + len(el) }) - 1);
    }
  };
  place(m.oven.to, 0);
  for (const el of m.elements) if (!rowOf.has(el.id)) place(el.id, rows.push({ parent: -1, fromCm: at(el), toCm: at(el) }) - 1);
  const marks: Mark[] = [];
  for (const el of m.elements) {
    const row = rowOf.get(el.id) ?? 0;
    const same = marks.find((mk) => mk.row === row && mk.kind === el.kind && near(mk.entranceCm, at(el)) && near(mk.lengthCm, len(el)));
    if (same) same.ids.push(el.id);
    else marks.push({ kind: el.kind, ids: [el.id], row, entranceCm: at(el), lengthCm: len(el) });
  }
  return { marks, rows };
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
  const height = top + n * LANE_H + 6;
  const parts: string[] = [];
  rows.forEach((r, i) => {
    if (i === 0) {
      parts.push(`<line x1="${X0}" y1="${axisY(0)}" x2="${x(Math.max(r.toCm, L))}" y2="${axisY(0)}" class="axis"/>`);
      return;
    }
    const from = x(r.fromCm);
    if (r.parent >= 0) parts.push(`<line x1="${from}" y1="${axisY(r.parent)}" x2="${from}" y2="${axisY(i)}" class="axis branch"/>`);
    parts.push(`<line x1="${from}" y1="${axisY(i)}" x2="${x(r.toCm)}" y2="${axisY(i)}" class="axis branch"/>`);
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
  const by = height - 4;
  parts.push(`<line x1="${X0}" y1="${by}" x2="${x(bar)}" y2="${by}" class="bar"/>`,
    `<line x1="${X0}" y1="${by - 1.2}" x2="${X0}" y2="${by + 1.2}" class="tick"/>`,
    `<line x1="${x(bar)}" y1="${by - 1.2}" x2="${x(bar)}" y2="${by + 1.2}" class="tick"/>`,
    `<text x="${x(bar) + 1.5}" y="${by + 0.9}" class="pos">${e(sheetNumber(bar))} cm</text>`,
    `<text x="${X1}" y="${by + 0.9}" class="pos" text-anchor="end">beam (+y) →   line length ${e(sheetNumber(L, 4))} cm from the oven aperture${n > 1 ? '; dashed: a branch (the path of another port), drawn below from where it leaves' : ''}</text>`);
  return `<svg xmlns="http://www.w3.org/2000/svg" class="side" viewBox="0 0 ${SVG_W} ${height}" width="${SVG_W}mm" height="${height}mm" role="img" aria-label="Side view of the line to scale">`
    + `<style>.axis{stroke:#000;stroke-width:0.25}.branch{stroke-dasharray:1 0.8;stroke:#555}.tick{stroke:#000;stroke-width:0.3}`
    + `.bar{stroke:#000;stroke-width:0.7}.magnet{fill:#bbb;stroke:#000;stroke-width:0.3}.solid{fill:#000}`
    + `.open{fill:#fff;stroke:#000;stroke-width:0.3}.lbl{font:600 2.6px sans-serif;fill:#000}.pos{font:2.2px sans-serif;fill:#333}</style>`
    + `${parts.join('')}</svg>`;
}

// ------------------------------------------------------------------ tables
const blank = '<td class="blank"></td>';

function elementRows(el: SheetElement): string {
  const sp = el.setPoints.length ? el.setPoints : [{ name: '', value: '' }];
  const routes = el.routes.length
    ? el.routes.map((r) => `<span class="nw">${r.port ? `${e(r.port)} → ` : '→ '}${e(r.target)}</span>`).join('<br>')
    : '<span class="dim">leaf</span>';
  const span = sp.length > 1 ? ` rowspan="${sp.length}"` : '';
  const rows = sp.map((p, i) => {
    const head = i === 0
      ? `<th scope="row"${span}>${e(el.id)}</th><td${span}>${e(el.kind)}</td><td class="num"${span}>${e(sheetNumber(el.entranceCm, 4))}</td><td class="num"${span}>${e(sheetNumber(el.lengthCm, 4))}</td>`
      : '';
    const tail = i === 0 ? `<td class="routes"${span}>${routes}</td>` : '';
    return `<tr>${head}<td class="sp">${e(p.name)}</td><td class="val">${e(p.value)}</td>${blank}${blank}${blank}${tail}</tr>`;
  });
  return `<tbody>${rows.join('')}</tbody>`;
}

function elementsTable(m: SheetModel): string {
  return `<table class="elements"><colgroup><col style="width:6%"><col style="width:9%"><col style="width:9%"><col style="width:7%">`
    + `<col style="width:11%"><col style="width:15%"><col style="width:11%"><col style="width:9%"><col style="width:8%"><col style="width:15%"></colgroup>`
    + '<thead><tr><th>id</th><th>kind</th><th class="num">entrance<br>(cm)</th><th class="num">length<br>(cm)</th><th>set-point</th>'
    + '<th>as written</th><th>measured</th><th>checked by</th><th>date</th><th>routes</th></tr></thead>'
    + `${m.elements.map(elementRows).join('')}</table>`;
}

/** Yields below this are rounding noise of the sums (the engine balances yields to 1e-12) and print as "≈ 0". */
const NOISE = 1e-15;
const isNoise = (x: number) => x !== 0 && Math.abs(x) < NOISE;

function leavesTable(m: SheetModel): string {
  const geo = m.leaves.some((l) => l.displacementMm);
  const head = ['path', 'target', 'yield', 'rate (/s)', ...(geo ? ['x (mm)', 'z (mm)', 'rms x (mm)', 'rms z (mm)', 'captured'] : [])];
  const rows = m.leaves.map((l) => {
    const noise = isNoise(l.yield);
    const cells = [`<td class="path">${l.path.map((p) => `<span class="nw">${e(p)}</span>`).join(' ')}</td>`, `<td>${e(l.target)}</td>`,
      `<td class="num">${noise ? '≈ 0' : sheetNumber(l.yield)}</td>`, `<td class="num">${noise ? '≈ 0' : sheetNumber(l.rate)}</td>`];
    if (geo) {
      cells.push(...[l.displacementMm?.x, l.displacementMm?.z, l.spreadMm?.x, l.spreadMm?.z].map((v) => `<td class="num">${mm(v)}</td>`),
        `<td class="num">${sheetNumber(l.captured, 3)}</td>`);
    }
    return `<tr>${cells.join('')}</tr>`;
  });
  const cols = geo ? [27, 8, 9, 9, 8, 8, 8, 8, 15] : [46, 14, 20, 20];
  return `<table class="leaves"><colgroup>${cols.map((c) => `<col style="width:${c}%">`).join('')}</colgroup><thead><tr>${head.map((h, i) => `<th${i >= 2 ? ' class="num"' : ''}>${h}</th>`).join('')}</tr></thead>`
    + `<tbody>${rows.join('')}</tbody></table>`;
}

function detectorsTable(m: SheetModel): string {
  if (!m.detectors.length) return '<p class="note">This line has no detector.</p>';
  const eps = m.detectors[0].epsilon;
  const rows = m.detectors.map((d) => `<tr><th scope="row">${e(d.id)}</th><td class="num">${sheetNumber(d.yield)}</td><td class="num">${sheetNumber(d.rate)}</td>`
    + `<td class="num">${sheetNumber(d.counts)} ± ${sheetNumber(d.sigma, 3)}</td><td class="num">${duration(d.dwell)}</td>`
    + `<td class="num">${d.signalToBackground === Number.MAX_VALUE ? '∞ (no background)' : sheetNumber(d.signalToBackground, 3)}</td><td class="num">${duration(d.timeToPrecision)}</td>${blank}</tr>`);
  return '<table class="detectors"><colgroup><col style="width:10%"><col style="width:10%"><col style="width:11%"><col style="width:19%">'
    + '<col style="width:8%"><col style="width:10%"><col style="width:11%"><col style="width:21%"></colgroup><thead><tr><th>detector</th><th class="num">yield</th><th class="num">rate (/s)</th>'
    + `<th class="num">counts ± σ</th><th class="num">dwell</th><th class="num">S/B</th><th class="num">time to ${sheetNumber(eps * 100)} %</th><th>measured counts</th></tr></thead>`
    + `<tbody>${rows.join('')}</tbody></table>`;
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
    ['velocity', `${o.velocity.kind}${o.velocity.parameters.length ? `: ${o.velocity.parameters.map((p) => `${p.name} ${p.value}`).join(', ')}` : ''}`],
    ['flux (as written)', o.fluxWritten],
    ['flux (used)', `${sheetNumber(o.flux)} atoms/s`],
  ];
  if (o.aperture) rows.push(['aperture', o.aperture]);
  return `<table class="oven"><colgroup><col style="width:16%"><col style="width:48%"><col style="width:18%"><col style="width:18%"></colgroup>`
    + '<thead><tr><th></th><th>as written</th><th>measured</th><th>checked by / date</th></tr></thead><tbody>'
    + rows.map(([k, v]) => `<tr><th scope="row">${e(k)}</th><td class="val">${e(v)}</td>${blank}${blank}</tr>`).join('')
    + '</tbody></table>';
}

const CSS = `
@page { size: A4 portrait; margin: 12mm 12mm 14mm 12mm; }
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
table.elements { page-break-inside: auto; break-inside: auto; }
tbody, tr { page-break-inside: avoid; break-inside: avoid; }
thead { display: table-header-group; }
th, td { border: 0.5pt solid #000; padding: 0.6mm 1mm; text-align: left; vertical-align: top; overflow-wrap: break-word; }
.nw { white-space: nowrap; }
td.val { overflow-wrap: anywhere; }
thead th { font-weight: 700; font-size: 7.5pt; background: #e6e6e6; vertical-align: bottom; }
tbody th { font-weight: 700; }
.num { text-align: right; font-variant-numeric: tabular-nums; }
td.val { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.5pt; }
td.blank { height: 5.5mm; }
td.src { font-size: 6.8pt; color: #222; }
td.path { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.5pt; }
td.routes { font-size: 7pt; }
td.sp { font-size: 7.5pt; }
thead th { font-size: 7pt; }
th.sub { background: #f2f2f2; font-weight: 700; }
.dim, .note { color: #444; }
.note { font-style: italic; }
svg.side { display: block; max-width: 100%; height: auto; margin: 1mm 0 2mm; page-break-inside: avoid; break-inside: avoid; }
ul { margin: 1mm 0; padding-left: 5mm; }
li { margin: 0.5mm 0; }
.cautions { border: 1pt solid #000; padding: 1.5mm 2.5mm; page-break-inside: avoid; break-inside: avoid; }
.cautions h2 { margin-top: 0; }
.defer { font-weight: 700; }
table.signoff td { height: 8mm; }
@media screen { body { padding: 10mm; } }
`;

/** The complete printable HTML document of the setup sheet. */
export function sheetHtml(m: SheetModel): string {
  const generated = m.generatedAt ? ` · generated ${e(m.generatedAt)}` : '';
  const notes = [
    `Lost (apertures, slits): ${isNoise(m.lost) ? '≈ 0' : sheetNumber(m.lost)} of the oven flux.`,
    ...(m.quadrature ? [`Velocity quadrature: ${e(m.quadrature)}.`] : []),
  ];
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Setup sheet: ${e(m.title)}</title>
<style>${CSS}</style>
</head>
<body>
<header>
<p class="kicker">Spinyard setup sheet</p>
<h1>${e(m.title)}</h1>
<p class="meta">Species ${e(m.species.name)} · oven flux ${sheetNumber(m.oven.flux)} atoms/s · ${m.elements.length} elements, ${m.detectors.length} detectors${generated}</p>
<p class="meta"><b>Read the cautions at the end of this sheet before working on the line.</b></p>
</header>
<section><h2>Side view (to scale along the beam; positions in cm from the oven aperture)</h2>
${sideViewSvg(m)}</section>
<section><h2>Species</h2>
${speciesBlock(m)}</section>
<section><h2>Oven</h2>
${ovenBlock(m)}</section>
<section><h2>Elements in beam order</h2>
${elementsTable(m)}</section>
<section><h2>Leaves (expected)</h2>
${leavesTable(m)}</section>
<section><h2>Detectors (expected)</h2>
${detectorsTable(m)}</section>
<section><h2>Run notes</h2>
<ul>${notes.map((n) => `<li>${n}</li>`).join('')}</ul>
${m.warnings.length ? `<p><b>Warnings</b></p><ul>${m.warnings.map((w) => `<li>${e(w)}</li>`).join('')}</ul>` : '<p>No warnings.</p>'}
</section>
<section class="cautions"><h2>Cautions</h2>
<ul>${m.cautions.map((c) => `<li>${e(c)}</li>`).join('')}</ul>
<p class="defer">${e(m.deference)}</p>
</section>
<section><h2>Sign-off</h2>
<table class="signoff"><thead><tr><th>line aligned by</th><th>date</th><th>sheet checked by</th><th>date</th></tr></thead>
<tbody><tr>${blank}${blank}${blank}${blank}</tr></tbody></table>
</section>
</body>
</html>
`;
}
