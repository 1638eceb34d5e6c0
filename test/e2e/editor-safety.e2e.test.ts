// The editor a lab can trust, in Chromium against the built app on 127.0.0.1:
//  - nothing lost: every command that replaces the document asks first (save, discard, cancel), and a
//    draft recovered after a crash stays unsaved;
//  - offline: no chart control opens a page or sends a request off 127.0.0.1;
//  - keyboard: every shortcut the menus list does what it says, dialogs keep the focus and close with
//    Escape, Escape takes back a field being edited, the charts' toolbars do not stand between the
//    results and the inspector.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { openApp, foreignRequests, screenshotPath, waitForFreshResults, ROOT, SAMPLES_DIR, type App, runMenu as menuCommand, selectElement as selectInTree } from './harness.ts';
import { documentText, readDocument, type BeamlineDoc } from '../../src/app/core-adapter.ts';
import { newDocument, NEW_DOCUMENT_TITLE } from '../../src/app/default-doc.ts';

let app: App;
/** Pages (windows, tabs, popups) the context opened besides the app's own. */
const opened: string[] = [];

// window.open is recorded (and still called) in every frame, so a call that a popup blocker or the
// route would stop is seen too.
const RECORD_WINDOW_OPEN = `
  (() => {
    const calls = [];
    Object.defineProperty(window, '__windowOpenCalls', { value: calls });
    const original = window.open;
    window.open = function (...args) { calls.push(String(args[0])); return original.apply(this, args); };
  })();
`;

beforeAll(async () => {
  app = await openApp({ initScript: RECORD_WINDOW_OPEN });
  app.context.on('page', (p) => opened.push(p.url() || '(new page)'));
  app.page.on('popup', (p) => opened.push(p.url() || '(popup)'));
}, 600_000);

afterAll(async () => {
  await app?.close();
});

// ---------------------------------------------------------------------------------------------- helpers

const runMenu = (menu: string, command: string) => menuCommand(app.page, menu, command);

const selectElement = (id: string) => selectInTree(app.page, id);

const docTitle = (page: Page) => page.locator('.doc-name').textContent();
const docFile = (page: Page) => page.locator('.doc-file').textContent();
const prompt = (page: Page) => page.getByRole('alertdialog');

/** Sets `value` in a quantity field of the inspector and commits it with Enter. */
async function commitField(name: string, value: string) {
  const f = app.page.locator(`.inspector input[name="${name}"]`);
  await f.fill(value);
  await f.press('Enter');
  await expect.poll(() => docFile(app.page)).toContain('unsaved changes');
}

/** A clean new document in the window (whatever the window held: its changes discarded). */
async function freshDocument() {
  const { page } = app;
  if (await page.getByRole('dialog').count()) await page.keyboard.press('Escape');
  await runMenu('File', 'file.new');
  if (await prompt(page).count()) await prompt(page).getByRole('button', { name: "Don't Save" }).click();
  await expect.poll(() => docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
  await expect.poll(() => docFile(page)).not.toContain('unsaved');
  await waitForFreshResults(page);
}

function sampleDoc(name: string): BeamlineDoc {
  const r = readDocument(readFileSync(join(SAMPLES_DIR, name), 'utf8'));
  if (!r.ok) throw new Error(`${name}: ${r.problems.map((p) => p.message).join('; ')}`);
  return r.doc;
}

const SAMPLE = 'bench-c-roll-calibration.spinyard';

// ------------------------------------------------------------------------------------------ nothing lost

describe('nothing lost: replacing an edited document asks first', () => {
  it('Samples → a sample: Cancel keeps the edited document, Don\'t Save opens the sample', async () => {
    const { page } = app;
    await freshDocument();
    await selectElement('D1');
    await commitField('elements[2].gap', '41 cm');
    await runMenu('Samples', `samples.open.${SAMPLE}`);
    const q = prompt(page);
    await q.waitFor();
    expect(await q.getByRole('heading').textContent()).toBe(`Save the changes to bench-a-new-line.spinyard before opening the sample ${SAMPLE}?`);
    expect(await q.getByRole('button').allTextContents()).toEqual(['Save', "Don't Save", 'Cancel']);
    // the focus is on Save, the default answer
    expect(await page.evaluate(() => document.activeElement?.textContent)).toBe('Save');
    await page.screenshot({ path: screenshotPath('safety-unsaved-prompt'), fullPage: false });
    await q.getByRole('button', { name: 'Cancel' }).click();
    await expect.poll(() => q.count()).toBe(0);
    expect(await docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
    expect(await docFile(page)).toContain('unsaved changes');
    expect(await page.locator('input[name="elements[2].gap"]').inputValue()).toBe('41 cm');

    await runMenu('Samples', `samples.open.${SAMPLE}`);
    await q.getByRole('button', { name: "Don't Save" }).click();
    await expect.poll(() => docTitle(page)).toBe(sampleDoc(SAMPLE).title);
    expect(await docFile(page)).not.toContain('unsaved');
  });

  it('File → New: Save writes the edited document first, then starts the new one', async () => {
    const { page } = app;
    await waitForFreshResults(page);
    const doc = sampleDoc(SAMPLE);
    const i = doc.elements.findIndex((e) => e.kind === 'detector');
    await selectElement(doc.elements[i].id);
    await commitField(`elements[${i}].gap`, '77 mm');
    await runMenu('File', 'file.new');
    await prompt(page).waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), prompt(page).getByRole('button', { name: 'Save', exact: true }).click()]);
    const file = join(ROOT, 'test-results', 'safety-saved-before-new.spinyard');
    await download.saveAs(file);
    const edited = JSON.parse(JSON.stringify(doc)) as BeamlineDoc;
    (edited.elements[i] as { gap?: string }).gap = '77 mm';
    expect(readFileSync(file, 'utf8')).toBe(documentText(edited));
    await expect.poll(() => docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
    expect(await docFile(page)).not.toContain('unsaved');
  });

  it('File → Open and Ctrl+O: the file picked replaces the document only after the question', async () => {
    const { page } = app;
    await waitForFreshResults(page);
    const file = join(ROOT, 'test-results', 'safety-open-me.spinyard');
    const other = { ...newDocument(), title: 'Bench S, a line to open' } as BeamlineDoc;
    writeFileSync(file, documentText(other));
    await selectElement('M2');
    await commitField('elements[1].axis.roll', '35 deg');

    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), runMenu('File', 'file.open')]);
    await chooser.setFiles(file);
    await prompt(page).waitFor();
    expect(await prompt(page).getByRole('heading').textContent()).toContain('before opening safety-open-me.spinyard?');
    await page.keyboard.press('Escape'); // Escape is Cancel
    await expect.poll(() => prompt(page).count()).toBe(0);
    expect(await docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
    expect(await page.locator('input[name="elements[1].axis.roll"]').inputValue()).toBe('35 deg');

    // the edit's run settles first, so that no late render moves the focus while the key is pressed
    await waitForFreshResults(page);
    await page.locator('.tree [data-id="M2"]').first().focus();
    await expect.poll(() => page.evaluate(() => document.activeElement?.closest('.tree') !== null)).toBe(true);
    const [again] = await Promise.all([page.waitForEvent('filechooser'), page.keyboard.press('Control+o')]);
    await again.setFiles(file);
    await prompt(page).getByRole('button', { name: "Don't Save" }).click();
    await expect.poll(() => docTitle(page)).toBe(other.title);
    expect(await docFile(page)).toContain('safety-open-me.spinyard');
  });

  it('File → Open Recent asks too', async () => {
    const { page } = app;
    await waitForFreshResults(page);
    await selectElement('D2');
    await commitField('elements[3].gap', '39 cm');
    await page.locator('[data-menu-button="File"]').click();
    const recent = page.locator('[data-command^="recent.open."]').first();
    await recent.click();
    await prompt(page).waitFor();
    await prompt(page).getByRole('button', { name: 'Cancel' }).click();
    expect(await page.locator('input[name="elements[3].gap"]').inputValue()).toBe('39 cm');
    expect(await docFile(page)).toContain('unsaved changes');
  });

  it('a file the reader refuses is reported without the question, and the edited document stays', async () => {
    const { page } = app;
    const file = join(ROOT, 'test-results', 'safety-broken.spinyard');
    writeFileSync(file, '{ "format": "spinyard.beamline", "version": 1, "oven": ');
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), runMenu('File', 'file.open')]);
    await chooser.setFiles(file);
    const problems = page.getByRole('dialog', { name: 'safety-broken.spinyard was not opened' });
    await problems.waitFor();
    expect(await prompt(page).count()).toBe(0);
    await page.keyboard.press('Escape');
    expect(await page.locator('input[name="elements[3].gap"]').inputValue()).toBe('39 cm');
    expect(await docFile(page)).toContain('unsaved changes');
  });

  it('Ctrl+N asks while the document is unsaved and not when it is clean', async () => {
    const { page } = app;
    await page.locator('.tree [data-id="D2"]').first().focus();
    await page.keyboard.press('Control+n');
    await prompt(page).waitFor();
    await prompt(page).getByRole('button', { name: "Don't Save" }).click();
    await expect.poll(() => docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
    await page.locator('.tree [data-id="oven"]').focus();
    await page.keyboard.press('Control+n'); // clean: no question
    await page.waitForTimeout(200);
    expect(await prompt(page).count()).toBe(0);
  });

  it('File → Close in a browser tab keeps the document and says how the tab closes', async () => {
    const { page } = app;
    await selectElement('D2');
    await commitField('elements[3].gap', '38 cm');
    await runMenu('File', 'file.close');
    await expect.poll(() => page.getByRole('status').filter({ hasText: 'Close this tab in the browser' }).count()).toBe(1);
    expect(page.isClosed()).toBe(false);
    expect(await page.locator('input[name="elements[3].gap"]').inputValue()).toBe('38 cm');
  });

  it('a draft recovered at start-up is marked unsaved, and replacing it asks', async () => {
    const { page } = app;
    await freshDocument();
    const draft = { ...newDocument(), title: 'Bench R, work left by a crash' } as BeamlineDoc;
    // a draft of a session that left no marker: a crashed one
    await page.evaluate(async (text) => {
      await new Promise<void>((resolve, reject) => {
        const req = indexedDB.open('spinyard', 1);
        req.onupgradeneeded = () => {
          if (!req.result.objectStoreNames.contains('drafts')) req.result.createObjectStore('drafts', { keyPath: 'key' });
        };
        req.onerror = () => reject(req.error);
        req.onsuccess = () => {
          const tx = req.result.transaction('drafts', 'readwrite');
          tx.objectStore('drafts').put({ key: 'doc-crashed-1', name: 'bench-r.spinyard', text, savedAt: Date.now() - 60_000, session: 's0-crashed' });
          tx.oncomplete = () => {
            req.result.close();
            resolve();
          };
          tx.onerror = () => reject(tx.error);
        };
      });
    }, documentText(draft));
    await page.reload();
    const dialog = page.getByRole('dialog', { name: 'Recover unsaved work?' });
    await dialog.waitFor();
    await dialog.getByRole('button', { name: 'Recover' }).click();
    await expect.poll(() => docTitle(page)).toBe(draft.title);
    expect(await docFile(page)).toContain('unsaved changes');
    expect(await page.title()).toMatch(/^• /);
    await page.locator('[data-menu-button="Edit"]').click();
    expect(await page.locator('[data-command="edit.undo"]').isDisabled()).toBe(true); // nothing to undo, still unsaved
    await page.keyboard.press('Escape');
    await page.screenshot({ path: screenshotPath('safety-recovered-unsaved'), fullPage: false });
    await runMenu('File', 'file.new');
    await prompt(page).waitFor();
    expect(await prompt(page).getByRole('heading').textContent()).toBe('Save the changes to bench-r.spinyard before starting a new document?');
    await prompt(page).getByRole('button', { name: "Don't Save" }).click();
    await expect.poll(() => docTitle(page)).toBe(NEW_DOCUMENT_TITLE);
    // the discarded draft is not offered again
    await page.reload();
    await waitForFreshResults(page);
    await page.waitForTimeout(300);
    expect(await page.getByRole('dialog', { name: 'Recover unsaved work?' }).count()).toBe(0);
  });
});

// --------------------------------------------------------------------------------------------- offline

/** What each chart's toolbar may hold: plotly's view controls (their titles), nothing that leaves the page. */
const VIEW_BUTTONS = ['Zoom', 'Pan', 'Zoom in', 'Zoom out', 'Autoscale', 'Reset axes'];

describe('offline for real: no chart control leaves the machine', () => {
  it('every toolbar button of every chart of the sample with the most charts stays on 127.0.0.1 and opens no window', async () => {
    const { page } = app;
    await freshDocument();
    const samples = JSON.parse(readFileSync(join(ROOT, 'dist-web', 'samples', 'index.json'), 'utf8')).samples as { name: string }[];
    let best = { name: '', charts: 0 };
    for (const s of samples) {
      const before = Number((await page.locator('section.results').getAttribute('data-seq')) ?? 0);
      await runMenu('Samples', `samples.open.${s.name}`);
      await waitForFreshResults(page, before);
      const charts = await page.locator('[data-chart]').count();
      if (charts > best.charts) best = { name: s.name, charts };
    }
    expect(best.charts).toBeGreaterThanOrEqual(3);
    const before = Number((await page.locator('section.results').getAttribute('data-seq')) ?? 0);
    await runMenu('Samples', `samples.open.${best.name}`);
    await waitForFreshResults(page, before);
    const charts = page.locator('[data-chart]');
    await expect.poll(() => page.locator('[data-chart] .modebar').count(), { timeout: 30_000 }).toBe(best.charts);
    const requestsBefore = app.requests.length;
    let clicked = 0;
    for (let c = 0; c < best.charts; c++) {
      const chart = charts.nth(c);
      // no link of any kind in or around the chart (plotly's logo is one)
      expect(await chart.locator('xpath=ancestor::figure').locator('a[href], [target="_blank"]').count()).toBe(0);
      const buttons = chart.locator('.modebar-btn');
      const titles = await buttons.evaluateAll((bs) => bs.map((b) => b.getAttribute('data-title') ?? b.getAttribute('aria-label') ?? ''));
      expect(titles).toEqual(VIEW_BUTTONS);
      for (let b = 0; b < titles.length; b++) {
        await chart.hover();
        await buttons.nth(b).click();
        clicked++;
      }
      const id = await chart.getAttribute('data-chart');
      const figure = chart.locator('xpath=ancestor::figure');
      for (const format of ['PNG', 'SVG']) {
        const [d] = await Promise.all([page.waitForEvent('download'), figure.getByRole('button', { name: new RegExp(`as ${format}$`) }).click()]);
        expect(d.url()).toMatch(/^(data|blob):/);
        clicked++;
      }
      if (c === 0) await page.screenshot({ path: screenshotPath(`safety-chart-toolbar-${id}`), clip: (await figure.boundingBox())! });
    }
    expect(clicked).toBe(best.charts * (VIEW_BUTTONS.length + 2));
    await page.waitForTimeout(500); // anything a click set off has had its time to ask
    const after = app.requests.slice(requestsBefore);
    expect(after.filter((u) => !/^(data|blob):|^http:\/\/127\.0\.0\.1:/.test(u))).toEqual([]);
    expect(foreignRequests(app)).toEqual([]);
    expect(opened).toEqual([]);
    expect(await page.evaluate(() => (window as unknown as { __windowOpenCalls: string[] }).__windowOpenCalls)).toEqual([]);
    expect(page.context().pages()).toHaveLength(1);
  });
});

// -------------------------------------------------------------------------------------------- keyboard

/** The keys of a shortcut as the menu shows it on Linux ("Ctrl+Shift+S", "Alt+Down"), for keyboard.press. */
function keysOf(label: string): string {
  const names: Record<string, string> = { Ctrl: 'Control', Up: 'ArrowUp', Down: 'ArrowDown', Left: 'ArrowLeft', Right: 'ArrowRight' };
  return label.split(/\+(?!$)/).map((p) => names[p] ?? (p.length === 1 ? p.toLowerCase() : p)).join('+');
}

/** Every command the menu bar lists with a shortcut: id and the shortcut as shown. */
async function listedShortcuts(page: Page): Promise<{ id: string; label: string }[]> {
  const out: { id: string; label: string }[] = [];
  for (const menu of await page.locator('[data-menu-button]').evaluateAll((bs) => bs.map((b) => b.getAttribute('data-menu-button')!))) {
    await page.locator(`[data-menu-button="${menu}"]`).click();
    out.push(...(await page.locator('[role="menu"] [data-command]').evaluateAll((items) =>
      items.filter((i) => i.querySelector('kbd')).map((i) => ({ id: i.getAttribute('data-command')!, label: i.querySelector('kbd')!.textContent! })))));
    await page.keyboard.press('Escape');
  }
  return out;
}

/** Focus on the tree (a control that is not a text field), with `id` selected. */
async function onTree(id: string) {
  await selectElement(id);
  // the selection's run settles first, so that no late render moves the focus while the key is pressed
  await waitForFreshResults(app.page);
  await app.page.locator(`.tree [data-id="${id}"]`).first().focus();
  await expect.poll(() => app.page.evaluate(() => document.activeElement?.closest('.tree') !== null)).toBe(true);
}

const inputValue = (name: string) => app.page.locator(`.inspector input[name="${name}"]`).inputValue();
const activeIn = (sel: string) => app.page.evaluate((s) => !!document.activeElement?.closest(s), sel);
const rootFontSize = () => app.page.evaluate(() => document.documentElement.style.fontSize);
const treeCount = () => app.page.locator('.tree [role="treeitem"]').count();

/** A line that keeps the engine busy for minutes: six RF flippers in a row on Cs-133 (each averages its subtree over the RF phase). */
function slowLine(): BeamlineDoc {
  const n = 6;
  const elements: Record<string, unknown>[] = [];
  for (let i = 1; i <= n; i++) {
    elements.push({ id: `RF${i}`, kind: 'rf', gap: '1 cm', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: `${3.5 + 0.1 * i} MHz`,
      axis: { roll: '90 deg' }, length: '2 cm', to: i < n ? `RF${i + 1}` : 'D1' });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '10 cm' });
  return {
    format: 'spinyard.beamline', version: 1, title: 'Bench Q, six RF flippers (a long run to cancel)', species: 'Cs-133',
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', to: 'RF1', velocity: { kind: 'supersonic', speed: '300 m/s', ratio: 10 } },
    elements,
  } as unknown as BeamlineDoc;
}

/** What each listed shortcut must do, pressed with `keys` from a clean new document. */
const EFFECTS: Record<string, (keys: string) => Promise<void>> = {
  'file.new': async (keys) => {
    const before = Number((await app.page.locator('section.results').getAttribute('data-seq')) ?? 0);
    await runMenu('Samples', `samples.open.${SAMPLE}`);
    await waitForFreshResults(app.page, before);
    await app.page.locator('.tree [data-id="oven"]').focus();
    await app.page.keyboard.press(keys);
    await expect.poll(() => docTitle(app.page)).toBe(NEW_DOCUMENT_TITLE);
  },
  'file.open': async (keys) => {
    await onTree('M1');
    const [chooser] = await Promise.all([app.page.waitForEvent('filechooser'), app.page.keyboard.press(keys)]);
    await chooser.setFiles([]);
  },
  'file.save': async (keys) => {
    await onTree('M1');
    const [d] = await Promise.all([app.page.waitForEvent('download'), app.page.keyboard.press(keys)]);
    expect(d.suggestedFilename()).toBe('bench-a-new-line.spinyard');
  },
  'file.saveAs': async (keys) => {
    await onTree('M1');
    const [d] = await Promise.all([app.page.waitForEvent('download'), app.page.keyboard.press(keys)]);
    expect(d.suggestedFilename()).toMatch(/\.spinyard$/);
  },
  'file.print': async (keys) => {
    await onTree('M1');
    const printed = app.page.waitForFunction(() => [...document.querySelectorAll('iframe[srcdoc]')].some((f) => /Bench A, new line/.test(f.getAttribute('srcdoc') ?? '')),
      undefined, { polling: 10, timeout: 10_000 });
    await app.page.keyboard.press(keys);
    await printed;
  },
  'results.exportCsv': async (keys) => {
    await onTree('M1');
    const [d] = await Promise.all([app.page.waitForEvent('download'), app.page.keyboard.press(keys)]);
    expect(d.suggestedFilename()).toBe('bench-a-new-line-ports.csv');
  },
  'edit.undo': async (keys) => {
    await selectElement('M2');
    await commitField('elements[1].axis.roll', '35 deg');
    await onTree('M2');
    await app.page.keyboard.press(keys);
    await expect.poll(() => inputValue('elements[1].axis.roll')).toBe('60 deg');
  },
  'edit.redo': async (keys) => {
    await selectElement('M2');
    await commitField('elements[1].axis.roll', '35 deg');
    await onTree('M2');
    await app.page.keyboard.press('Control+z');
    await expect.poll(() => inputValue('elements[1].axis.roll')).toBe('60 deg');
    await app.page.keyboard.press(keys);
    await expect.poll(() => inputValue('elements[1].axis.roll')).toBe('35 deg');
  },
  'edit.palette': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await app.page.getByRole('combobox', { name: 'Command' }).waitFor();
    await app.page.keyboard.press('Escape');
  },
  'results.cancel': async (keys) => {
    const file = join(ROOT, 'test-results', 'safety-slow-line.spinyard');
    writeFileSync(file, documentText(slowLine()));
    const [chooser] = await Promise.all([app.page.waitForEvent('filechooser'), runMenu('File', 'file.open')]);
    await chooser.setFiles(file);
    await app.page.getByRole('button', { name: 'Cancel', exact: true }).waitFor({ timeout: 30_000 }); // the run is slow: it shows its progress
    await app.page.locator('.tree [data-id="oven"]').focus();
    await app.page.keyboard.press(keys);
    await app.page.getByText('cancelled: the table shows the last finished run').waitFor();
    expect(await app.page.locator('.statusline').textContent()).not.toContain('computing');
  },
  'element.add': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await app.page.getByRole('dialog', { name: 'Add an element on a port' }).waitFor();
    await app.page.keyboard.press('Escape');
  },
  'element.reroute': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await app.page.getByRole('dialog', { name: 'Re-route a port' }).waitFor();
    await app.page.keyboard.press('Escape');
  },
  'element.duplicate': async (keys) => {
    const n = await treeCount();
    await onTree('D2');
    await app.page.keyboard.press(keys);
    await expect.poll(treeCount).toBe(n + 1);
  },
  'element.delete': async (keys) => {
    await onTree('D2');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('.tree [data-id="D2"]').count()).toBe(0);
  },
  'element.moveDownstream': async (keys) => {
    await onTree('D1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => inputValue('elements[2].gap')).toBe('405 mm');
  },
  'element.moveUpstream': async (keys) => {
    await onTree('D1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => inputValue('elements[2].gap')).toBe('395 mm');
  },
  'element.next': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('.inspector .insp-id').textContent()).toBe('M2');
    expect(await app.page.evaluate(() => document.activeElement?.getAttribute('data-id'))).toBe('M2');
  },
  'element.previous': async (keys) => {
    await onTree('M2');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('.inspector .insp-id').textContent()).toBe('M1');
  },
  'view.focusTree': async (keys) => {
    await selectElement('M2');
    await app.page.locator('.inspector input').first().focus();
    await app.page.keyboard.press(keys);
    expect(await app.page.evaluate(() => document.activeElement?.getAttribute('data-id'))).toBe('M2');
  },
  'view.focusInspector': async (keys) => {
    await onTree('M2');
    await app.page.keyboard.press(keys);
    expect(await activeIn('.inspector')).toBe(true);
  },
  'view.focusResults': async (keys) => {
    await onTree('M2');
    await app.page.keyboard.press(keys);
    expect(await activeIn('section.results')).toBe(true);
  },
  'view.zoomIn': async (keys) => {
    await onTree('M1');
    const before = parseFloat((await rootFontSize()) || '100%');
    await app.page.keyboard.press(keys);
    expect(await rootFontSize()).toBe(`${before + 10}%`);
  },
  'view.zoomOut': async (keys) => {
    await onTree('M1');
    const before = parseFloat((await rootFontSize()) || '100%');
    await app.page.keyboard.press(keys);
    expect(await rootFontSize()).toBe(`${before - 10}%`);
  },
  'view.zoomReset': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press('Control+-');
    expect(await rootFontSize()).not.toBe('100%');
    await app.page.keyboard.press(keys);
    expect(await rootFontSize()).toBe('100%');
  },
  'view.scanPanel': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('[data-panel="scan"]').isVisible()).toBe(true);
    // the panel takes the focus once it has drawn (an effect after it shows)
    await expect.poll(() => app.page.evaluate(() => document.activeElement?.closest('[data-panel]')?.getAttribute('data-panel'))).toBe('scan');
  },
  'view.budgetPanel': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('[data-panel="budget"]').isVisible()).toBe(true);
    // the panel takes the focus once it has drawn (an effect after it shows)
    await expect.poll(() => app.page.evaluate(() => document.activeElement?.closest('[data-panel]')?.getAttribute('data-panel'))).toBe('budget');
  },
  'view.fitPanel': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('[data-panel="fit"]').isVisible()).toBe(true);
    // the panel takes the focus once it has drawn (an effect after it shows)
    await expect.poll(() => app.page.evaluate(() => document.activeElement?.closest('[data-panel]')?.getAttribute('data-panel'))).toBe('fit');
  },
  'view.simulatePanel': async (keys) => {
    await onTree('M1');
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.locator('[data-panel="simulate"]').isVisible()).toBe(true);
    // the panel takes the focus once it has drawn (an effect after it shows)
    await expect.poll(() => app.page.evaluate(() => document.activeElement?.closest('[data-panel]')?.getAttribute('data-panel'))).toBe('simulate');
  },
  'view.toggleDark': async (keys) => {
    await onTree('M1');
    const before = await app.page.evaluate(() => document.documentElement.dataset.theme);
    await app.page.keyboard.press(keys);
    await expect.poll(() => app.page.evaluate(() => document.documentElement.dataset.theme)).not.toBe(before);
  },
};

describe('keyboard complete', () => {
  it('every shortcut the menus list does what it says in the browser host', async () => {
    const { page } = app;
    await freshDocument();
    const listed = await listedShortcuts(page);
    // the table above covers exactly what the menus list (a new shortcut needs its check here)
    expect(listed.map((l) => l.id).sort()).toEqual(Object.keys(EFFECTS).sort());
    const failures: string[] = [];
    for (const { id, label } of listed) {
      await freshDocument();
      try {
        await EFFECTS[id](keysOf(label));
      } catch (e) {
        failures.push(`${id} (${label}): ${(e as Error).message.split('\n')[0]}`);
        await page.screenshot({ path: screenshotPath(`safety-shortcut-failed-${id}`) });
      }
    }
    expect(failures).toEqual([]);
    await freshDocument();
    // Zoom and theme back to where they started
    await page.locator('.tree [data-id="oven"]').focus();
    await page.keyboard.press('Control+0');
    if ((await page.evaluate(() => document.documentElement.dataset.theme)) !== 'light') await page.keyboard.press('Control+Shift+D');
  });

  it('a dialog keeps the focus: Tab and Shift+Tab cycle inside it, Escape closes it', async () => {
    const { page } = app;
    await onTree('M1');
    await page.keyboard.press('Alt+a');
    const dialog = page.getByRole('dialog', { name: 'Add an element on a port' });
    await dialog.waitFor();
    const seen: string[] = [];
    for (let i = 0; i < 9; i++) {
      await page.keyboard.press('Tab');
      expect(await activeIn('[role="dialog"]')).toBe(true);
      seen.push(await page.evaluate(() => `${document.activeElement?.tagName} ${document.activeElement?.textContent?.slice(0, 12)}`));
    }
    expect(new Set(seen).size).toBe(4); // Output, Kind, Add, Close, and round again
    expect(seen.slice(4, 8)).toEqual(seen.slice(0, 4));
    for (let i = 0; i < 5; i++) {
      await page.keyboard.press('Shift+Tab');
      expect(await activeIn('[role="dialog"]')).toBe(true);
    }
    // a click on the page behind is kept out; the focus stays in the dialog
    await page.evaluate(() => document.querySelector<HTMLElement>('.tree [data-id="oven"]')?.focus());
    expect(await activeIn('[role="dialog"]')).toBe(true);
    await page.screenshot({ path: screenshotPath('safety-dialog-focus'), fullPage: false });
    await page.keyboard.press('Escape');
    await expect.poll(() => dialog.count()).toBe(0);

    // the same for a dialog opened from the menu
    await runMenu('Help', 'help.about');
    const about = page.getByRole('dialog', { name: 'About Spinyard' });
    await about.waitFor();
    for (let i = 0; i < 3; i++) {
      await page.keyboard.press('Tab');
      expect(await activeIn('[role="dialog"]')).toBe(true);
    }
    await page.keyboard.press('Escape');
    await expect.poll(() => about.count()).toBe(0);
    // the palette keeps it too
    await onTree('M1');
    await page.keyboard.press('Control+k');
    await page.keyboard.press('Tab');
    expect(await page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Command');
    await page.keyboard.press('Escape');
  });

  it('Escape in an inspector field takes back the typing and commits nothing', async () => {
    const { page } = app;
    await freshDocument();
    const seq = Number(await page.locator('section.results').getAttribute('data-seq'));
    await selectElement('D1');
    const gap = page.locator('input[name="elements[2].gap"]');
    await gap.click();
    await gap.fill('77 cm');
    await page.keyboard.press('Escape');
    expect(await gap.inputValue()).toBe('40 cm');
    await page.keyboard.press('Tab'); // leaving the field commits only what was typed since
    await page.waitForTimeout(300);
    expect(await docFile(page)).not.toContain('unsaved');
    expect(await page.locator('section.results').getAttribute('data-seq')).toBe(String(seq));
    await page.locator('[data-menu-button="Edit"]').click();
    expect(await page.locator('[data-command="edit.undo"]').isDisabled()).toBe(true);
    await page.keyboard.press('Escape');

    // a refused entry: Escape goes back to what the field showed when the editing began
    await selectElement('M2');
    const roll = page.locator('input[name="elements[1].axis.roll"]');
    await roll.fill('60');
    await roll.press('Enter');
    await page.locator('.inspector .field.invalid .field-error').waitFor();
    await roll.fill('70 deg');
    await page.keyboard.press('Escape');
    expect(await roll.inputValue()).toBe('60');
    await page.keyboard.press('Tab');
    await page.waitForTimeout(300);
    expect(await page.locator('.inspector .field.invalid').count()).toBe(1);
    expect(await docFile(page)).not.toContain('unsaved');
  });

  it('the charts\' toolbars are one Tab stop each, usable with the arrow keys, and a skip control leads to the inspector', async () => {
    const { page } = app;
    await freshDocument();
    await page.locator('[data-chart] .modebar').first().waitFor();
    const charts = await page.locator('[data-chart]').count();
    await expect.poll(() => page.locator('[data-chart] .modebar').count()).toBe(charts);
    const stops = await page.locator('[data-chart]').evaluateAll((cs) => cs.map((c) => [...c.querySelectorAll<HTMLElement>('.modebar-btn')].filter((b) => b.tabIndex >= 0).length));
    expect(stops).toEqual(Array(charts).fill(1));

    // Tab from the skip control to the inspector: each toolbar is passed in one step
    const skip = page.getByRole('button', { name: 'Skip the results: go to the inspector' });
    // it comes right before the results in the Tab order, and shows while it has the focus
    await page.locator('section.results input').first().focus();
    await page.keyboard.press('Shift+Tab');
    expect(await page.evaluate(() => document.activeElement?.textContent)).toBe('Skip the results: go to the inspector');
    expect((await skip.boundingBox())!.width).toBeGreaterThan(100);
    await page.screenshot({ path: screenshotPath('safety-skip-link'), clip: { x: 0, y: 0, width: 1440, height: 700 } });
    const visited: string[] = [];
    for (let i = 0; i < 200 && !(await activeIn('.inspector')); i++) {
      await page.keyboard.press('Tab');
      visited.push(await page.evaluate(() => (document.activeElement?.classList.contains('modebar-btn') ? `modebar ${document.activeElement.closest('[data-chart]')?.getAttribute('data-chart')}` : 'other')));
    }
    expect(await activeIn('.inspector')).toBe(true);
    const modebarStops = visited.filter((v) => v.startsWith('modebar'));
    expect(modebarStops).toHaveLength(charts);
    expect(new Set(modebarStops).size).toBe(charts);

    // the skip control itself
    await skip.focus();
    await page.keyboard.press('Enter');
    expect(await activeIn('.inspector')).toBe(true);

    // arrows move along a toolbar; Enter presses the button the focus is on (Zoom in narrows the x range)
    const chart = page.locator('[data-chart="counts"]');
    await chart.locator('.modebar-btn[tabindex="0"]').focus();
    const range = () => chart.evaluate((el) => JSON.stringify((el as unknown as { _fullLayout: { xaxis: { range: number[] } } })._fullLayout.xaxis.range));
    const r0 = await range();
    for (let i = 0; i < 2; i++) await page.keyboard.press('ArrowRight');
    expect(await page.evaluate(() => document.activeElement?.getAttribute('data-title'))).toBe('Zoom in');
    await page.screenshot({ path: screenshotPath('safety-toolbar-keyboard'), clip: (await chart.locator('xpath=ancestor::figure').boundingBox())! });
    await page.keyboard.press('Enter');
    await expect.poll(range).not.toBe(r0);
    // the bar remembers the button last used as its Tab stop
    expect(await chart.locator('.modebar-btn[tabindex="0"]').getAttribute('data-title')).toBe('Zoom in');
    await page.keyboard.press('Home');
    expect(await page.evaluate(() => document.activeElement?.getAttribute('data-title'))).toBe('Zoom');
    await page.keyboard.press('End');
    expect(await page.evaluate(() => document.activeElement?.getAttribute('data-title'))).toBe('Reset axes');
    await page.keyboard.press('Enter');
    await expect.poll(range).toBe(r0);
  });
});

describe('the whole run', () => {
  it('sent no request off 127.0.0.1, opened no window and logged no page error', async () => {
    expect(app.requests.length).toBeGreaterThan(0);
    expect(foreignRequests(app)).toEqual([]);
    expect(opened).toEqual([]);
    expect(await app.page.evaluate(() => (window as unknown as { __windowOpenCalls: string[] }).__windowOpenCalls)).toEqual([]);
    expect(app.errors).toEqual([]);
  });
});
