// The fit and simulated-run panels in Chromium against the built app. Bench C's demonstration data
// (samples/bench-c-roll-calibration.counts.csv, made with M2 at 31.2 deg and an oven flux of 1.93e9 /s with Poisson
// noise) are read through the panel's file input and fitted in the worker: the fitted roll lies within 3σ of 31.2°,
// the values are applied as one edit and undone. Bench G's simulated run of 20,000 atoms: each detector's sampled
// signal within 4.5σ of the engine's, and a hit map drawn for each. Screenshots at 1280×720, light and dark, go to
// test-results/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { openApp, foreignRequests, screenshotPath, waitForFreshResults, SAMPLES_DIR, type App } from './harness.ts';

let app: App;

beforeAll(async () => {
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

async function openSample(name: string) {
  const { page } = app;
  const before = await waitForFreshResults(page);
  await page.locator('[data-menu-button="Samples"]').click();
  await page.locator(`[data-command="samples.open.${name}"]`).click();
  await waitForFreshResults(page, before);
}

async function screenshots(name: string, scrollTo: string) {
  const { page } = app;
  await page.setViewportSize({ width: 1280, height: 720 });
  await page.locator(scrollTo).evaluate((el) => el.scrollIntoView({ block: 'start' }));
  await page.waitForTimeout(300);
  await page.screenshot({ path: screenshotPath(`${name}-light`) });
  await page.keyboard.press('Control+Shift+D');
  await page.waitForFunction(() => document.documentElement.dataset.theme === 'dark');
  await page.waitForTimeout(400);
  await page.screenshot({ path: screenshotPath(`${name}-dark`) });
  await page.keyboard.press('Control+Shift+D');
  await page.waitForFunction(() => document.documentElement.dataset.theme !== 'dark');
  await page.setViewportSize({ width: 1440, height: 1400 });
}

const deg = Math.PI / 180;

describe('the fit and simulated-run panels in Chromium', () => {
  it('fits M2.axis.roll and oven.flux of bench C to its data: the roll within 3σ of 31.2°', async () => {
    const { page } = app;
    await openSample('bench-c-roll-calibration.spinyard');
    expect(await page.locator('[data-panel="fit"]').count()).toBe(0);
    await page.locator('[data-menu-button="View"]').click();
    await expect.poll(() => page.locator('[data-command="view.fitPanel"]').textContent()).toMatch(/Fit Panel.*Alt\+T/);
    await page.keyboard.press('Escape');
    await page.keyboard.press('Alt+t');
    const panel = page.locator('[data-panel="fit"]');
    await page.waitForSelector('[data-panel="fit"]:not([hidden])');
    await expect.poll(() => page.evaluate(() => document.activeElement?.textContent)).toBe('Fit to measured counts');

    // bench C keeps a fit: its parameters and bounds fill the form, and the panel names the data file it reads
    await expect.poll(() => panel.locator('[data-kept-fit="0"]').textContent()).toMatch(/M2\.axis\.roll \(20 deg to 40 deg\), oven\.flux to bench-c-roll-calibration\.counts\.csv/);
    expect(await panel.locator('tr[data-fit-param]').evaluateAll((trs) => trs.map((t) => (t as HTMLElement).dataset.fitParam))).toEqual(['M2.axis.roll', 'oven.flux']);
    expect(await panel.locator('input[name="fit-lower-0"]').inputValue()).toBe('20 deg');
    expect(await panel.locator('input[name="fit-upper-0"]').inputValue()).toBe('40 deg');
    await expect.poll(() => panel.locator('[data-fit-wants]').textContent()).toMatch(/bench-c-roll-calibration\.counts\.csv/);
    expect(await panel.getByRole('button', { name: 'Run fit' }).isDisabled()).toBe(true);

    // a file the reader refuses: the message names the file, the line and the column
    await panel.locator('input[type="file"][name="fit-data"]').setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from('detector,counts,dwell [s]\nD1,12,1\nD9,4,1\n') });
    await expect.poll(() => panel.locator('[data-fit-file]').textContent()).toMatch(/bad\.csv: 2 readings/);
    await panel.getByRole('button', { name: 'Run fit' }).click();
    await expect.poll(() => panel.locator('.plan-status [role="alert"]').textContent(), { timeout: 30_000 }).toMatch(/The fit did not run: .*bad\.csv.*line 3.*D9/);

    await panel.locator('input[type="file"][name="fit-data"]').setInputFiles(join(SAMPLES_DIR, 'bench-c-roll-calibration.counts.csv'));
    await expect.poll(() => panel.locator('[data-fit-file]').textContent()).toMatch(/bench-c-roll-calibration\.counts\.csv: 30 readings/);
    expect(await panel.locator('[data-fit-wants]').count()).toBe(0);
    // a parameter taken out and put back through the picker
    await panel.getByRole('button', { name: 'Do not fit oven.flux' }).click();
    await panel.locator('select[name="fit-new-param"]').selectOption('oven.flux');
    await panel.getByRole('button', { name: 'Add', exact: true }).click();
    await panel.locator('tr[data-fit-param="oven.flux"]').waitFor();
    // a bound in the wrong unit is refused where it is typed, and the fit cannot start
    const lower = panel.locator('input[name="fit-lower-0"]');
    await lower.fill('2 mm');
    await expect.poll(() => panel.locator('tr[data-fit-param="M2.axis.roll"] [role="alert"]').textContent()).toMatch(/angle/);
    expect(await panel.getByRole('button', { name: 'Run fit' }).isDisabled()).toBe(true);
    await lower.fill('0 deg');
    await panel.locator('input[name="fit-upper-0"]').fill('90 deg');
    const t0 = Date.now();
    await panel.getByRole('button', { name: 'Run fit' }).click();
    await page.waitForSelector('[data-fit-seq]', { timeout: 90_000 });
    const ms = Number(await panel.locator('[data-fit-ms]').getAttribute('data-fit-ms'));
    console.log(`bench C's fit (2 parameters, 30 readings): ${ms} ms in the worker, ${Date.now() - t0} ms from the click to the tables`);

    const row = panel.locator('tr[data-fitted="M2.axis.roll"]');
    const value = Number(await row.getAttribute('data-value'));
    const sigma = Number(await row.getAttribute('data-sigma'));
    expect(sigma).toBeGreaterThan(0);
    expect(Math.abs(value - 31.2 * deg)).toBeLessThan(3 * sigma);
    const flux = panel.locator('tr[data-fitted="oven.flux"]');
    expect(Math.abs(Number(await flux.getAttribute('data-value')) - 1.93e9)).toBeLessThan(3 * Number(await flux.getAttribute('data-sigma')));
    await expect.poll(() => row.locator('td').nth(1).textContent()).toMatch(/^31\.(19|20)\d* deg$/);
    const pValue = Number(await panel.locator('[data-pvalue]').getAttribute('data-pvalue'));
    expect(pValue).toBeGreaterThan(0);
    expect(pValue).toBeLessThanOrEqual(1);
    await expect.poll(() => panel.locator('[data-deviance]').textContent()).toMatch(/deviance .* on 28 degrees of freedom, p = /);
    expect(await panel.locator('.fit-correlation tbody tr').count()).toBe(2);
    // the residuals: one trace per detector against M3's roll in deg (the data's set-point column)
    await page.waitForFunction(() => {
      const el = document.querySelector<HTMLElement & { data?: unknown[] }>('[data-chart="fit-residuals"]');
      return el?.dataset.seq && Array.isArray(el.data) && el.data.length === 3;
    }, undefined, { timeout: 30_000 });
    const traces = await page.$eval('[data-chart="fit-residuals"]', (el) => JSON.parse(JSON.stringify((el as unknown as { data: unknown[] }).data)) as { name: string; x: number[]; y: number[] }[]);
    expect(traces.map((t) => t.name)).toEqual(['D1', 'D2', 'D3']);
    expect(traces[0].x).toEqual([0, 20, 40, 60, 80, 100, 120, 140, 160, 180]);
    expect(traces.flatMap((t) => t.y).every((y) => Number.isFinite(y) && Math.abs(y) < 5)).toBe(true);
    expect(await panel.textContent()).not.toMatch(/NaN/);
    await screenshots('e2e-fit', '[data-panel="fit"] h2');
    await page.setViewportSize({ width: 1280, height: 720 });
    await page.waitForTimeout(200);
    await page.locator('[data-chart="fit-residuals"]').evaluate((el) => el.scrollIntoView({ block: 'end' }));
    await page.waitForTimeout(300);
    await page.screenshot({ path: screenshotPath('e2e-fit-residuals-light') });
    await page.setViewportSize({ width: 1440, height: 1400 });
  }, 180_000);

  it('applies the fitted values as one undoable edit', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="fit"]');
    const fitted = Number(await panel.locator('tr[data-fitted="M2.axis.roll"]').getAttribute('data-value'));
    await panel.getByRole('button', { name: 'Apply the fitted values' }).click();
    await expect.poll(() => page.locator('.doc-file').textContent()).toMatch(/unsaved/);
    // the fit's tables now describe another document: applying again is not offered
    await expect.poll(() => panel.getByRole('button', { name: 'Apply the fitted values' }).isDisabled()).toBe(true);
    await page.locator('[data-menu-button="Edit"]').click();
    await expect.poll(() => page.locator('[data-command="edit.undo"]').textContent()).toMatch(/Undo apply fitted M2\.axis\.roll, oven\.flux/);
    await page.keyboard.press('Escape');
    // the document's M2 roll is the fitted one to 10 digits: the inspector shows it
    await page.locator('.tree [role="treeitem"]', { hasText: 'M2' }).first().click();
    const roll = page.locator('.inspector input[name$="axis.roll"]');
    await expect.poll(() => roll.inputValue()).toBe(`${Number((fitted / deg).toPrecision(10))} deg`);
    await panel.getByRole('button', { name: 'Run fit' }).focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => roll.inputValue()).toBe('30 deg');
    await expect.poll(() => panel.getByRole('button', { name: 'Apply the fitted values' }).isDisabled()).toBe(false);
    await expect.poll(() => page.locator('.doc-file').textContent()).not.toMatch(/unsaved/);
  }, 60_000);

  it('fits bench C\'s oven state with the roll and the flux: a bare spin\'s density matrix, positive, shown with σ', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="fit"]');
    await panel.locator('input[name="fit-state"]').check();
    const before = await panel.locator('[data-fit-seq]').getAttribute('data-fit-seq');
    await panel.getByRole('button', { name: 'Run fit' }).click();
    await expect.poll(() => panel.locator('[data-fit-seq]').getAttribute('data-fit-seq'), { timeout: 90_000 }).not.toBe(before);
    const table = panel.locator('table[aria-label="Fitted density matrix"]');
    await table.waitFor();
    const cells = await table.locator('tbody td').allTextContents();
    expect(cells).toHaveLength(4);
    // the diagonal: two populations that sum to 1, each "value ± σ"
    const diag = [cells[0], cells[3]].map((c) => Number(c.split(' ± ')[0]));
    expect(diag.every((x) => x >= 0 && x <= 1)).toBe(true);
    expect(Math.abs(diag[0] + diag[1] - 1)).toBeLessThan(0.01);
    expect(cells[1]).toMatch(/ ± .*, i: /);
    expect(await panel.locator('.note').allTextContents()).toEqual(expect.arrayContaining([expect.stringMatching(/^purity .*; ⟨J⟩\/j = \(.*\); the readings determine \d of the 3 parameters of ρ$/)]));
    expect(await panel.textContent()).not.toMatch(/NaN/);
    await table.scrollIntoViewIfNeeded();
    await page.screenshot({ path: screenshotPath('e2e-fit-density-light') });
    await panel.locator('input[name="fit-state"]').uncheck();
  }, 180_000);

  it('cancels a running fit at once and keeps the tables of the last one that finished', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="fit"]');
    const seq = await panel.locator('[data-fit-seq]').getAttribute('data-fit-seq');
    await panel.locator('input[name="fit-state"]').check();
    await panel.getByRole('button', { name: 'Run fit' }).click();
    await page.waitForSelector('[data-panel="fit"] progress');
    const t0 = Date.now();
    await panel.getByRole('button', { name: 'Cancel' }).click();
    await page.waitForSelector('[data-fit-cancelled]', { timeout: 5_000 });
    console.log(`a fit stopped ${Date.now() - t0} ms after Cancel`);
    expect(await panel.locator('[data-fit-seq]').getAttribute('data-fit-seq')).toBe(seq);
    expect(await panel.locator('progress').count()).toBe(0);
    await panel.locator('input[name="fit-state"]').uncheck();
  }, 60_000);

  it('simulates 20,000 atoms through bench G: each detector within 4.5σ of the engine, a hit map drawn for each', async () => {
    const { page } = app;
    await openSample('bench-g-silver-split.spinyard');
    await page.locator('[data-menu-button="View"]').click();
    await expect.poll(() => page.locator('[data-command="view.simulatePanel"]').textContent()).toMatch(/Simulated Run Panel.*Alt\+M/);
    await page.keyboard.press('Escape');
    await page.keyboard.press('Alt+m');
    const panel = page.locator('[data-panel="simulate"]');
    await page.waitForSelector('[data-panel="simulate"]:not([hidden])');
    // bench G keeps a simulated run: its atoms and seed fill the form
    await expect.poll(() => panel.locator('[data-kept-simulation="0"]').textContent()).toMatch(/collector check, 200000 atoms.*200,000 atoms, seed 1/);
    expect(await panel.locator('input[name="simulate-atoms"]').inputValue()).toBe('200000');
    await panel.locator('input[name="simulate-atoms"]').fill('20000');
    await panel.locator('input[name="simulate-seed"]').fill('3');
    const t0 = Date.now();
    await panel.getByRole('button', { name: 'Run simulation' }).click();
    await page.waitForSelector('[data-simulate-seq]', { timeout: 60_000 });
    console.log(`bench G, 20,000 atoms: ${await panel.locator('[data-simulate-ms]').getAttribute('data-simulate-ms')} ms in the worker, ${Date.now() - t0} ms to the tables`);
    const rows = panel.locator('tr[data-detector]');
    const ids = await rows.evaluateAll((trs) => trs.map((t) => (t as HTMLElement).dataset.detector!));
    expect(ids.sort()).toEqual(['DL', 'DU']);
    for (const id of ids) {
      const r = panel.locator(`tr[data-detector="${id}"]`);
      const signal = Number(await r.getAttribute('data-signal'));
      const sigma = Number(await r.getAttribute('data-sigma'));
      const engine = Number(await r.getAttribute('data-engine'));
      expect(sigma).toBeGreaterThan(0);
      expect(engine).toBeGreaterThan(0);
      expect(Math.abs(signal - engine)).toBeLessThan(4.5 * sigma);
      await page.waitForFunction((d) => {
        const el = document.querySelector<HTMLElement & { data?: { type: string; z: number[][] }[] }>(`[data-chart="hit-map-${d}"]`);
        return el?.dataset.seq && el.data?.[0]?.type === 'heatmap' && el.querySelector('.hm, image, .heatmaplayer') !== null;
      }, id, { timeout: 30_000 });
      await page.waitForFunction((d) => document.querySelector<HTMLElement>(`[data-chart="hit-profile-${d}"]`)?.dataset.seq !== undefined, id, { timeout: 30_000 });
      const names = await page.$eval(`[data-chart="hit-profile-${id}"]`, (el) => (el as unknown as { data: { name: string }[] }).data.map((t) => t.name));
      expect(names).toEqual(['hits', 'engine profile']);
      const hits = await page.$eval(`[data-chart="hit-map-${id}"]`, (el) => ((el as unknown as { data: { z: number[][] }[] }).data[0].z.flat().reduce((a, b) => a + b, 0)));
      expect(hits).toBe(Number((await r.locator('td').nth(1).textContent())!.replace(/,/g, '')));
    }
    expect(await panel.textContent()).not.toMatch(/NaN/);
    await screenshots('e2e-simulate', '[data-panel="simulate"] h2');
    await screenshots('e2e-simulate-profiles', '[data-chart="hit-map-DU"]');
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
  }, 120_000);

  it('cancels a long simulated run and keeps the last one that finished', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="simulate"]');
    const seq = await panel.locator('[data-simulate-seq]').getAttribute('data-simulate-seq');
    await panel.locator('input[name="simulate-atoms"]').fill('5e7');
    await panel.getByRole('button', { name: 'Run simulation' }).click();
    await page.waitForSelector('[data-panel="simulate"] progress');
    await panel.getByRole('button', { name: 'Cancel' }).click();
    await page.waitForSelector('[data-simulate-cancelled]', { timeout: 5_000 });
    expect(await panel.locator('[data-simulate-seq]').getAttribute('data-simulate-seq')).toBe(seq);
    expect(await panel.locator('progress').count()).toBe(0);
  }, 60_000);

  it('keeps a simulated run in the document as an undoable edit', async () => {
    const { page } = app;
    const panel = page.locator('[data-panel="simulate"]');
    await panel.locator('input[name="simulate-atoms"]').fill('30000');
    await panel.locator('input[name="simulate-seed"]').fill('4');
    await panel.getByRole('button', { name: 'Keep in document' }).click();
    await expect.poll(() => panel.locator('[data-kept-simulation]').count()).toBe(2);
    await expect.poll(() => panel.locator('[data-kept-simulation="1"]').textContent()).toMatch(/30,000 atoms, seed 4/);
    await page.locator('[data-menu-button="Edit"]').click();
    await expect.poll(() => page.locator('[data-command="edit.undo"]').textContent()).toMatch(/Undo keep simulated run of 30000 atoms, seed 4/);
    await page.keyboard.press('Escape');
    await panel.getByRole('button', { name: 'Run simulation' }).focus();
    await page.keyboard.press('Control+z');
    await expect.poll(() => panel.locator('[data-kept-simulation]').count()).toBe(1);
    expect(app.errors).toEqual([]);
  }, 60_000);
});
