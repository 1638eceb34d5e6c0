// The print window's page. The renderer sends the setup sheet as a complete HTML document (src/sheet:
// inline CSS and SVG, no script, no image or font file). Main keeps it in memory and serves it at
// spinyard://sheet/TOKEN.html in a session of its own (SHEET_PARTITION, nothing on disk), with a policy
// that allows inline styles and nothing else: no script, no request of any kind, no form, no <base>.
// The window also has JavaScript off; the policy holds whatever HTML arrives. Before this, the sheet was
// written to a temporary file and loaded from file://, where no policy applied.

import { randomBytes } from 'node:crypto';
import { APP_SCHEME } from './security.ts';

/** The in-memory session of the print windows (no "persist:" prefix: nothing is stored). */
export const SHEET_PARTITION = 'spinyard-sheet';
export const SHEET_HOST = 'sheet';
export const SHEET_ORIGIN = `${APP_SCHEME}://${SHEET_HOST}`;

export const SHEET_CSP_DIRECTIVES: ReadonlyArray<readonly [string, string]> = [
  ['default-src', "'none'"],
  ['style-src', "'unsafe-inline'"],
  ['base-uri', "'none'"],
  ['form-action', "'none'"],
  ['frame-ancestors', "'none'"],
];

export const SHEET_CSP: string = SHEET_CSP_DIRECTIVES.map(([k, v]) => `${k} ${v}`).join('; ');

export interface SheetResponse {
  status: 200 | 404;
  headers: Record<string, string>;
  body: string;
}

const PAGE = /^\/([0-9a-f]{32})\.html$/;

/** The sheets waiting to be printed, each at its own unguessable URL until removed. */
export function createSheetPages(token: () => string = () => randomBytes(16).toString('hex')) {
  const pages = new Map<string, string>();
  const headers = (type: string): Record<string, string> => ({
    'content-type': type,
    'content-security-policy': SHEET_CSP,
    'x-content-type-options': 'nosniff',
    'cache-control': 'no-store',
  });
  const tokenOf = (url: string): string | null => {
    let u: URL;
    try {
      u = new URL(url);
    } catch {
      return null;
    }
    if (`${u.protocol}//${u.host}` !== SHEET_ORIGIN || u.search !== '' || u.hash !== '') return null;
    return PAGE.exec(u.pathname)?.[1] ?? null;
  };
  return {
    /** Keeps `html` and gives the URL the print window loads. */
    add(html: string): string {
      const t = token();
      pages.set(t, html);
      return `${SHEET_ORIGIN}/${t}.html`;
    },
    remove(url: string): void {
      const t = tokenOf(url);
      if (t) pages.delete(t);
    },
    /** The response to a request of the sheet session: the page, or 404 for anything else. */
    respond(url: string): SheetResponse {
      const t = tokenOf(url);
      const html = t === null ? undefined : pages.get(t);
      if (html === undefined) return { status: 404, headers: headers('text/plain; charset=utf-8'), body: 'not found' };
      return { status: 200, headers: headers('text/html; charset=utf-8'), body: html };
    },
    get size(): number {
      return pages.size;
    },
  };
}
