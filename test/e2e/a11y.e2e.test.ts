// Accessibility scan of the renderer (axe-core through playwright): no serious or critical violation,
// in the light and the dark theme, with an element selected in the inspector.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AxeBuilder } from '@axe-core/playwright';
import { openApp, foreignRequests, screenshotPath, waitForFreshResults, type App } from './harness.ts';

let app: App;

beforeAll(async () => {
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

async function scan(name: string) {
  const r = await new AxeBuilder({ page: app.page }).analyze();
  const bad = r.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  const report = bad.map((v) => `${v.id} (${v.impact}): ${v.help}\n  ${v.nodes.slice(0, 5).map((n) => n.target.join(' ')).join('\n  ')}`);
  await app.page.screenshot({ path: screenshotPath(`a11y-${name}`), fullPage: true });
  expect(report).toEqual([]);
}

describe('accessibility', () => {
  it('has no serious or critical axe violations with the oven selected', async () => {
    await waitForFreshResults(app.page);
    await scan('oven');
  });

  it('has none with a magnet in the inspector, in the dark theme', async () => {
    await app.page.locator('.tree [data-id="M2"]').first().click();
    await app.page.locator('.theme-toggle').click();
    await expect.poll(() => app.page.evaluate(() => document.documentElement.dataset.theme)).toBe('dark');
    await scan('magnet-dark');
  });

  it('stayed on 127.0.0.1', () => {
    expect(foreignRequests(app)).toEqual([]);
  });
});
