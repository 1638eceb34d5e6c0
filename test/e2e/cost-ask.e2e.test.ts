// Asking before an expensive run, in Chromium against the built app. The line is the engine's own cost fixture
// (test/fixtures/cost-lines.ts): bench J with a field twist behind a sort, whose estimate is minutes, above the ask limit.
// Opening it asks "Run this line?" with the estimate and the twist named; "Don't run" keeps the message in the results
// pane instead of results; "Run anyway" runs it with the usual progress and Cancel. A scan of it from the panel asks
// too, "Don't run" keeps the message in the panel. Screenshots of both dialogs (light and dark) and of the results
// pane go to test-results/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { openApp, foreignRequests, runMenu, screenshotPath, RESULTS_DIR, type App } from './harness.ts';
import { twistText } from '../fixtures/cost-lines.ts';

let app: App;
const file = join(RESULTS_DIR, 'e2e-cost-twist.spinyard');

beforeAll(async () => {
  app = await openApp();
  writeFileSync(file, twistText());
}, 600_000);

afterAll(async () => {
  await app?.close();
});

/** Opens the twist line through File → Open (the same file again re-runs it: a document opened anew). */
async function openTwist(): Promise<void> {
  const [chooser] = await Promise.all([app.page.waitForEvent('filechooser'), runMenu(app.page, 'File', 'file.open')]);
  await chooser.setFiles(file);
}

const SENTENCE = /would take about \d+(\.\d+)? (s|min|h) and [\d.]+ (kB|MB|GB) of memory because of elements\[\d+\] \(T1\): .*speed by speed/;

describe('asking before an expensive run', () => {
  it('asks before running the edited line; "Don\'t run" keeps the message in the results pane instead of results', async () => {
    const { page } = app;
    await openTwist();
    const dialog = page.getByRole('alertdialog');
    await dialog.waitFor({ timeout: 30_000 });
    expect(await dialog.locator('h2').textContent()).toBe('Run this line?');
    const sentence = (await dialog.locator('[data-cost-sentence]').textContent()) ?? '';
    expect(sentence).toMatch(new RegExp(`^This run ${SENTENCE.source}`));
    expect(sentence).not.toMatch(/NaN|undefined/);
    expect(await dialog.getByRole('button').allTextContents()).toEqual(['Run anyway', "Don't run"]);
    await page.setViewportSize({ width: 1280, height: 720 });
    await page.waitForTimeout(200);
    await page.screenshot({ path: screenshotPath('e2e-cost-dialog-run-light') });

    await dialog.getByRole('button', { name: "Don't run" }).click();
    await dialog.waitFor({ state: 'detached' });
    const notRun = page.locator('section.results [data-not-run]');
    await expect.poll(() => notRun.textContent()).toMatch(new RegExp(`^Not run: This run ${SENTENCE.source}`));
    // the message instead of results: no table of another line's numbers beside it
    expect(await page.locator('section.results table.ports').count()).toBe(0);
    expect(await page.locator('.doc-title .doc-name').textContent()).toMatch(/field twist/);
    await notRun.scrollIntoViewIfNeeded();
    await page.screenshot({ path: screenshotPath('e2e-cost-not-run-light') });
  }, 120_000);

  it('"Run anyway" runs it with the usual progress and Cancel', async () => {
    const { page } = app;
    await page.locator('section.results').focus();
    await page.keyboard.press('Control+Shift+D');
    await page.waitForFunction(() => document.documentElement.dataset.theme === 'dark');
    await openTwist();
    const dialog = page.getByRole('alertdialog');
    await dialog.waitFor({ timeout: 30_000 });
    await page.waitForTimeout(200);
    await page.screenshot({ path: screenshotPath('e2e-cost-dialog-run-dark') });
    await dialog.getByRole('button', { name: 'Run anyway' }).click();
    await dialog.waitFor({ state: 'detached' });
    // the run goes: the message leaves the pane, the progress bar and Cancel show once the run is slow
    expect(await page.locator('section.results [data-not-run]').count()).toBe(0);
    const progress = page.locator('section.results progress');
    await progress.waitFor({ timeout: 30_000 });
    await expect.poll(() => page.locator('.statusline').textContent()).toMatch(/computing/);
    await page.waitForTimeout(2000);
    console.log(`the twist line's progress after 2 s: ${await progress.evaluate((el) => (el as HTMLProgressElement).position)}`);
    await page.screenshot({ path: screenshotPath('e2e-cost-running-dark') });
    await page.locator('section.results').getByRole('button', { name: 'Cancel' }).click();
    await expect.poll(() => page.locator('section.results .run-note').textContent()).toMatch(/cancelled/);
    expect(await progress.count()).toBe(0);
    await page.keyboard.press('Control+Shift+D');
    await page.waitForFunction(() => document.documentElement.dataset.theme === 'light');
  }, 120_000);

  it('asks before a scan from the panel: "Don\'t run" keeps the message there, "Run anyway" runs it with progress and Cancel', async () => {
    const { page } = app;
    await page.locator('section.results').focus();
    await page.keyboard.press('Alt+s');
    const panel = page.locator('[data-panel="scan"]');
    await panel.waitFor();
    await panel.locator('select[name="scan-param-0"]').selectOption('D1.efficiency');
    for (const [name, v] of [['scan-from-0', '0.5'], ['scan-to-0', '0.9']]) {
      const input = panel.locator(`input[name="${name}"]`);
      await input.fill(v);
      await input.press('Enter');
    }
    await panel.locator('input[name="scan-points-0"]').fill('5');
    await panel.getByRole('button', { name: /^Run scan/ }).click();
    const dialog = page.getByRole('alertdialog');
    await dialog.waitFor({ timeout: 30_000 });
    expect(await dialog.locator('h2').textContent()).toBe('Run this scan?');
    expect(await dialog.locator('[data-cost-sentence]').textContent()).toMatch(new RegExp(`^Each point of this scan ${SENTENCE.source}`));
    await page.waitForTimeout(200);
    await page.screenshot({ path: screenshotPath('e2e-cost-dialog-scan-light') });
    await dialog.getByRole('button', { name: "Don't run" }).click();
    await dialog.waitFor({ state: 'detached' });
    await expect.poll(() => panel.locator('.run-error').textContent()).toMatch(/^The scan did not run: elements\[\d+\] \(T1\): this run would take about/);
    expect(await panel.locator('[data-scan-seq]').count()).toBe(0);

    await panel.getByRole('button', { name: /^Run scan/ }).click();
    await dialog.waitFor({ timeout: 30_000 });
    await dialog.getByRole('button', { name: 'Run anyway' }).click();
    await dialog.waitFor({ state: 'detached' });
    await panel.locator('progress').waitFor({ timeout: 30_000 });
    expect(await panel.locator('.run-error').count()).toBe(0);
    await page.screenshot({ path: screenshotPath('e2e-cost-scan-running-light') });
    await panel.getByRole('button', { name: 'Cancel' }).click();
    await page.waitForSelector('[data-scan-cancelled]', { timeout: 10_000 });
    expect(await panel.locator('progress').count()).toBe(0);
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
    await page.setViewportSize({ width: 1440, height: 1400 });
  }, 120_000);
});
