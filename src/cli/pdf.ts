/**
 * Printing a setup sheet to PDF with the browser of find-browser.ts, offline: the page gets the sheet's HTML
 * directly, JavaScript is off and every request is refused (the sheet is self-contained), and the browser
 * prints with the paper the sheet's CSS asks for (`paperStyle`).
 */
import { BROWSER_ARGS, BrowserMissingError, type FoundBrowser, findBrowser } from './find-browser.ts';
import type { Paper } from './output.ts';

/** A print failure of a browser that was found: one line naming the browser. */
export class PrintError extends Error {
  override name = 'PrintError';
}

/** The CSS that sets the paper; later than the sheet's own @page rules, so it wins. */
export function paperStyle(paper: Paper): string {
  return `<style>@page { size: ${paper === 'a4' ? 'A4' : 'letter'} portrait; }</style>`;
}

/** The sheet's HTML with the paper set (before </head>, or at the start when there is no head). */
export function withPaper(html: string, paper: Paper): string {
  const i = html.search(/<\/head>/i);
  return i < 0 ? paperStyle(paper) + html : html.slice(0, i) + paperStyle(paper) + html.slice(i);
}

function firstLine(e: unknown): string {
  const m = e instanceof Error ? e.message : String(e);
  // playwright's messages carry a call log after the first line
  return m.split('\n').map((l) => l.trim()).find((l) => l !== '') ?? 'unknown error';
}

/** The PDF of `html` (already carrying its paper) and the browser that printed it. Throws BrowserMissingError or PrintError with one line. */
export async function printPdf(html: string, find: () => Promise<FoundBrowser> = findBrowser): Promise<{ pdf: Uint8Array; browser: FoundBrowser }> {
  const found = await find();
  let pw: typeof import('playwright-core');
  try {
    pw = await import('playwright-core');
  } catch {
    throw new BrowserMissingError('the package playwright-core is not installed: run "npm ci" in the Spinyard checkout');
  }
  let browser: import('playwright-core').Browser | undefined;
  try {
    browser = await pw.chromium.launch({ executablePath: found.executablePath, args: [...BROWSER_ARGS], headless: true, timeout: 60_000 });
    const context = await browser.newContext({ javaScriptEnabled: false, offline: true });
    await context.route('**/*', (route) => route.abort('blockedbyclient'));
    const page = await context.newPage();
    await page.setContent(html, { waitUntil: 'load', timeout: 60_000 });
    const pdf = await page.pdf({ printBackground: true, preferCSSPageSize: true });
    return { pdf: new Uint8Array(pdf), browser: found };
  } catch (e) {
    throw new PrintError(`cannot print the PDF with the ${found.description}: ${firstLine(e)}`);
  } finally {
    await browser?.close().catch(() => {});
  }
}
