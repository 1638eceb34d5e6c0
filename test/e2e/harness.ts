// End-to-end harness: builds dist-web when it is missing or older than its sources, serves it on
// 127.0.0.1 (scripts/serve-web.mjs), and drives the Chromium that src/cli/find-browser.ts finds (SPINYARD_BROWSER,
// a system one, or the one inside the npm package @sparticuz/chromium) through playwright-core with
// a fresh user-data dir. Every request that leaves 127.0.0.1 is aborted and recorded. Used by the e2e
// tests and by bench/ui.ts.
import { spawn, execFileSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { chromium, type BrowserContext, type Locator, type Page } from 'playwright-core';
import { expect } from 'vitest';
import { BROWSER_ARGS, findBrowser } from '../../src/cli/find-browser.ts';

export const ROOT = resolve(import.meta.dirname, '..', '..');
export const RESULTS_DIR = join(ROOT, 'test-results');
/** The samples the build copies (scripts/copy-samples.mjs reads SPINYARD_SAMPLES the same way). */
export const SAMPLES_DIR = process.env.SPINYARD_SAMPLES ?? join(ROOT, 'samples');

function newestMtime(path: string): number {
  if (!existsSync(path)) return 0;
  const s = statSync(path);
  if (!s.isDirectory()) return s.mtimeMs;
  let m = 0;
  for (const n of readdirSync(path)) m = Math.max(m, newestMtime(join(path, n)));
  return m;
}

/** Sources of the web build: a change in any of them makes dist-web stale. */
const BUILD_INPUTS = ['src', 'index.html', 'vite.config.ts', SAMPLES_DIR, 'scripts/copy-samples.mjs'];

function sleep(ms: number) {
  return new Promise((r) => setTimeout(r, ms));
}

/** Runs `npm run build:web` when dist-web is missing or older than a source; one build at a time across
 *  test processes (a lock directory). */
export async function ensureBuild(): Promise<void> {
  const lock = join(ROOT, 'test-results', '.build-lock');
  mkdirSync(RESULTS_DIR, { recursive: true });
  const stale = () => {
    const built = existsSync(join(ROOT, 'dist-web', 'index.html')) ? statSync(join(ROOT, 'dist-web', 'index.html')).mtimeMs : 0;
    return built === 0 || BUILD_INPUTS.some((p) => newestMtime(resolve(ROOT, p)) > built);
  };
  for (let waited = 0; ; waited += 250) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      // a lock left by a killed build (older than 10 minutes) is taken over
      if (existsSync(lock) && Date.now() - statSync(lock).mtimeMs > 600_000) rmSync(lock, { recursive: true, force: true });
      if (waited > 300_000) throw new Error(`the web build lock ${lock} is held for over 5 minutes: remove it if no build runs`);
      await sleep(250);
    }
  }
  try {
    if (stale()) execFileSync('npm', ['run', 'build:web'], { cwd: ROOT, stdio: 'pipe', timeout: 600_000 });
  } catch (e) {
    const err = e as { stdout?: Buffer; stderr?: Buffer; message: string };
    throw new Error(`npm run build:web failed:\n${err.stdout?.toString() ?? ''}${err.stderr?.toString() ?? ''}${err.message}`);
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export interface App {
  url: string;
  /** Which browser drives the page (find-browser.ts). */
  browser: string;
  context: BrowserContext;
  page: Page;
  /** Every URL the page requested (including aborted ones). */
  requests: string[];
  /** Requests refused because they would have left 127.0.0.1. */
  refused: string[];
  /** Console errors and uncaught page errors. */
  errors: string[];
  close(): Promise<void>;
}

function isLocal(url: string): boolean {
  if (url.startsWith('data:') || url.startsWith('blob:')) return true;
  try {
    return new URL(url).hostname === '127.0.0.1';
  } catch {
    return false;
  }
}

/** Serves dist-web on 127.0.0.1 (a free port); the caller kills `proc`. */
export async function serve(): Promise<{ url: string; proc: ChildProcess }> {
  const proc = spawn(process.execPath, [join(ROOT, 'scripts', 'serve-web.mjs')], { cwd: ROOT, env: { ...process.env, PORT: '0' }, stdio: ['ignore', 'pipe', 'pipe'] });
  const url = await new Promise<string>((res, rej) => {
    let out = '';
    const t = setTimeout(() => rej(new Error(`serve-web did not print its URL: ${out}`)), 20_000);
    proc.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const m = /http:\/\/127\.0\.0\.1:\d+\//.exec(out);
      if (m) {
        clearTimeout(t);
        res(m[0]);
      }
    });
    proc.stderr!.on('data', (d: Buffer) => (out += d.toString()));
    proc.once('exit', (code) => rej(new Error(`serve-web exited (${code}): ${out}`)));
  });
  return { url, proc };
}

/** Builds if needed, serves dist-web and opens it in a fresh Chromium profile. Fails when no browser is found. */
export async function openApp(opts: { colorScheme?: 'light' | 'dark'; initScript?: string } = {}): Promise<App> {
  const browser = await findBrowser();
  await ensureBuild();
  const { url, proc } = await serve();
  const profile = mkdtempSync(join(tmpdir(), 'spinyard-e2e-'));
  let context: BrowserContext;
  try {
    context = await chromium.launchPersistentContext(profile, {
      executablePath: browser.executablePath,
      args: [...BROWSER_ARGS],
      headless: true,
      acceptDownloads: true,
      viewport: { width: 1440, height: 1400 },
      colorScheme: opts.colorScheme ?? 'light',
      serviceWorkers: 'block',
    });
  } catch (e) {
    proc.kill();
    rmSync(profile, { recursive: true, force: true });
    throw e;
  }
  const requests: string[] = [];
  const refused: string[] = [];
  const errors: string[] = [];
  context.on('request', (r) => {
    requests.push(r.url());
  });
  await context.route('**/*', (route) => {
    const u = route.request().url();
    if (isLocal(u)) return route.continue();
    refused.push(u);
    return route.abort('blockedbyclient');
  });
  if (opts.initScript) await context.addInitScript(opts.initScript);
  const page = context.pages()[0] ?? (await context.newPage());
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(m.text());
  });
  page.on('pageerror', (e) => errors.push(String(e)));
  // Playwright turns the file-chooser interception on when the first listener is added, without waiting
  // for it; a test's `waitForEvent('filechooser')` alone can lose the race with its own key press, and the
  // chooser then never reaches it. One listener for the page's whole life keeps the interception on from
  // before the page loads; each test still takes its chooser through waitForEvent.
  page.on('filechooser', () => {});
  await page.goto(url);
  await page.waitForSelector('table.ports tbody tr', { timeout: 60_000 });
  return {
    url, browser: browser.description, context, page, requests, refused, errors,
    async close() {
      await context.close().catch(() => {});
      proc.kill();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** The request URLs that are not on 127.0.0.1 (data: and blob: count as local). */
export function foreignRequests(app: App): string[] {
  return [...app.requests.filter((u) => !isLocal(u)), ...app.refused];
}

/** Waits until the results show the run of the latest document (not stale) and the counts chart drew it. */
export async function waitForFreshResults(page: Page, afterSeq = 0): Promise<number> {
  const h = await page.waitForFunction(
    (after) => {
      const r = document.querySelector<HTMLElement>('section.results');
      const chart = document.querySelector<HTMLElement>('[data-chart="counts"]');
      if (!r || r.dataset.stale !== 'false') return false;
      const seq = Number(r.dataset.seq);
      if (!(seq > after)) return false;
      return chart && chart.dataset.seq === String(seq) ? seq : false;
    },
    afterSeq,
    { timeout: 60_000, polling: 20 },
  );
  return (await h.jsonValue()) as number;
}

/** The yields in the ports table, row by row: {path, target, yield} at full precision. */
export async function tableYields(page: Page): Promise<{ path: string; target: string; yield: number }[]> {
  return page.$$eval('table.ports tbody tr', (rows) =>
    rows.map((r) => ({
      path: (r as HTMLElement).dataset.path ?? '',
      target: (r as HTMLElement).dataset.target ?? '',
      yield: Number((r.querySelector('[data-yield]') as HTMLElement).dataset.yield),
    })),
  );
}

/** Runs a menu's command by clicking the menu and then the command. */
export async function runMenu(page: Page, menu: string, command: string): Promise<void> {
  await page.locator(`[data-menu-button="${menu}"]`).click();
  await page.locator(`[data-command="${command}"]`).click();
}

/** Selects an element in the tree and waits for the inspector to show it. */
export async function selectElement(page: Page, id: string): Promise<void> {
  await page.locator(`.tree [data-id="${id}"]`).first().click();
  await page.waitForSelector(`.inspector .insp-id:text-is("${id}")`);
}

export function screenshotPath(name: string): string {
  mkdirSync(RESULTS_DIR, { recursive: true });
  return join(RESULTS_DIR, `${name}.png`);
}

/**
 * Opens the tolerance budget panel (Alt+B from the element `from` focuses), waits for its `tolerances` rows, runs the
 * budget and waits for its tables; the panel's locator.
 */
export async function runBudgetPanel(page: Page, from: string, tolerances: number): Promise<Locator> {
  await page.locator(from).focus();
  await page.keyboard.press('Alt+b');
  const panel = page.locator('[data-panel="budget"]');
  await panel.waitFor();
  await expect.poll(() => panel.locator('.tolerances tbody tr[data-tolerance]').count()).toBe(tolerances);
  await panel.getByRole('button', { name: 'Run budget' }).click();
  await page.waitForSelector('[data-budget-seq]', { timeout: 60_000 });
  return panel;
}
