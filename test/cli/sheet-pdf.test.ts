/**
 * The setup sheet as printed: every sample through `spinyard sheet FILE -o OUT.pdf` (the real command line and
 * the browser it finds), the PDF's text read back with pdf.js (npm, so the test needs no Debian package), and
 * a generated 40-element line for page breaks. Every page is also written as a PNG under
 * test-results/sheets/ for a person to look at.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runDocumentText } from '../../src/engine/index.ts';
import { sheetNumber } from '../../src/sheet/html.ts';
import { type Page, expectEveryPageMarked, readPdf, squash } from '../pdf-pages.ts';

const root = resolve(import.meta.dirname, '../..');
const samplesDir = join(root, 'samples');
const pngDir = join(root, 'test-results', 'sheets');
let dir: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-sheet-pdf-'));
  mkdirSync(pngDir, { recursive: true });
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Pdf {
  pages: string[];
}

/** The PDF's text page by page, each page's marks checked, and each page as a PNG in test-results/sheets/. */
async function readSheet(path: string, pngName: string, fileName: string, text: string): Promise<Pdf> {
  const pages: Page[] = await readPdf(new Uint8Array(readFileSync(path)), (i, png) => writeFileSync(join(pngDir, `${pngName}-${i}.png`), png));
  expectEveryPageMarked(pages, fileName, text);
  return { pages: pages.map((p) => p.text) };
}

const has = (hay: string, needle: string) => squash(hay).includes(squash(needle));

function printSheet(input: string, out: string, extra: string[] = []) {
  const r = spawnSync(process.execPath, [join(root, 'bin', 'spinyard.js'), 'sheet', input, '-o', out, ...extra], { encoding: 'utf8', timeout: 120_000 });
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  expect(r.stdout.startsWith(`${out}: setup sheet of ${input} (PDF, printed by the `)).toBe(true);
  expect(r.stdout.endsWith(')\n')).toBe(true);
}

/** The set-point values of an element as the document writes them: its strings and numbers, routing aside. */
function setPointValues(e: Record<string, unknown>): string[] {
  const out: string[] = [];
  const walk = (v: unknown) => {
    if (typeof v === 'string') out.push(v);
    else if (typeof v === 'number') out.push(String(v));
    else if (Array.isArray(v)) v.forEach(walk);
    else if (v && typeof v === 'object') Object.values(v).forEach(walk);
  };
  for (const [k, v] of Object.entries(e)) if (!['id', 'kind', 'to', 'ports', 'note', 'label'].includes(k)) walk(v);
  return out;
}

const samples = readdirSync(samplesDir).filter((n) => n.endsWith('.spinyard')).sort();

describe('spinyard sheet -o OUT.pdf, every sample', () => {
  it.each(samples)('%s: ids, set-points, expected detector rates, cautions and sign-off on the printed pages', async (name) => {
    const input = join(samplesDir, name);
    const text = readFileSync(input, 'utf8');
    const out = join(dir, name.replace(/\.spinyard$/, '.pdf'));
    printSheet(input, out);
    const pdf = await readSheet(out, name.replace(/\.spinyard$/, ''), name, text);
    const all = pdf.pages.join('\n');
    const doc = JSON.parse(text) as { elements: Record<string, unknown>[] };
    for (const e of doc.elements) {
      expect(has(all, String(e.id)), `element ${String(e.id)}`).toBe(true);
      for (const v of setPointValues(e)) expect(has(all, v), `${String(e.id)}: set-point "${v}"`).toBe(true);
    }
    const run = runDocumentText(text);
    if (!run.ok) throw new Error(run.problems.join('\n'));
    for (const d of run.result.detectors) expect(has(all, sheetNumber(d.rate)), `${d.id}: rate ${sheetNumber(d.rate)}`).toBe(true);
    expect(all).toMatch(/local rules and licensed practice/);
    expect(all).toMatch(/Checked by/i);
  });
});

describe('a long line', () => {
  /** A 40-element bare-spin line: oven, slit, then 19 magnets each sending +1/2 on and −1/2 to a detector of its own. */
  function longLine(): string {
    const elements: Record<string, unknown>[] = [{ id: 'S1', kind: 'slit', gap: '10 cm', width: '0.1 mm', height: '2 mm', to: 'M1' }];
    for (let i = 1; i <= 19; i++) {
      elements.push({
        id: `M${i}`, kind: 'magnet', gap: '4 cm', axis: { roll: `${(i * 7) % 90} deg` }, gradient: '200 T/m', length: '3 cm',
        ports: { '+1/2': i < 19 ? `M${i + 1}` : 'DE', '-1/2': `D${i}` },
      });
      elements.push({ id: `D${i}`, kind: 'detector', gap: '6 cm', efficiency: 0.8, background: `${i} /s`, dwell: '5 s' });
    }
    elements.push({ id: 'DE', kind: 'detector', gap: '6 cm', efficiency: 0.8, background: '2 /s', dwell: '5 s' });
    return JSON.stringify({
      format: 'spinyard.beamline', version: 1, title: 'Bench L, nineteen-stage analyser chain for a polariser survey',
      species: { spin: '1/2', g: 2.00231930436, mass: '106.905 u' },
      oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '550 m/s' }, aperture: { width: '0.1 mm', height: '2 mm' }, to: 'S1' },
      elements,
    }, null, 2);
  }

  it('runs to several pages, each with its marks, the table header repeated and no element row split', async () => {
    const text = longLine();
    const input = join(dir, 'bench-l-long-chain.spinyard');
    writeFileSync(input, text);
    expect(JSON.parse(text).elements).toHaveLength(40);
    for (const paper of ['a4', 'letter']) {
      const out = join(dir, `long-${paper}.pdf`);
      printSheet(input, out, ['--paper', paper]);
      const pdf = await readSheet(out, `long-line-${paper}`, basename(input), text);
      expect(pdf.pages.length, paper).toBeGreaterThanOrEqual(3);
      const doc = JSON.parse(text) as { elements: Record<string, unknown>[] };
      // the page of each element's id holds all of its set-points: its row was not split
      const pagesWithRows = new Set<number>();
      for (const e of doc.elements) {
        const idRe = new RegExp(`(^|\\s)${String(e.id)}\\s+(magnet|detector|slit)`);
        const p = pdf.pages.findIndex((t) => idRe.test(t));
        expect(p, `${paper}: row of ${String(e.id)}`).toBeGreaterThanOrEqual(0);
        pagesWithRows.add(p);
        for (const v of setPointValues(e)) expect(has(pdf.pages[p], v), `${paper}: ${String(e.id)} "${v}" on page ${p + 1}`).toBe(true);
      }
      // the elements table continues over pages, and each of them repeats its header
      expect(pagesWithRows.size, paper).toBeGreaterThanOrEqual(2);
      for (const p of pagesWithRows) expect(has(pdf.pages[p], 'set-point'), `${paper}: header on page ${p + 1}`).toBe(true);
    }
  });
});
