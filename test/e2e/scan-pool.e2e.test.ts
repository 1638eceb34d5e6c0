// A scan on a pool of workers in Chromium against the built app: the same scans in a window whose pool has one
// worker (2 cores: one per core but one) and in one whose pool has two (3 cores), compared byte for byte: the CSV
// export, the numbers the chart drew and the warnings listed. Bench B's analyser polar angle warns at every point,
// a warning of its own each (numbered by first appearance); bench C's efficiency has points the reader refuses; bench
// C's kept roll scan is the panel's own. A long scan on two workers shows the progress of both and stops at Cancel.
// Bench C's tolerance budget, shared over the two workers, shows the one worker's tables.
import { afterAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { openApp, runBudgetPanel, runMenu, screenshotPath, waitForFreshResults, type App } from './harness.ts';

/** Makes the page see `cores` logical processors (navigator.hardwareConcurrency), before the app's scripts run. */
const cores = (n: number) => `Object.defineProperty(Navigator.prototype, 'hardwareConcurrency', { get: () => ${n}, configurable: true });`;

interface ScanSeen { csv: string; traces: string; warnings: string[]; workers: number; refused: string }

const opened: App[] = [];
afterAll(async () => {
  for (const a of opened) await a.close();
});

async function openSample(app: App, name: string): Promise<void> {
  const { page } = app;
  const before = await waitForFreshResults(page);
  await runMenu(page, 'Samples', `samples.open.${name}`);
  const dontSave = page.getByRole('button', { name: "Don't Save" });
  await page.waitForTimeout(100);
  if (await dontSave.count()) await dontSave.click();
  await waitForFreshResults(page, before);
}

/**
 * Runs a scan and reads what the panel shows: the CSV, the chart's numbers, the warnings. `form`: the form's one
 * parameter set first; 'stored': the document's first kept scan; 'again': the form as it stands.
 */
async function scanOf(app: App, form: { param: string; from: string; to: string; points: string } | 'stored' | 'again'): Promise<ScanSeen> {
  const { page } = app;
  const panel = page.locator('[data-panel="scan"]');
  if (typeof form === 'object') {
    await panel.locator('select[name="scan-param-0"]').selectOption(form.param);
    for (const [name, v] of [['scan-from-0', form.from], ['scan-to-0', form.to]]) {
      const input = panel.locator(`input[name="${name}"]`);
      await input.fill(v);
      await input.press('Enter');
    }
    await panel.locator('input[name="scan-points-0"]').fill(form.points);
  }
  const shown = page.locator('[data-scan-seq]');
  const before = (await shown.count()) ? Number(await shown.getAttribute('data-scan-seq')) : 0;
  if (form === 'stored') await panel.locator('[data-stored-scan="0"]').getByRole('button', { name: 'Run' }).click();
  else await panel.getByRole('button', { name: /^Run scan/ }).click();
  await page.waitForFunction((a) => {
    const r = document.querySelector<HTMLElement>('[data-scan-seq]');
    const chart = document.querySelector<HTMLElement>('[data-chart="scan-curves"]');
    const seq = Number(r?.dataset.scanSeq);
    return seq > a && chart?.dataset.seq === String(seq) && document.querySelector('[data-scan-workers]') ? seq : false;
  }, before, { timeout: 120_000, polling: 50 });
  const [download] = await Promise.all([page.waitForEvent('download'), panel.getByRole('button', { name: 'Export CSV' }).click()]);
  const csv = readFileSync((await download.path())!, 'utf8');
  const traces = await page.$eval('[data-chart="scan-curves"]', (el) => JSON.stringify((el as unknown as { data: unknown[] }).data.map((t) => {
    const { x, y, name, text } = t as { x: unknown; y: unknown; name: unknown; text: unknown };
    return { x, y, name, text };
  })));
  const warnings = await panel.locator('.scan-result .warnings li').allTextContents();
  // a scan without refused points shows no such line (textContent would wait for one until its timeout)
  const refusedLine = panel.locator('.scan-result .refused');
  const refused = (await refusedLine.count()) ? ((await refusedLine.textContent()) ?? '') : '';
  const workers = Number(await page.locator('[data-scan-workers]').getAttribute('data-scan-workers'));
  return { csv, traces, warnings, workers, refused };
}

/** The three scans in a window of `n` cores. */
async function scansWith(n: number): Promise<{ app: App; seen: ScanSeen[] }> {
  const app = await openApp({ initScript: cores(n) });
  opened.push(app);
  const { page } = app;
  await openSample(app, 'bench-b-idealised-axis.spinyard');
  await page.keyboard.press('Alt+s');
  await page.waitForSelector('[data-panel="scan"]:not([hidden])');
  const seen: ScanSeen[] = [];
  seen.push(await scanOf(app, { param: 'M2.axis.theta', from: '12 deg', to: '180 deg', points: '11' }));
  await openSample(app, 'bench-c-roll-calibration.spinyard');
  await page.waitForSelector('[data-panel="scan"] [data-stored-scan="0"]');
  seen.push(await scanOf(app, 'stored'));
  seen.push(await scanOf(app, { param: 'D1.efficiency', from: '0.5', to: '1.5', points: '9' }));
  return { app, seen };
}

describe('a scan on a pool of workers in Chromium', () => {
  let one: ScanSeen[];
  let two: ScanSeen[];
  let oneApp: App;
  let twoApp: App;

  it('gives the same CSV, chart and warnings on one worker and on two', async () => {
    const a = await scansWith(2);
    one = a.seen;
    oneApp = a.app;
    const b = await scansWith(3);
    two = b.seen;
    twoApp = b.app;
    expect(one.map((s) => s.workers)).toEqual([1, 1, 1]);
    expect(two.map((s) => s.workers)).toEqual([2, 2, 2]);
    for (let k = 0; k < one.length; k++) {
      expect(two[k].csv).toBe(one[k].csv);
      expect(two[k].traces).toBe(one[k].traces);
      expect(two[k].warnings).toEqual(one[k].warnings);
      expect(two[k].refused).toBe(one[k].refused);
    }
    // what was compared is not empty: bench B's points warn, a warning each; bench C's roll scan has 37 rows;
    // the efficiency above 1 is refused
    expect(one[0].warnings.length).toBeGreaterThan(5);
    expect(one[0].csv.trim().split(/\r\n/)).toHaveLength(12);
    expect(one[1].csv.trim().split(/\r\n/)).toHaveLength(38);
    expect(one[2].refused).toMatch(/4 of 9 points not evaluated/);
    expect(one.every((s) => !/NaN/.test(s.csv + s.traces))).toBe(true);
    await twoApp.page.locator('[data-scan-workers]').evaluate((el) => el.scrollIntoView({ block: 'center' }));
    await twoApp.page.screenshot({ path: screenshotPath('e2e-scan-pool-two-workers') });
    expect(await twoApp.page.locator('[data-scan-workers]').textContent()).toMatch(/9 points in .* on 2 workers/);
  }, 600_000);

  it('shows the progress of both workers and stops both at Cancel', async () => {
    const { page } = twoApp;
    const panel = page.locator('[data-panel="scan"]');
    await panel.locator('input[name="scan-points-0"]').fill('200000');
    await panel.getByRole('button', { name: /^Run scan/ }).click();
    // each worker posts its block's fraction; the bar is their sum over the 200000 points
    await page.waitForFunction(() => Number(document.querySelector<HTMLProgressElement>('[data-panel="scan"] progress')?.value) > 0, undefined, { timeout: 30_000 });
    const t0 = Date.now();
    await panel.getByRole('button', { name: 'Cancel' }).click();
    await page.waitForSelector('[data-scan-cancelled]', { timeout: 10_000 });
    console.log(`a 200000-point scan on two workers stopped ${Date.now() - t0} ms after Cancel`);
    expect(await page.locator('[data-panel="scan"] progress').count()).toBe(0);
    // the workers are free again: the efficiency scan runs on both and gives what it gave before
    await panel.locator('input[name="scan-points-0"]').fill('9');
    const again = await scanOf(twoApp, 'again');
    expect(again.workers).toBe(2);
    expect(again.csv).toBe(one[2].csv);
    expect(twoApp.errors).toEqual([]);
  }, 120_000);

  it('gives bench C\'s tolerance budget of 1000 draws, shared over two workers, as one worker gives it', async () => {
    const tables: string[] = [];
    for (const [app, workers] of [[oneApp, 1], [twoApp, 2]] as const) {
      const panel = await runBudgetPanel(app.page, '[data-panel="scan"] h2', 5);
      await expect.poll(() => panel.locator('[data-budget-workers]').getAttribute('data-budget-workers')).toBe(String(workers));
      // every figure of the two tables (the detectors', the ranked effects')
      tables.push((await panel.locator('table.budget-detectors, table.budget-ranking').allTextContents()).join('\n'));
    }
    expect(tables[0]).toMatch(/8\.397e8/);
    expect(tables[0]).not.toMatch(/NaN/);
    expect(tables[1]).toBe(tables[0]);
    expect(await twoApp.page.locator('[data-budget-workers]').textContent()).toMatch(/1000 draws \(seed 1\) in .* on 2 workers/);
    expect(twoApp.errors).toEqual([]);
  }, 120_000);
});
