// The renderer in Chromium against the built app on 127.0.0.1: a sample, a roll edit whose yields must be
// the engine's (computed here in Node on the same edited document), undo, an invalid entry, save/reopen.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { openApp, foreignRequests, screenshotPath, tableYields, waitForFreshResults, ROOT, SAMPLES_DIR, type App, runMenu as menuCommand, selectElement as selectInTree } from './harness.ts';
import { documentText, readDocument, runEngine, type BeamlineDoc } from '../../src/app/core-adapter.ts';
import { newDocument } from '../../src/app/default-doc.ts';

let app: App;

beforeAll(async () => {
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

/** The engine's yields for a document, leaf by leaf, as the ports table lists them. */
function engineYields(doc: BeamlineDoc): { path: string; target: string; yield: number }[] {
  const r = readDocument(documentText(doc));
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return runEngine(r.line).leaves.map((l) => ({ path: l.path.join(' → ') || '(oven)', target: l.target, yield: l.yield }));
}

function expectYields(shown: { path: string; target: string; yield: number }[], want: { path: string; target: string; yield: number }[]) {
  expect(shown.map((r) => [r.path, r.target])).toEqual(want.map((r) => [r.path, r.target]));
  shown.forEach((r, i) => expect(r.yield).toBeCloseTo(want[i].yield, 12));
}

/** The first sample with a magnet whose axis is written as a roll. */
function sampleWithRoll(): { name: string; doc: BeamlineDoc; index: number } {
  const dir = SAMPLES_DIR;
  const names = readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort();
  if (names.length === 0) throw new Error('no samples/*.spinyard: the sample test needs at least one sample with a rolled magnet');
  for (const name of names) {
    const r = readDocument(readFileSync(join(dir, name), 'utf8'));
    if (!r.ok) continue;
    const index = r.doc.elements.findIndex((e) => e.kind === 'magnet' && 'roll' in (e as { axis: object }).axis);
    if (index >= 0) return { name, doc: r.doc, index };
  }
  throw new Error(`none of the samples (${names.join(', ')}) has a magnet with a roll axis`);
}

/** Opens a menu of the menu bar and clicks one of its commands, as a user would. */
const runMenu = (menu: string, command: string) => menuCommand(app.page, menu, command);

const selectElement = (id: string) => selectInTree(app.page, id);

describe('the renderer in Chromium', () => {
  it('opens a sample, shows the engine yields for a changed roll angle, and undo restores them', async () => {
    const { page } = app;
    const { name, doc, index } = sampleWithRoll();
    const before = await waitForFreshResults(page);
    await runMenu('Samples', `samples.open.${name}`);
    const opened = await waitForFreshResults(page, before);
    expectYields(await tableYields(page), engineYields(doc));

    const id = doc.elements[index].id;
    const oldRoll = String((doc.elements[index] as { axis: { roll: string } }).axis.roll);
    const newRoll = oldRoll.trim() === '35 deg' ? '50 deg' : '35 deg';
    await selectElement(id);
    const field = page.locator(`input[name="elements[${index}].axis.roll"]`);
    await field.fill(newRoll);
    await field.press('Enter');
    const edited = await waitForFreshResults(page, opened);
    const editedDoc = JSON.parse(JSON.stringify(doc)) as BeamlineDoc;
    (editedDoc.elements[index] as { axis: { roll: string } }).axis.roll = newRoll;
    const want = engineYields(editedDoc);
    const shown = await tableYields(page);
    expectYields(shown, want);
    expect(shown.map((r) => r.yield)).not.toEqual(engineYields(doc).map((r) => r.yield));
    await page.screenshot({ path: screenshotPath('e2e-sample-roll-edited'), fullPage: true });

    await page.locator('.tree [data-id="oven"]').click(); // leave the text field: Ctrl+Z then acts on the document
    await page.keyboard.press('Control+z');
    await waitForFreshResults(page, edited);
    expectYields(await tableYields(page), engineYields(doc));
    await expect.poll(() => field.count()).toBe(0); // the oven is selected now
    await selectElement(id);
    expect(await field.inputValue()).toBe(oldRoll);
    await page.screenshot({ path: screenshotPath('e2e-sample-undo'), fullPage: true });
  });

  it('shows an invalid quantity inline and keeps the document and the results', async () => {
    const { page } = app;
    await runMenu('File', `file.new`);
    const seq = await waitForFreshResults(page);
    const doc = newDocument();
    const want = engineYields(doc);
    expectYields(await tableYields(page), want);

    await selectElement('M2');
    const field = page.locator('input[name="elements[1].axis.roll"]');
    await field.fill('60');
    await field.press('Enter');
    const err = page.locator('.inspector .field.invalid .field-error');
    await expect.poll(() => err.textContent()).toMatch(/angle/);
    await field.fill('pi/4 rad');
    await field.press('Enter');
    await expect.poll(() => err.textContent()).toMatch(/angle/);
    await page.screenshot({ path: screenshotPath('e2e-invalid-quantity'), fullPage: true });
    await page.waitForTimeout(300);
    const r = page.locator('section.results');
    expect(await r.getAttribute('data-seq')).toBe(String(seq));
    expectYields(await tableYields(page), want);
    await page.locator('[data-menu-button="Edit"]').click();
    expect(await page.locator('[data-command="edit.undo"]').isDisabled()).toBe(true); // nothing was taken into the document
    await page.keyboard.press('Escape');
  });

  it('saves a document and reopens the download through the file input to the same document', async () => {
    const { page } = app;
    await runMenu('File', `file.new`);
    const s0 = await waitForFreshResults(page);
    await selectElement('D1');
    const gap = page.locator('input[name="elements[2].gap"]');
    await gap.fill('42 cm');
    await gap.press('Enter');
    await waitForFreshResults(page, s0);
    const edited = newDocument();
    (edited.elements[2] as { gap?: string }).gap = '42 cm';

    const [download] = await Promise.all([page.waitForEvent('download'), page.keyboard.press('Control+s')]);
    const file = join(ROOT, 'test-results', 'e2e-saved.spinyard');
    await download.saveAs(file);
    const saved = readFileSync(file, 'utf8');
    expect(download.suggestedFilename()).toMatch(/\.spinyard$/);
    expect(saved).toBe(documentText(edited));

    await runMenu('File', `file.new`);
    await expect.poll(() => page.locator('.doc-file').textContent()).not.toContain('e2e-saved');
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), (async () => {
      await runMenu('File', `file.open`);
    })()]);
    await chooser.setFiles(file);
    await expect.poll(() => page.locator('.doc-file').textContent()).toContain('e2e-saved.spinyard');
    await waitForFreshResults(page);
    await selectElement('D1');
    expect(await page.locator('input[name="elements[2].gap"]').inputValue()).toBe('42 cm');
    expectYields(await tableYields(page), engineYields(edited));

    const [again] = await Promise.all([page.waitForEvent('download'), page.keyboard.press('Control+s')]);
    const file2 = join(ROOT, 'test-results', 'e2e-saved-again.spinyard');
    await again.saveAs(file2);
    expect(readFileSync(file2, 'utf8')).toBe(saved);
    await page.screenshot({ path: screenshotPath('e2e-reopened'), fullPage: true });
  });

  it('exports the ports table as CSV and the counts chart as PNG and SVG', async () => {
    const { page } = app;
    await runMenu('File', 'file.new');
    await waitForFreshResults(page);
    const want = engineYields(newDocument());
    const [csv] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export table as CSV' }).click()]);
    const csvFile = join(ROOT, 'test-results', 'e2e-ports.csv');
    await csv.saveAs(csvFile);
    const lines = readFileSync(csvFile, 'utf8').trim().split('\r\n');
    expect(lines[0]).toBe('path,target,yield (fraction of the oven flux),signal rate (1/s),counts (in the dwell),sigma (counts),detector rate (1/s),time to 1% (s),'
      + 'captured (fraction of the sub-beam in the window),displacement x (mm),displacement z (mm),spread x (mm),spread z (mm),document,document sha256');
    expect(lines).toHaveLength(want.length + 1);
    want.forEach((w, i) => {
      const cells = lines[i + 1].split(',');
      expect(cells[0]).toBe(w.path);
      // the one number rule at full precision: 12 significant figures, round-off (below 1e-12 of the flux) as 0
      expect(Math.abs(Number(cells[2]) - (Math.abs(w.yield) < 1e-12 ? 0 : w.yield))).toBeLessThanOrEqual(5e-13 * Math.abs(w.yield));
    });
    for (const format of ['PNG', 'SVG']) {
      const [img] = await Promise.all([
        page.waitForEvent('download'),
        page.getByRole('button', { name: `Export Expected counts per leaf (±√N) as ${format}` }).click(),
      ]);
      expect(img.suggestedFilename()).toBe(`counts-per-leaf.${format.toLowerCase()}`);
      const file = join(ROOT, 'test-results', `e2e-${img.suggestedFilename()}`);
      await img.saveAs(file);
      const head = readFileSync(file).subarray(0, 8);
      if (format === 'PNG') expect([...head]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
      else expect(readFileSync(file, 'utf8')).toMatch(/^<svg[\s\S]*<\/svg>$/);
    }
    await page.screenshot({ path: screenshotPath('e2e-exports'), fullPage: true });
  });

  it('reaches every command through the palette and dark theme from the keyboard', async () => {
    const { page } = app;
    await page.locator('.tree [data-id="oven"]').click();
    await page.keyboard.press('Control+k');
    await page.getByRole('combobox', { name: 'Command' }).fill('dark theme');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.evaluate(() => document.documentElement.dataset.theme)).toBe('dark');
    await waitForFreshResults(page);
    await page.screenshot({ path: screenshotPath('e2e-dark'), fullPage: true });
    await page.keyboard.press('Control+Shift+D');
    await expect.poll(() => page.evaluate(() => document.documentElement.dataset.theme)).toBe('light');
  });

  it('runs a tabulated-speed line with the WebAssembly kernel in its worker, to the engine\'s yields', async () => {
    const { page } = app;
    // a Rb-87 line on a five-speed table: sorted by m_J, precessed in a transverse field, sorted again
    const doc = {
      format: 'spinyard.beamline', version: 1,
      title: 'Bench W check: Rb-87 on a five-speed table through a transverse-field coil',
      species: 'Rb-87',
      oven: {
        state: { kind: 'unpolarized' }, flux: '1e9 /s', to: 'M1',
        velocity: { kind: 'table', points: [['180 m/s', 0.1], ['240 m/s', 0.25], ['300 m/s', 0.3], ['360 m/s', 0.25], ['420 m/s', 0.1]] },
      },
      elements: [
        { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.5 T', group: 'mJ', ports: { 'mJ=+1/2': 'F1', 'mJ=-1/2': 'stop' } },
        { id: 'F1', kind: 'field', gap: '0 m', field: { x: '3 uT', y: '0 T', z: '0 T' }, length: '4 cm', to: 'M2' },
        { id: 'M2', kind: 'magnet', gap: '0 m', axis: { roll: '0 deg' }, field: '0.5 T', group: 'mJ', ports: { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' } },
        { id: 'D1', kind: 'detector' },
        { id: 'D2', kind: 'detector' },
      ],
    } as unknown as BeamlineDoc;
    const file = join(ROOT, 'test-results', 'e2e-table-line.spinyard');
    writeFileSync(file, documentText(doc));
    const before = Number((await page.locator('section.results').getAttribute('data-seq')) ?? 0);
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), runMenu('File', 'file.open')]);
    await chooser.setFiles(file);
    await waitForFreshResults(page, before);
    await expect.poll(() => page.locator('.statusline').textContent()).toContain('exact sum over the tabulated speeds (WebAssembly SIMD kernel)');
    expectYields(await tableYields(page), engineYields(doc));
    // its detectors have no background: signal / background is unbounded, not the largest double
    const results = (await page.locator('section.results').textContent()) ?? '';
    expect(results).toContain('∞ (no background)');
    expect(results).not.toContain('e308');
    await page.locator('[data-chart="velocity"] .main-svg').first().waitFor();
    await page.screenshot({ path: screenshotPath('e2e-table-line'), fullPage: true });
  });

  it('sent no request off 127.0.0.1 and logged no page error', async () => {
    await app.page.screenshot({ path: screenshotPath('e2e-final'), fullPage: true });
    expect(app.requests.length).toBeGreaterThan(0);
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
  });
});
