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
import { openApp, foreignRequests, screenshotPath, waitForFreshResults, ROOT, SAMPLES_DIR, type App } from './harness.ts';
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

async function runMenu(menu: string, command: string) {
  await app.page.locator(`[data-menu-button="${menu}"]`).click();
  await app.page.locator(`[data-command="${command}"]`).click();
}

async function selectElement(id: string) {
  await app.page.locator(`.tree [data-id="${id}"]`).first().click();
  await app.page.waitForSelector(`.inspector .insp-id:text-is("${id}")`);
}

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

    await page.locator('.tree [data-id="M2"]').first().focus();
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

describe('the whole run', () => {
  it('sent no request off 127.0.0.1, opened no window and logged no page error', async () => {
    expect(app.requests.length).toBeGreaterThan(0);
    expect(foreignRequests(app)).toEqual([]);
    expect(opened).toEqual([]);
    expect(await app.page.evaluate(() => (window as unknown as { __windowOpenCalls: string[] }).__windowOpenCalls)).toEqual([]);
    expect(app.errors).toEqual([]);
  });
});
