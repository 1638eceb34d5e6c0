/**
 * A printed PDF read back for the tests, with pdf.js (npm, no system package): each page's size, its text items
 * with their place on the page, and its text; optionally each page drawn as a PNG (pdf.js with @napi-rs/canvas)
 * for a person to look at. Also the marks every page of a setup sheet carries.
 */
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';
import { expect } from 'vitest';
import { sha256Hex } from '../src/sheet/sha256.ts';

export interface Item { str: string; x: number; y: number }
export interface Page { width: number; height: number; items: Item[]; text: string }

interface CanvasFactory { create(w: number, h: number): { canvas: { toBuffer(type: string): Buffer }; context: unknown } }

/** The pages of `pdf`; with `png`, each page is also drawn at 1.25× and handed over as PNG bytes (page numbers from 1). */
export async function readPdf(pdf: Uint8Array, png?: (page: number, bytes: Buffer) => void): Promise<Page[]> {
  const doc = await getDocument({ data: pdf, isEvalSupported: false }).promise;
  const pages: Page[] = [];
  for (let i = 1; i <= doc.numPages; i++) {
    const p = await doc.getPage(i);
    const [, , width, height] = p.view;
    const items = (await p.getTextContent()).items
      .filter((it): it is typeof it & { str: string; transform: number[] } => 'str' in it && it.str.trim() !== '')
      .map((it) => ({ str: it.str, x: it.transform[4], y: it.transform[5] }));
    pages.push({ width, height, items, text: items.map((it) => it.str).join(' ') });
    if (png) {
      const viewport = p.getViewport({ scale: 1.25 });
      const { canvas, context } = (doc as unknown as { canvasFactory: CanvasFactory }).canvasFactory.create(viewport.width, viewport.height);
      await p.render({ canvasContext: context as never, viewport, canvas: canvas as never }).promise;
      png(i, canvas.toBuffer('image/png'));
    }
  }
  await doc.destroy();
  return pages;
}

/** Spaces do not matter when text is looked for: pdf.js splits and joins runs its own way. */
export const squash = (s: string) => s.replace(/\s+/g, '');

export const MM = 72 / 25.4;
/** Text in the top or bottom page margin (the sheet's margins are 14 mm; the body never reaches them). */
export const inTopMargin = (p: Page, it: Item) => it.y > p.height - 12 * MM;
export const inBottomMargin = (it: Item) => it.y < 12 * MM;

/** Every page carries the file name and the short hash of its text in the top margin, "Page n of m" in the bottom one. */
export function expectEveryPageMarked(pages: Page[], fileName: string, text: string): void {
  const hash = sha256Hex(text).slice(0, 12);
  pages.forEach((p, i) => {
    const top = squash(p.items.filter((it) => inTopMargin(p, it)).map((it) => it.str).join(' '));
    const bottom = squash(p.items.filter(inBottomMargin).map((it) => it.str).join(' '));
    expect(top, `page ${i + 1}: file and hash in the top margin`).toContain(squash(`${fileName} · sha256 ${hash}`));
    expect(bottom, `page ${i + 1}: page number in the bottom margin`).toContain(squash(`Page ${i + 1} of ${pages.length}`));
  });
}
