// The print window's page (electron/main/sheet-page.ts): the sheet HTML served from memory with its own
// Content-Security-Policy. The unit tests check the responses; the browser tests load a real setup sheet
// (printed by the command line) and a hostile page under that policy in the Chromium of
// src/cli/find-browser.ts, and print both to PDF as the print window does.
import { execFileSync } from 'node:child_process';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SHEET_CSP, SHEET_ORIGIN, createSheetPages } from '../../../electron/main/sheet-page.ts';
import { BROWSER_ARGS, findBrowser } from '../../../src/cli/find-browser.ts';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
const directives = (csp: string) => new Map(csp.split(';').map((d) => d.trim().split(/\s+/)).map(([k, ...v]) => [k, v]));

describe('the sheet page', () => {
  it('serves the sheet it was given, with the policy, from a URL that cannot be guessed', () => {
    const pages = createSheetPages();
    const url = pages.add('<!doctype html><title>s</title>');
    expect(url).toMatch(new RegExp(`^${SHEET_ORIGIN}/[0-9a-f]{32}\\.html$`));
    expect(pages.add('x')).not.toBe(url);
    const r = pages.respond(url);
    expect(r.status).toBe(200);
    expect(r.body).toBe('<!doctype html><title>s</title>');
    expect(r.headers['content-security-policy']).toBe(SHEET_CSP);
    expect(r.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(r.headers['x-content-type-options']).toBe('nosniff');
  });

  it('serves nothing else: another page, another host or scheme, a page removed', () => {
    const pages = createSheetPages();
    const url = pages.add('<p>sheet</p>');
    const token = /([0-9a-f]{32})\.html$/.exec(url)![1];
    for (const other of [`${SHEET_ORIGIN}/${'0'.repeat(32)}.html`, `${SHEET_ORIGIN}/`, `spinyard://app/${token}.html`, `https://sheet/${token}.html`, `${SHEET_ORIGIN}/${token}.html/x`, `${SHEET_ORIGIN}/../${token}.html?x`, 'not a url']) {
      const r = pages.respond(other);
      expect(r.status, other).toBe(404);
      expect(r.headers['content-security-policy']).toBe(SHEET_CSP);
    }
    pages.remove(url);
    expect(pages.respond(url).status).toBe(404);
    expect(pages.size).toBe(0);
  });

  it('allows inline styles and nothing else: no script, no request, no form, no base', () => {
    const d = directives(SHEET_CSP);
    expect(d.get('default-src')).toEqual(["'none'"]);
    expect(d.get('style-src')).toEqual(["'unsafe-inline'"]);
    expect(d.get('base-uri')).toEqual(["'none'"]);
    expect(d.get('form-action')).toEqual(["'none'"]);
    expect(d.get('frame-ancestors')).toEqual(["'none'"]);
    expect([...d.keys()].sort()).toEqual(['base-uri', 'default-src', 'form-action', 'frame-ancestors', 'style-src']);
  });
});

describe('the sheet page in Chromium', () => {
  let browser: Browser;
  beforeAll(async () => {
    const found = await findBrowser();
    browser = await chromium.launch({ executablePath: found.executablePath, args: [...BROWSER_ARGS], headless: true });
  });
  afterAll(async () => {
    await browser?.close();
  });

  /** Opens `html` as the print window would (its response at a stand-in https origin); records every
   *  request leaving the page and every console message. */
  async function open(html: string, withPolicy = true): Promise<{ page: Page; requests: string[]; console: string[] }> {
    const pages = createSheetPages();
    const url = pages.add(html);
    const r = pages.respond(url);
    const headers = { ...r.headers };
    if (!withPolicy) delete headers['content-security-policy'];
    const page = await browser.newPage();
    const requests: string[] = [];
    const console: string[] = [];
    page.on('console', (m) => console.push(m.text()));
    await page.route('**/*', (route) => {
      const u = route.request().url();
      if (u === 'https://sheet.spinyard.test/sheet.html') return route.fulfill({ status: r.status, headers, body: r.body });
      requests.push(u);
      return route.abort();
    });
    await page.goto('https://sheet.spinyard.test/sheet.html');
    await page.waitForLoadState('load');
    return { page, requests, console };
  }

  async function pdfText(page: Page): Promise<{ pages: number; text: string }> {
    const pdf = await page.pdf({ printBackground: true, format: 'A4' });
    const doc = await getDocument({ data: new Uint8Array(pdf), isEvalSupported: false }).promise;
    let text = '';
    for (let i = 1; i <= doc.numPages; i++) {
      const content = await (await doc.getPage(i)).getTextContent();
      text += content.items.map((it) => ('str' in it ? it.str : '')).join(' ') + '\n';
    }
    return { pages: doc.numPages, text };
  }

  it('shows and prints a real setup sheet exactly as without the policy, with no violation', async () => {
    const html = execFileSync(process.execPath, [path.join(ROOT, 'bin', 'spinyard.js'), 'sheet', path.join(ROOT, 'samples', 'bench-h-rb87-mj-then-eigenstate.spinyard')], { cwd: ROOT, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
    expect(html).toMatch(/<svg/);
    const strict = await open(html);
    const plain = await open(html, false);
    expect(strict.console.filter((m) => /Content Security Policy|Refused/i.test(m))).toEqual([]);
    expect(strict.requests).toEqual([]);
    // the inline styles apply (column widths, the drawing's strokes) as they do without the policy
    const look = (p: Page) => p.evaluate(() => [...document.querySelectorAll('col, svg .axis, h1, table')].slice(0, 40).map((e) => getComputedStyle(e).width + getComputedStyle(e).stroke + getComputedStyle(e).fontSize));
    expect(await look(strict.page)).toEqual(await look(plain.page));
    const [a, b] = [await pdfText(strict.page), await pdfText(plain.page)];
    expect(a.pages).toBe(b.pages);
    expect(a.text).toBe(b.text);
    expect(a.text).toMatch(/Rb-87|87Rb|Rb/);
    await strict.page.close();
    await plain.page.close();
  });

  it('blocks what hostile sheet HTML tries: scripts, requests, frames, forms, a base URL', async () => {
    const hostile = `<!doctype html><html><head><title>sheet</title>
      <base href="https://evil.spinyard.test/">
      <link rel="stylesheet" href="https://evil.spinyard.test/a.css">
      <style>@import url(https://evil.spinyard.test/b.css); body { background: url(https://evil.spinyard.test/bg.png); } #inline { color: rgb(1, 2, 3); }</style>
      </head><body>
      <script>document.title = 'script ran';</script>
      <img src="https://evil.spinyard.test/i.png" onerror="document.title = 'handler ran'">
      <svg width="10" height="10"><image href="https://evil.spinyard.test/s.png" width="10" height="10"/></svg>
      <iframe src="https://evil.spinyard.test/frame"></iframe>
      <object data="https://evil.spinyard.test/o"></object>
      <form action="https://evil.spinyard.test/post" method="post"><button id="send">send</button></form>
      <a id="link" href="page">relative</a>
      <p id="inline" style="font-size: 13px">inline styles still apply</p>
      </body></html>`;
    const { page, requests, console } = await open(hostile);
    expect(await page.title()).toBe('sheet'); // neither the script nor the error handler ran
    expect(await page.evaluate(() => (document.getElementById('link') as HTMLAnchorElement).href)).toBe('https://sheet.spinyard.test/page');
    expect(await page.evaluate(() => [getComputedStyle(document.getElementById('inline')!).color, getComputedStyle(document.getElementById('inline')!).fontSize])).toEqual(['rgb(1, 2, 3)', '13px']);
    await page.evaluate(() => document.forms[0].requestSubmit());
    await page.waitForTimeout(300);
    expect(requests).toEqual([]); // no stylesheet, image, frame, plugin or form post left the page
    expect(page.url()).toBe('https://sheet.spinyard.test/sheet.html');
    for (const directive of ["base-uri 'none'", "form-action 'none'", 'Executing inline script', 'Executing inline event handler', 'Framing', 'plugin', 'stylesheet', 'image']) {
      expect(console.some((m) => m.includes(directive)), directive).toBe(true);
    }
    await page.close();
  });
});
