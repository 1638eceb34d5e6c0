// The browser host in a real browser (the Chromium of src/cli/find-browser.ts through playwright-core, served on 127.0.0.1):
// IndexedDB autosave surviving a reload, the file picker, the download, the samples fetch, all under
// the app's Content-Security-Policy. The unit tests in browser.test.ts cover the logic with fakes.
import { build } from 'esbuild';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BROWSER_ARGS, findBrowser } from '../../src/cli/find-browser.ts';
import { CONTENT_SECURITY_POLICY } from '../../src/host/csp.ts';

const SAMPLE = '{\n  "format": "spinyard.beamline",\n  "version": 1,\n  "title": "Bench A, effusive check"\n}\n';

let server: Server;
let base: string;
let context: BrowserContext;
let page: Page;
let profile: string;
const offHost: string[] = [];

beforeAll(async () => {
  const browser = await findBrowser();
  const bundle = await build({
    entryPoints: ['src/host/browser.ts'],
    bundle: true,
    format: 'iife',
    globalName: 'SpinyardHost',
    write: false,
    target: 'es2022',
  });
  const js = bundle.outputFiles[0].text;
  const files: Record<string, [string, string]> = {
    '/index.html': ['text/html', '<!doctype html><html lang="en"><head><title>host</title><script src="host.js"></script><script src="boot.js"></script></head><body></body></html>'],
    '/host.js': ['text/javascript', js],
    '/boot.js': ['text/javascript', 'window.host = SpinyardHost.createBrowserHost();'],
    '/samples/index.json': ['application/json', JSON.stringify({ samples: [{ name: 'bench-a.spinyard', title: 'Bench A, effusive check' }] })],
    '/samples/bench-a.spinyard': ['application/json', SAMPLE],
  };
  server = createServer((req, res) => {
    const f = files[new URL(req.url ?? '/', 'http://x').pathname];
    if (!f) return void res.writeHead(404).end();
    res.writeHead(200, { 'content-type': f[0], 'content-security-policy': CONTENT_SECURITY_POLICY }).end(f[1]);
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const addr = server.address();
  base = `http://127.0.0.1:${typeof addr === 'object' && addr ? addr.port : 0}/`;
  profile = mkdtempSync(join(tmpdir(), 'spinyard-host-'));
  context = await chromium.launchPersistentContext(profile, { executablePath: browser.executablePath, args: [...BROWSER_ARGS], headless: true, acceptDownloads: true });
  context.on('request', (r) => {
    if (!r.url().startsWith(base)) offHost.push(r.url());
  });
  page = context.pages()[0] ?? (await context.newPage());
  page.on('dialog', (d) => void d.accept());
  await page.goto(base + 'index.html');
});

afterAll(async () => {
  await context?.close();
  server?.close();
  if (profile) rmSync(profile, { recursive: true, force: true });
});

describe('browser host in Chromium', () => {
  it('keeps a draft in IndexedDB across a reload and offers it after the dirty page went away', async () => {
    await page.evaluate(async () => {
      const h = (window as any).host;
      await h.autosave('doc-1', '{"title":"unsaved"}', 'bench-b.spinyard');
      h.setDirty(true);
    });
    await page.reload();
    const offered = await page.evaluate(() => (window as any).host.loadAutosave());
    expect(offered.map((d: any) => [d.key, d.name, d.text])).toEqual([['doc-1', 'bench-b.spinyard', '{"title":"unsaved"}']]);
    await page.evaluate(() => (window as any).host.clearAutosave('doc-1'));
    await page.reload();
    expect(await page.evaluate(() => (window as any).host.loadAutosave())).toEqual([]);
  });

  it('lists and reads samples from the served folder', async () => {
    expect(await page.evaluate(() => (window as any).host.listSamples())).toEqual([{ name: 'bench-a.spinyard', title: 'Bench A, effusive check' }]);
    expect(await page.evaluate(() => (window as any).host.readSample('bench-a.spinyard'))).toEqual({ name: 'bench-a.spinyard', text: SAMPLE });
  });

  it('opens a file through the picker (accept .spinyard) and saves as a download', async () => {
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.evaluate(() => void ((window as any).opened = (window as any).host.openDocument()))]);
    expect(await chooser.element().getAttribute('accept')).toBe('.spinyard');
    await chooser.setFiles({ name: 'bench-c.spinyard', mimeType: 'application/json', buffer: Buffer.from('{"title":"C"}') });
    expect(await page.evaluate(() => (window as any).opened)).toEqual({ name: 'bench-c.spinyard', text: '{"title":"C"}' });

    const [download] = await Promise.all([page.waitForEvent('download'), page.evaluate(() => (window as any).host.saveDocument({ name: 'bench-c', text: '{"title":"C2"}' }))]);
    expect(download.suggestedFilename()).toBe('bench-c.spinyard');
    expect(readFileSync(await download.path(), 'utf8')).toBe('{"title":"C2"}');
    const recent = await page.evaluate(() => (window as any).host.recentDocuments());
    expect(recent.map((r: any) => r.name)).toEqual(['bench-c.spinyard']);
    expect(await page.evaluate(() => (window as any).host.openRecent('bench-c.spinyard'))).toEqual({ name: 'bench-c.spinyard', text: '{"title":"C2"}' });
  });

  it('made no request off 127.0.0.1', () => {
    expect(offHost).toEqual([]);
  });
});
