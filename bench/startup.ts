/**
 * `npm run bench -- startup`: how long a user waits, each time from a cold process (median of 10):
 *   `spinyard --help` and `spinyard run` of a sample, as `node bin/spinyard.js` (the built command line);
 *   the app: a new browser process loading the served renderer until the first result (the ports table of
 *   the default line) is shown, the browser's own start not counted; and the sizes of the renderer's chunks.
 * Targets (issue 11): --help under 0.2 s, run under 0.5 s, the app's load to first result under 1.5 s.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { BROWSER_ARGS, findBrowser } from '../src/cli/find-browser.ts';
import { ROOT, ensureBuild, serve } from '../test/e2e/harness.ts';
import { median } from './ui.ts';

const RUNS = 10;

/**
 * In the page from its first script on: on every animation frame, the time since navigation started at which the
 * first result (the ports table of a fresh run) and then the counts chart of that run were on screen.
 */
const PROBE = `(() => {
  const w = window;
  const tick = () => {
    const r = document.querySelector('section.results[data-stale="false"]');
    if (w.__first === undefined && r && r.querySelector('table.ports tbody tr')) w.__first = performance.now();
    const c = document.querySelector('[data-chart="counts"]');
    if (w.__first !== undefined && w.__chart === undefined && r && c && c.dataset.seq === r.dataset.seq) w.__chart = performance.now();
    if (w.__chart === undefined) requestAnimationFrame(tick);
  };
  requestAnimationFrame(tick);
})();`;
const SAMPLE = 'samples/bench-c-roll-calibration.spinyard';

const fmt = (ms: number) => `${(ms / 1000).toFixed(3)} s`;
const range = (xs: number[]) => `median ${fmt(median(xs))} (min ${fmt(Math.min(...xs))}, max ${fmt(Math.max(...xs))})`;

/** Wall time of `node bin/spinyard.js ARGS` in a new process, in ms; fails on a non-zero exit. */
function cliOnce(args: string[]): number {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [join(ROOT, 'bin', 'spinyard.js'), ...args], { cwd: ROOT, encoding: 'utf8' });
  const ms = performance.now() - t0;
  if (r.status !== 0) throw new Error(`spinyard ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return ms;
}

function cli(label: string, args: string[], targetMs: number): string {
  cliOnce(args); // builds the command line if a source changed since the last build
  const times = Array.from({ length: RUNS }, () => cliOnce(args));
  return `  ${label}: ${range(times)}; target < ${fmt(targetMs)}: ${median(times) < targetMs ? 'met' : 'NOT MET'}`;
}

async function app(): Promise<string[]> {
  const browser = await findBrowser();
  await ensureBuild();
  const assets = join(ROOT, 'dist-web', 'assets');
  const chunks = readdirSync(assets).filter((n) => n.endsWith('.js')).map((n) => ({ n, kb: statSync(join(assets, n)).size / 1024 })).sort((a, b) => b.kb - a.kb);
  const { url, proc } = await serve();
  const times: number[] = [];
  const charts: number[] = [];
  try {
    for (let i = 0; i <= RUNS; i++) {
      // a new browser process each time: no compiled-code or HTTP cache from an earlier load
      const b = await chromium.launch({ executablePath: browser.executablePath, args: [...BROWSER_ARGS], headless: true });
      try {
        const context = await b.newContext({ serviceWorkers: 'block' });
        // timed in the page, by the frame that paints it: from Node, a busy page (plotly arriving right after the
        // first result) delays what waitForSelector sees
        await context.addInitScript(PROBE);
        const page = await context.newPage();
        await page.goto(url);
        // polled with evaluate (a string evaluated over the protocol, which the page's CSP allows; waitForFunction is not)
        let t: [number | null, number | null] = [null, null];
        for (const t0 = Date.now(); t[1] === null; await new Promise((r) => setTimeout(r, 50))) {
          if (Date.now() - t0 > 60_000) throw new Error('the app showed no result within 60 s');
          t = (await page.evaluate('[window.__first ?? null, window.__chart ?? null]')) as [number | null, number | null];
        }
        if (i > 0) { // the first load also warms the server's file cache
          times.push(t[0]!);
          charts.push(t[1]);
        }
      } finally {
        await b.close();
      }
    }
  } finally {
    proc.kill();
  }
  return [
    `  app, navigation to the first result in a new browser process (${browser.description}): ${range(times)}; target < 1.500 s: ${median(times) < 1500 ? 'met' : 'NOT MET'}`,
    `  app, navigation to the counts chart drawn: ${range(charts)}`,
    `  renderer chunks: ${chunks.slice(0, 4).map((c) => `${c.n} ${c.kb.toFixed(0)} KB`).join(', ')}`,
  ];
}

export async function benchStartup(): Promise<string> {
  const lines = [`startup, each from a cold process, median of ${RUNS}:`];
  lines.push(cli('spinyard --help', ['--help'], 200));
  lines.push(cli(`spinyard run ${SAMPLE}`, ['run', SAMPLE], 500));
  lines.push(...(await app()));
  return lines.join('\n');
}
