// Security policy of the desktop app as plain functions: the Content-Security-Policy (shared with the
// web build through src/host/csp.ts), which URLs a window may show, and how the app protocol maps URLs
// to files of dist-web without leaving it.
//
// Why a custom protocol rather than file://: pages under file:// share one opaque origin with every
// local file, so 'self' in the CSP would cover the whole disk and fetch()/module workers behave
// differently from the browser build. spinyard://app/… is a standard, secure scheme with its own origin,
// served only from dist-web.

import * as path from 'node:path';
import MIME_TYPES from '../../src/host/mime-types.json';

export { CONTENT_SECURITY_POLICY } from '../../src/host/csp.ts';

export const APP_SCHEME = 'spinyard';
export const APP_HOST = 'app';
export const APP_ORIGIN = `${APP_SCHEME}://${APP_HOST}`;
export const APP_ENTRY = `${APP_ORIGIN}/index.html`;

/** The file of `root` (dist-web) that an app-protocol URL names, or null for any URL outside it: another
 *  scheme or host, "..", encoded separators, NUL. A folder URL ("/") names index.html. */
export function resolveAppFile(root: string, url: string): string | null {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    return null;
  }
  if (u.protocol !== `${APP_SCHEME}:` || u.host !== APP_HOST) return null;
  let rel: string;
  try {
    rel = decodeURIComponent(u.pathname);
  } catch {
    return null;
  }
  if (rel.includes('\0') || rel.includes('\\') || /%2f|%5c/i.test(u.pathname)) return null;
  if (rel.split('/').some((seg) => seg === '..')) return null;
  if (rel.endsWith('/')) rel += 'index.html';
  const file = path.resolve(root, `.${rel}`);
  const base = path.resolve(root);
  return file === base || !file.startsWith(base + path.sep) ? null : file;
}

/** The Content-Type of a dist-web file (the table is shared with scripts/serve-web.mjs). */
export function mimeTypeOf(file: string): string {
  const ext = path.extname(file).toLowerCase();
  return (MIME_TYPES as Record<string, string>)[ext] ?? 'application/octet-stream';
}

/** A development server URL accepted from SPINYARD_DEV_URL: http on the loopback interface only. */
export function isAllowedDevUrl(url: string): boolean {
  try {
    const u = new URL(url);
    return u.protocol === 'http:' && (u.hostname === '127.0.0.1' || u.hostname === 'localhost' || u.hostname === '[::1]');
  } catch {
    return false;
  }
}

/** The links the renderer may hand to the operating system's browser (shell.openExternal): the project's
 *  own documentation pages, each written out in full. The renderer opens none today (its help is inside
 *  the app and Help → README opens the README file of the installation), so the list is empty and every
 *  window.open or target=_blank is refused. A link added to the app is added here, as the exact https
 *  URL, with its test in test/electron/main/security.test.ts. */
export const EXTERNAL_LINKS: readonly string[] = [];

/** True when `url` is exactly one of `allowed` (https only; compared as parsed URLs, so "HTTPS://Host/a"
 *  equals "https://host/a", while another path, query, fragment, port or user name does not). */
export function isAllowedExternalLink(url: string, allowed: readonly string[] = EXTERNAL_LINKS): boolean {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    return false;
  }
  if (u.protocol !== 'https:' || u.username !== '' || u.password !== '') return false;
  return allowed.some((a) => {
    try {
      return new URL(a).href === u.href;
    } catch {
      return false;
    }
  });
}
