// Exports (issue 14 item 7) in the browser: the ports CSV with displacement, spread and captured fraction, units
// in its header, the document's name and hash; a chart exported at the chosen size on a light background while
// the app shows its dark theme.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { loadImage, createCanvas } from '@napi-rs/canvas';
import { openApp, screenshotPath, waitForFreshResults, RESULTS_DIR, SAMPLES_DIR, type App, runMenu as menuCommand } from './harness.ts';
import { documentText, readDocument, runEngine } from '../../src/app/core-adapter.ts';

let app: App;
const SAMPLE = 'bench-g-silver-split.spinyard';
const OUT = join(RESULTS_DIR, 'editor');

beforeAll(async () => {
  mkdirSync(OUT, { recursive: true });
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

const runMenu = (menu: string, command: string) => menuCommand(app.page, menu, command);

/** A CSV line split into fields (RFC 4180 quotes). */
function fields(line: string): string[] {
  const out: string[] = [];
  let cur = '', q = false;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (q) {
      if (c === '"' && line[i + 1] === '"') {
        cur += '"';
        i++;
      } else if (c === '"') q = false;
      else cur += c;
    } else if (c === '"') q = true;
    else if (c === ',') {
      out.push(cur);
      cur = '';
    }
    else cur += c;
  }
  out.push(cur);
  return out;
}

describe('exports', () => {
  it('writes the ports CSV with displacement, spread, captured fraction, units and the document\'s name and hash', async () => {
    const { page } = app;
    const seq = await waitForFreshResults(page);
    await runMenu('Samples', `samples.open.${SAMPLE}`);
    await waitForFreshResults(page, seq);
    const [download] = await Promise.all([page.waitForEvent('download'), page.locator('button:text-is("Export table as CSV")').click()]);
    const path = join(OUT, download.suggestedFilename());
    await download.saveAs(path);
    const lines = readFileSync(path, 'utf8').trim().split('\r\n');
    const head = fields(lines[0]);
    expect(head).toContain('displacement z (mm)');
    expect(head).toContain('spread z (mm)');
    expect(head).toContain('captured (fraction of the sub-beam in the window)');
    expect(head.slice(-2)).toEqual(['document', 'document sha256']);
    // the engine's numbers for the sample, at 12 figures: the CSV's rows
    const r = readDocument(readFileSync(join(SAMPLES_DIR, SAMPLE), 'utf8'));
    if (!r.ok) throw new Error('bench G does not read');
    const sha = createHash('sha256').update(documentText(r.doc), 'utf8').digest('hex');
    const res = runEngine(r.line);
    const rows = lines.slice(1).map(fields);
    expect(rows).toHaveLength(res.leaves.length);
    const col = (n: string) => head.indexOf(n);
    res.leaves.forEach((l, i) => {
      const row = rows[i];
      expect(row[col('target')]).toBe(l.target);
      expect(row[col('document')]).toBe(SAMPLE);
      expect(row[col('document sha256')]).toBe(sha);
      if (l.displacement) {
        expect(Number(row[col('displacement z (mm)')])).toBeCloseTo(l.displacement.z * 1e3, 9);
        expect(Number(row[col('spread z (mm)')])).toBeCloseTo(l.spread!.z * 1e3, 9);
        // 12 figures at most: no float noise such as 0.30000000000000004
        expect(row[col('displacement z (mm)')].replace(/^-|e.*$|\./g, '').replace(/^0+/, '').length).toBeLessThanOrEqual(12);
      }
      if (l.captured !== undefined) expect(Number(row[col('captured (fraction of the sub-beam in the window)')])).toBeCloseTo(l.captured, 11);
    });
    expect(rows.some((row) => row[col('displacement z (mm)')] !== '')).toBe(true);
  });

  it('draws bench G\'s two collectors in one detector-plane plot with each sub-beam\'s 90 % band, and one plot of their profiles', async () => {
    const { page } = app;
    await page.waitForFunction(() => document.querySelector<HTMLElement>('[data-chart="plane-DL"]')?.dataset.seq !== undefined, undefined, { timeout: 60_000 });
    await expect(page.locator('[data-chart="plane-DU"]').count()).resolves.toBe(0);
    await expect(page.locator('[data-chart="profile-DU"]').count()).resolves.toBe(0);
    const fig = await page.$eval('[data-chart="plane-DL"]', (el) => {
      const gd = el as unknown as { data: { name: string }[]; layout: { shapes: { type: string; fillcolor?: string; line: { dash?: string } }[] } };
      return { names: gd.data.map((d) => d.name), shapes: gd.layout.shapes.map((x) => ({ dash: x.line.dash ?? '', filled: (x.fillcolor ?? '').startsWith('rgba(') && !x.fillcolor!.endsWith(',0)') })) };
    });
    expect(fig.names).toEqual(['M1:mJ=+1/2', 'M1:mJ=-1/2']);
    // two bands (filled) and two windows (dotted)
    expect(fig.shapes.filter((x) => x.filled && x.dash === '')).toHaveLength(2);
    expect(fig.shapes.filter((x) => x.dash === 'dot')).toHaveLength(2);
    const profiles = await page.$eval('[data-chart="profile-DL"]', (el) => (el as unknown as { data: { fill: string }[] }).data.map((d) => d.fill));
    expect(profiles).toEqual(['tozeroy', 'tozeroy']);
    await page.locator('[data-chart="plane-DL"]').scrollIntoViewIfNeeded();
    await page.screenshot({ path: screenshotPath('editor/bench-g-detector-plane') });
  });

  it('exports a chart at the chosen size on a light background while the app is dark', async () => {
    const { page } = app;
    await page.locator('button.theme-toggle').click();
    await page.waitForFunction(() => document.querySelector('button.theme-toggle')?.getAttribute('aria-pressed') === 'true');
    await page.waitForTimeout(300);
    const fig = page.locator('figure.plot', { has: page.locator('[data-chart="velocity"]') });
    await fig.scrollIntoViewIfNeeded();
    await fig.locator('select[data-export-size]').selectOption('small');
    const [download] = await Promise.all([page.waitForEvent('download'), fig.locator('button:text-is("PNG")').click()]);
    const path = join(OUT, 'velocity-export-dark-app.png');
    await download.saveAs(path);
    const png = readFileSync(path);
    expect(png.readUInt32BE(16)).toBe(800);
    expect(png.readUInt32BE(20)).toBe(500);
    const img = await loadImage(png);
    const c = createCanvas(img.width, img.height);
    const ctx = c.getContext('2d');
    ctx.drawImage(img, 0, 0);
    const corner = [...ctx.getImageData(3, 3, 1, 1).data];
    expect(corner).toEqual([255, 255, 255, 255]);
    // the axis titles are dark on it (some pixel near the bottom centre, where the x title is, is dark)
    const strip = ctx.getImageData(300, 460, 200, 40).data;
    let darkest = 255;
    for (let i = 0; i < strip.length; i += 4) darkest = Math.min(darkest, strip[i]);
    expect(darkest).toBeLessThan(100);
    // the chart shown in the app stays dark
    await page.screenshot({ path: screenshotPath('editor/dark-app-light-export'), fullPage: false });
    writeFileSync(join(OUT, 'velocity-export-size.txt'), `${img.width} x ${img.height}\n`);
    // and SVG at the size of the chart as shown
    await fig.locator('select[data-export-size]').selectOption('shown');
    const [svgDl] = await Promise.all([page.waitForEvent('download'), fig.locator('button:text-is("SVG")').click()]);
    const svgPath = join(OUT, 'velocity-export-shown.svg');
    await svgDl.saveAs(svgPath);
    const svg = readFileSync(svgPath, 'utf8');
    const shownWidth = await fig.locator('[data-chart="velocity"]').evaluate((el) => Math.round(el.clientWidth));
    expect(svg).toMatch(new RegExp(`<svg[^>]*width="${shownWidth}"`));
    expect(svg).toContain('fill: rgb(255, 255, 255)');
    expect(svg).not.toContain('rgb(31, 37, 45)');
    await page.locator('button.theme-toggle').click();
  });
});
