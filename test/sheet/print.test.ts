/**
 * The setup sheet on real printed pages: sheetHtml printed to PDF by headless Chromium (the browser the
 * tests find, Playwright's page.pdf with the CSS page size preferred, on A4 and Letter), the text read back
 * with pdf.js with its place on the page. Checks what only a printed page shows: the file name, the short
 * hash and "Page n of m" in the margins of every page, the paper the printer asked for, and that no page
 * ends on a section heading.
 */
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BROWSER_ARGS, findBrowser } from '../../src/cli/find-browser.ts';
import { sheetHtml } from '../../src/sheet/html.ts';
import { buildSheet } from '../../src/sheet/model.ts';
import { type Page, expectEveryPageMarked, inBottomMargin, inTopMargin, MM, readPdf, squash } from '../pdf-pages.ts';
import { runSample, runText } from './helpers.ts';

let browser: Browser;
beforeAll(async () => {
  browser = await chromium.launch({ executablePath: (await findBrowser()).executablePath, args: [...BROWSER_ARGS] });
});
afterAll(async () => {
  await browser?.close();
});

async function print(html: string, format: 'A4' | 'Letter'): Promise<Page[]> {
  const page = await browser.newPage();
  try {
    await page.setContent(html, { waitUntil: 'load' });
    return await readPdf(new Uint8Array(await page.pdf({ format, preferCSSPageSize: true, printBackground: true })));
  } finally {
    await page.close();
  }
}

const HEADINGS = ['Species', 'Oven', 'Elements in beam order', 'Leaves (expected)', 'Detectors (expected)', 'Run notes', 'Cautions', 'Sign-off'];

/** A line of 40 elements: a slit, then rotators, field regions and slits in turn, then a detector. */
function longLine(): string {
  const elements: Record<string, unknown>[] = [];
  for (let i = 1; i < 40; i++) {
    const to = i < 39 ? `E${i + 1}` : 'D1';
    const k = i % 3;
    if (k === 1) elements.push({ id: `E${i}`, kind: 'slit', gap: '2 cm', width: '1 mm', height: '3 mm', to });
    else if (k === 2) elements.push({ id: `E${i}`, kind: 'rotator', gap: '1 cm', axis: { roll: '30 deg' }, angle: '10 deg', to });
    else elements.push({ id: `E${i}`, kind: 'field', gap: '1 cm', field: { x: '5 uT', y: '0 T', z: '20 uT' }, length: '3 cm', to });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '5 cm', efficiency: 0.8, background: '10 /s', dwell: '10 s' });
  return `${JSON.stringify({
    format: 'spinyard.beamline', version: 1, title: 'Bench M, forty-element coil and slit ladder',
    species: { spin: '1/2', g: 2.0023, mass: '106.905 u' },
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'fixed', speed: '600 m/s' }, to: 'E1' },
    elements,
  }, null, 2)}\n`;
}

/** No page's last line of body text is a section heading. */
function expectNoHeadingLast(pages: Page[]) {
  pages.forEach((p, i) => {
    const body = p.items.filter((it) => !inTopMargin(p, it) && !inBottomMargin(it));
    const lowest = Math.min(...body.map((it) => it.y));
    const last = body.filter((it) => Math.abs(it.y - lowest) < 1).sort((a, b) => a.x - b.x).map((it) => it.str).join(' ').trim();
    expect(HEADINGS, `page ${i + 1} ends with "${last}"`).not.toContain(last);
  });
}

describe('the printed setup sheet', () => {
  it('a long line: file, hash and "Page n of m" on every page, a heading never last, on A4 and Letter', async () => {
    const text = longLine();
    const r = runText(text);
    const html = sheetHtml(buildSheet(r.doc, r.line, r.result, { generatedAt: '2026-12-01 09:00 UTC', source: { fileName: 'bench-m-ladder.spinyard', text } }));
    const a4 = await print(html, 'A4');
    const letter = await print(html, 'Letter');
    // the paper is the one asked for: the sheet fixes no page size (A4 210 × 297 mm, Letter 8.5 × 11 in)
    expect(a4[0].width / MM).toBeCloseTo(210, 0);
    expect(a4[0].height / MM).toBeCloseTo(297, 0);
    expect(letter[0].width).toBeCloseTo(612, 0);
    expect(letter[0].height).toBeCloseTo(792, 0);
    for (const pages of [a4, letter]) {
      expect(pages.length).toBeGreaterThanOrEqual(3);
      expectEveryPageMarked(pages, 'bench-m-ladder.spinyard', text);
      expectNoHeadingLast(pages);
      // the elements table runs over pages, and repeats its header (with the oven-aperture note) on each
      const withRows = pages.filter((p) => /\bE\d+ (slit|rotator|field)\b/.test(p.text));
      expect(withRows.length).toBeGreaterThanOrEqual(2);
      for (const p of withRows) expect(squash(p.text)).toContain(squash('from the oven aperture (cm)'));
    }
  });

  it('every sample prints with its marks on every page and no heading left at the foot of a page', async () => {
    for (const name of ['bench-h-rb87-mj-then-eigenstate', 'bench-k-field-twist-passage', 'bench-g-silver-split']) {
      const r = runSample(name);
      const html = sheetHtml(buildSheet(r.doc, r.line, r.result, { source: { fileName: `${name}.spinyard`, text: r.text } }));
      const pages = await print(html, 'A4');
      expectEveryPageMarked(pages, `${name}.spinyard`, r.text);
      expectNoHeadingLast(pages);
    }
  });

  it('an unsaved document says so at the head of every page', async () => {
    const r = runSample('bench-c-roll-calibration');
    const pages = await print(sheetHtml(buildSheet(r.doc, r.line, r.result)), 'A4');
    pages.forEach((p, i) => {
      expect(squash(p.items.filter((it) => inTopMargin(p, it)).map((it) => it.str).join(' ')), `page ${i + 1}`).toContain(squash('unsaved document'));
    });
    expect(pages.map((p) => p.text).join(' ')).not.toMatch(/sha256 [0-9a-f]{12}/);
  });
});
