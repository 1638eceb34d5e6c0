// The planning panels in Chromium against the built app: bench C's kept scan run in the worker (D1 at 90° is
// ½·cos²(45°) = 0.25 of the flux), a long scan cancelled, a new scan kept in the document and undone, refused
// points as gaps with their reasons, the CSV export, and the tolerance budget (D1's first-order σ). Screenshots
// of both panels at 1280×720 in the light and the dark theme go to test-results/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { openApp, foreignRequests, runBudgetPanel, screenshotPath, waitForFreshResults, type App } from './harness.ts';

let app: App;
const SAMPLE = 'bench-c-roll-calibration.spinyard';

beforeAll(async () => {
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

interface Trace { name?: string; x: number[]; y: (number | null)[]; text?: string[] }

/** The traces plotly drew in a chart (the div keeps them as `data`). */
async function traces(chart: string): Promise<Trace[]> {
  return app.page.$eval(`[data-chart="${chart}"]`, (el) => JSON.parse(JSON.stringify((el as unknown as { data: unknown[] }).data)) as Trace[]);
}

/** Waits until the scan panel shows a finished scan newer than `after` and its chart drew it; returns its number. */
async function scanDone(after: number): Promise<number> {
  const h = await app.page.waitForFunction((a) => {
    const r = document.querySelector<HTMLElement>('[data-scan-seq]');
    const chart = document.querySelector<HTMLElement>('[data-chart="scan-curves"]');
    const seq = Number(r?.dataset.scanSeq);
    return seq > a && chart?.dataset.seq === String(seq) ? seq : false;
  }, after, { timeout: 60_000, polling: 50 });
  return (await h.jsonValue()) as number;
}

describe('the planning panels in Chromium', () => {
  it('opens bench C and the scan panel from its shortcut, runs the kept scan: D1 is 0.25 of the flux at 90°', async () => {
    const { page } = app;
    const before = await waitForFreshResults(page);
    await page.locator('[data-menu-button="Samples"]').click();
    await page.locator(`[data-command="samples.open.${SAMPLE}"]`).click();
    await waitForFreshResults(page, before);
    // the panel takes no space until it is opened
    expect(await page.locator('[data-panel="scan"]').count()).toBe(0);
    await page.locator('[data-menu-button="View"]').click();
    await expect.poll(() => page.locator('[data-command="view.scanPanel"]').textContent()).toMatch(/Scan Panel.*Alt\+S/);
    await page.keyboard.press('Escape');
    await page.keyboard.press('Alt+s');
    await page.waitForSelector('[data-panel="scan"]:not([hidden])');
    await expect.poll(() => page.evaluate(() => document.activeElement?.textContent)).toBe('Scan');

    const stored = page.locator('[data-stored-scan="0"]');
    await expect.poll(() => stored.textContent()).toMatch(/analyser roll, 0 to 180 deg.*M2\.axis\.roll 0 deg → 180 deg, 37 points/);
    const t0 = Date.now();
    await stored.getByRole('button', { name: 'Run' }).click();
    const seq = await scanDone(0);
    const wall = Date.now() - t0;
    const ms = Number(await page.locator('[data-scan-ms]').getAttribute('data-scan-ms'));
    console.log(`bench C's kept scan (37 points): ${ms} ms in the worker, ${wall} ms from the click to the drawn chart`);

    const ts = await traces('scan-curves');
    expect(ts.map((t) => t.name)).toEqual(['D1', 'D2', 'D3']);
    const d1 = ts[0];
    expect(d1.x).toHaveLength(37);
    const at90 = d1.x.indexOf(90);
    expect(at90).toBe(18);
    // the analyser at 90° to the polariser passes ½·cos²(45°) of the oven's flux (spin-1/2, cos²(θ/2) of the
    // polarised half: Sakurai & Napolitano, Modern Quantum Mechanics, §1.1)
    expect(d1.y[at90]).toBeCloseTo(0.5 * Math.cos(Math.PI / 4) ** 2, 12);
    expect(d1.y[at90]).toBeCloseTo(0.25, 12);
    // the set-point (30 deg) is marked
    await expect.poll(() => page.locator('[data-chart="scan-curves"] .annotation-text').first().textContent()).toMatch(/set-point 30 deg/);

    await page.setViewportSize({ width: 1280, height: 720 });
    await page.waitForTimeout(300);
    await page.screenshot({ path: screenshotPath('e2e-planning-scan-open-light') });
    await page.locator('[data-chart="scan-curves"]').evaluate((el) => el.scrollIntoView({ block: 'end' }));
    await page.waitForTimeout(300);
    await page.screenshot({ path: screenshotPath('e2e-planning-scan-light') });
    expect(await page.evaluate(() => document.scrollingElement!.scrollTop)).toBe(0);
    await page.keyboard.press('Control+Shift+D');
    await page.waitForFunction(() => document.documentElement.dataset.theme === 'dark');
    await page.waitForFunction((s) => document.querySelector<HTMLElement>('[data-chart="scan-curves"]')?.dataset.seq === String(s), seq);
    await page.waitForTimeout(300);
    await page.screenshot({ path: screenshotPath('e2e-planning-scan-dark') });
    await page.keyboard.press('Control+Shift+D');
    await page.setViewportSize({ width: 1440, height: 1400 });
  }, 120_000);

  it('exports the scan as CSV through the host\'s save path', async () => {
    const { page } = app;
    const [csv] = await Promise.all([page.waitForEvent('download'), page.locator('[data-panel="scan"]').getByRole('button', { name: 'Export CSV' }).click()]);
    expect(csv.suggestedFilename()).toMatch(/-scan\.csv$/);
    const text = readFileSync((await csv.path())!, 'utf8');
    const rows = text.trim().split(/\r\n/);
    expect(rows).toHaveLength(38);
    const head = rows[0].split(',');
    expect(head[0]).toBe('M2.axis.roll [deg]');
    const row90 = rows.find((r) => r.startsWith('90,'))!.split(',');
    expect(Number(row90[head.indexOf('D1 yield')])).toBeCloseTo(0.25, 12);
  });

  it('cancels a long scan and keeps the chart of the last one that finished', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="scan"]');
    const points = panel.locator('input[name="scan-points-0"]');
    await points.fill('200000');
    await panel.getByRole('button', { name: /^Run scan/ }).click();
    await page.waitForSelector('[data-panel="scan"] progress');
    await page.waitForFunction(() => Number(document.querySelector<HTMLProgressElement>('[data-panel="scan"] progress')?.value) > 0, undefined, { timeout: 30_000 });
    const t0 = Date.now();
    await panel.getByRole('button', { name: 'Cancel' }).click();
    await page.waitForSelector('[data-scan-cancelled]', { timeout: 10_000 });
    console.log(`a 200000-point scan stopped ${Date.now() - t0} ms after Cancel`);
    expect(await page.locator('[data-panel="scan"] progress').count()).toBe(0);
    expect((await traces('scan-curves'))[0].x).toHaveLength(37);
    await points.fill('37');
  }, 60_000);

  it('keeps a new scan in the document as an undoable edit', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="scan"]');
    await panel.locator('select[name="scan-param-0"]').selectOption('M3.axis.roll');
    const from = panel.locator('input[name="scan-from-0"]');
    await from.fill('-20 deg');
    await from.press('Enter');
    const to = panel.locator('input[name="scan-to-0"]');
    await to.fill('(pi/9) rad');
    await to.press('Enter');
    await panel.locator('input[name="scan-points-0"]').fill('9');
    await panel.locator('input[name="scan-title"]').fill('reference roll');
    await panel.getByRole('button', { name: 'Keep in document' }).click();
    await expect.poll(() => panel.locator('[data-stored-scan]').count()).toBe(2);
    await expect.poll(() => panel.locator('[data-stored-scan="1"]').textContent()).toMatch(/reference roll.*M3\.axis\.roll -20 deg → \(pi\/9\) rad, 9 points/);
    await expect.poll(() => page.locator('.doc-file').textContent()).toMatch(/unsaved/);
    // the kept scan runs from the document (the reader's SI values): -20° to 20°
    await panel.locator('[data-stored-scan="1"]').getByRole('button', { name: 'Run' }).click();
    await scanDone(0);
    await expect.poll(async () => (await traces('scan-curves'))[0].x).toEqual([-20, -15, -10, -5, 0, 5, 10, 15, 20]);
    await page.locator('[data-menu-button="Edit"]').click();
    await expect.poll(() => page.locator('[data-command="edit.undo"]').textContent()).toMatch(/Undo keep scan reference roll/);
    await page.keyboard.press('Escape');
    await panel.getByRole('button', { name: /^Run scan/ }).focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => panel.locator('[data-stored-scan]').count()).toBe(1);
  }, 60_000);

  it('shows the points the reader refuses as gaps with the reason on hover', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="scan"]');
    await panel.locator('select[name="scan-param-0"]').selectOption('D1.efficiency');
    const from = panel.locator('input[name="scan-from-0"]');
    await from.fill('0.5');
    await from.press('Enter');
    const to = panel.locator('input[name="scan-to-0"]');
    await to.fill('1.5');
    await to.press('Enter');
    await panel.locator('input[name="scan-points-0"]').fill('5');
    const before = Number(await page.locator('[data-scan-seq]').getAttribute('data-scan-seq'));
    await panel.getByRole('button', { name: /^Run scan/ }).click();
    await scanDone(before);
    const ts = await traces('scan-curves');
    expect(ts[0].x).toEqual([0.5, 0.75, 1, 1.25, 1.5]);
    expect(ts[0].y.slice(3)).toEqual([null, null]);
    expect(ts[0].y.slice(0, 3).every((v) => typeof v === 'number' && v > 0)).toBe(true);
    const refused = ts.find((t) => t.name === 'refused')!;
    expect(refused.x).toEqual([1.25, 1.5]);
    for (const reason of refused.text!) expect(reason).toMatch(/D1\.efficiency/);
    await expect.poll(() => panel.locator('.refused summary').textContent()).toMatch(/2 of 5 points not evaluated/);
    expect(await panel.locator('.scan-result').textContent()).not.toMatch(/NaN/);
  }, 60_000);

  it('runs the tolerance budget in the worker: D1\'s first-order σ is 4.34e7 /s', async () => {
    const { page } = app;
    const panel = await runBudgetPanel(page, '[data-panel="scan"] h2', 5);
    const sigma = Number(await panel.locator('tr[data-detector="D1"][data-linear-sigma]').getAttribute('data-linear-sigma'));
    // by hand: flux ±1e8 /s (1σ) moves S = 8.397e8 /s by 5 %, the efficiency ±0.02 uniform by 1.08e7 /s,
    // the two rolls by 1.13e6 /s each: √(4.199² + 1.077² + 2·0.113²) × 1e7 = 4.34e7 /s
    expect(sigma / 4.34e7).toBeGreaterThan(0.99);
    expect(sigma / 4.34e7).toBeLessThan(1.01);
    await expect.poll(() => panel.locator('tr[data-detector="D1"][data-linear-sigma] td').nth(2).textContent()).toMatch(/^4\.34e7 \(5\.2 %\)$/);
    expect(await panel.locator('.budget-ranking tbody tr').first().getAttribute('data-tolerance')).toBe('oven.flux');
    expect(await panel.textContent()).not.toMatch(/NaN/);

    await page.setViewportSize({ width: 1280, height: 720 });
    await panel.locator('h2').evaluate((el) => el.scrollIntoView({ block: 'start' }));
    await page.waitForTimeout(200);
    await page.screenshot({ path: screenshotPath('e2e-planning-budget-light') });
    expect(await page.evaluate(() => document.scrollingElement!.scrollTop)).toBe(0);
    await page.keyboard.press('Control+Shift+D');
    await page.waitForFunction(() => document.documentElement.dataset.theme === 'dark');
    await page.screenshot({ path: screenshotPath('e2e-planning-budget-dark') });
    await page.keyboard.press('Control+Shift+D');
    await page.setViewportSize({ width: 1440, height: 1400 });
  }, 120_000);

  it('edits the tolerances as undoable edits, refusing a half-width in the wrong unit', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="budget"]');
    const half = panel.locator('input[name="tolerance-1-half"]');
    await half.fill('2 mm');
    await half.press('Enter');
    await expect.poll(() => panel.locator('[role="alert"]').first().textContent()).toMatch(/angle/);
    await half.fill('1 deg');
    await half.press('Enter');
    await expect.poll(() => panel.locator('[role="alert"]').count()).toBe(0);
    expect(await half.inputValue()).toBe('1 deg');
    await panel.getByRole('button', { name: 'Remove the tolerance of D1.efficiency' }).click();
    await expect.poll(() => panel.locator('.tolerances tbody tr[data-tolerance]').count()).toBe(4);
    await panel.getByRole('button', { name: 'Run budget' }).focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => panel.locator('.tolerances tbody tr[data-tolerance]').count()).toBe(5);
    await page.keyboard.press('Control+z');
    await expect.poll(() => panel.locator('input[name="tolerance-1-half"]').inputValue()).toBe('0.5 deg');
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
  }, 60_000);

  it('starts the panels afresh on another document: the scan form offers that line\'s set-points', async () => {
    const { page } = app;
    const before = await waitForFreshResults(page);
    await page.locator('[data-menu-button="Samples"]').click();
    await page.locator('[data-command="samples.open.bench-g-silver-split.spinyard"]').click();
    // the edits above left bench C unsaved: the question comes first
    const dontSave = page.getByRole('button', { name: "Don't Save" });
    if (await dontSave.count()) await dontSave.click();
    await waitForFreshResults(page, before);
    const scan = page.locator('[data-panel="scan"]');
    await expect.poll(() => scan.locator('select[name="scan-param-0"] option').allTextContents()).toContainEqual(expect.stringMatching(/^M1\.gradient/));
    const options = await scan.locator('select[name="scan-param-0"] option').allTextContents();
    expect(options.some((o) => o.startsWith('M2.axis.roll'))).toBe(false);
    // the form itself starts from this line: its chosen set-point is one of bench G's, not bench C's M2.axis.roll
    const chosen = await scan.locator('select[name="scan-param-0"]').inputValue();
    expect(chosen).not.toBe('M2.axis.roll');
    expect(options.some((o) => o.startsWith(chosen))).toBe(true);
    expect(app.errors).toEqual([]);
  }, 60_000);
});
