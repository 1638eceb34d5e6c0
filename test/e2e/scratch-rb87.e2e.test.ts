// A Rb-87 line built from scratch in the browser with mouse and keyboard (issue 14's "built-from-scratch Rb-87
// line"): File → New, the species and an effusive oven in the oven's inspector, a slit added on the oven's output
// with Alt+A, a state-selecting magnet passing m_J = +1/2 on, a second magnet sorting each eigenstate that routes
// F=2,mF=+2 and F=2,mF=+1 to two detectors and the rest to a stop, every gap, field, gradient, length and window
// typed into the inspector's fields and taken with Enter. The document the app holds is then saved through the
// app's own Save (Ctrl+S, a download in the browser host) and run here in Node with runDocumentText: the results
// table must be that run's, every detector's rate to 1e-9 relative.
//
// The lab scenario is invented for this test (bench R, a rubidium line set up for a state-resolved count of the
// upper hyperfine level); its set-points are for demonstration only, not a measured line.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { foreignRequests, openApp, screenshotPath, tableYields, waitForFreshResults, RESULTS_DIR, type App, runMenu as menuCommand, selectElement as selectInTree } from './harness.ts';
import { runDocumentText } from '../../src/engine/index.ts';
import { detectorCells } from '../../src/app/results.ts';

let app: App;

beforeAll(async () => {
  mkdirSync(join(RESULTS_DIR, 'scratch'), { recursive: true });
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

const runMenu = (menu: string, command: string) => menuCommand(app.page, menu, command);
const selectElement = (id: string) => selectInTree(app.page, id);
/** One CSV line's fields (RFC 4180 quoting: a field with a comma or a quote is quoted, quotes doubled). */
function csvFields(line: string): string[] {
  const out: string[] = [];
  let i = 0;
  while (i <= line.length) {
    if (line[i] === '"') {
      let v = '';
      i++;
      while (i < line.length) {
        if (line[i] === '"' && line[i + 1] === '"') { v += '"'; i += 2; }
        else if (line[i] === '"') { i++; break; }
        else v += line[i++];
      }
      out.push(v);
      i++; // the comma
    } else {
      const j = line.indexOf(',', i);
      const end = j < 0 ? line.length : j;
      out.push(line.slice(i, end));
      i = end + 1;
    }
  }
  return out;
}
async function shot(name: string) {
  await app.page.screenshot({ path: screenshotPath(`scratch/${name}`), fullPage: true });
}

/** Each detector's sub-beam displacement along z (mm), read from the app's own ports CSV export. */
async function displacements(): Promise<Map<string, number>> {
  const [csv] = await Promise.all([app.page.waitForEvent('download'), app.page.getByRole('button', { name: 'Export table as CSV' }).click()]);
  const file = join(RESULTS_DIR, 'scratch', 'bench-r-ports-first.csv');
  await csv.saveAs(file);
  const lines = readFileSync(file, 'utf8').trim().split('\r\n');
  const head = csvFields(lines[0]);
  const target = head.indexOf('target');
  const z = head.indexOf('displacement z (mm)');
  expect(z).toBeGreaterThan(0);
  const out = new Map<string, number>();
  for (const line of lines.slice(1)) {
    const c = csvFields(line);
    if (c[target] === 'D1' || c[target] === 'D2') out.set(c[target], Number(c[z]));
  }
  return out;
}

describe('a Rb-87 line built from scratch (bench R, invented set-points)', () => {
  let seq = 0;

  /** Types a quantity into the inspector field `name` and takes it with Enter; waits for the new run when it changed. */
  async function type(name: string, text: string) {
    const f = app.page.locator(`.inspector input[name="${name}"]`);
    await f.waitFor();
    if ((await f.inputValue()) === text) return;
    await f.click();
    await app.page.keyboard.press('Control+a');
    await app.page.keyboard.type(text);
    await app.page.keyboard.press('Enter');
    expect(await app.page.locator('.inspector .field-error').allTextContents(), name).toEqual([]);
    seq = await waitForFreshResults(app.page, seq);
    await expect.poll(() => f.inputValue()).toBe(text);
  }
  /** Chooses `value` in the inspector select labelled `label` (or matched by `locator`); waits for the run. */
  async function choose(select: ReturnType<App['page']['locator']>, value: string) {
    if ((await select.inputValue()) === value) return;
    await select.selectOption(value);
    seq = await waitForFreshResults(app.page, seq);
  }

  it('builds the line in the editor', async () => {
    const { page } = app;
    seq = await waitForFreshResults(page);
    await runMenu('File', 'file.new');
    seq = await waitForFreshResults(page, seq);

    // the oven: Rb-87, effusive at 400 K, a 0.5 mm × 1 mm aperture, 1e10 atoms/s
    await page.locator('.tree [data-id="oven"]').first().click();
    await page.waitForSelector('.inspector h2:text-is("Oven and species")');
    await choose(page.locator('.inspector').getByLabel('species', { exact: true }), 'Rb-87');
    await choose(page.locator('.inspector').getByLabel('velocity distribution', { exact: true }), 'effusive');
    await type('oven.velocity.temperature', '400 K');
    await type('oven.flux', '1e10 /s');
    await type('oven.aperture.width', '0.5 mm');
    await type('oven.aperture.height', '1 mm');

    // a collimating slit on the oven's output, added from the keyboard (Alt+A, the oven's output is the first)
    await page.locator('.tree [data-id="oven"]').first().focus();
    await page.keyboard.press('Alt+a');
    const dialog = page.getByRole('dialog', { name: 'Add an element on a port' });
    await dialog.waitFor();
    await expect(dialog.getByLabel('Output').inputValue()).resolves.toBe('0');
    await dialog.getByLabel('Kind').selectOption('slit');
    await dialog.getByRole('button', { name: 'Add', exact: true }).focus();
    await page.keyboard.press('Enter');
    seq = await waitForFreshResults(page, seq);
    await expect.poll(() => page.$$eval('.tree [data-id]', (xs) => xs.map((x) => x.getAttribute('data-id')))).toEqual(['oven', 'S1', 'M1', 'M2', 'D1', 'D2']);
    await selectElement('S1');
    await type('elements[0].gap', '20 cm');
    await type('elements[0].width', '0.2 mm');
    await type('elements[0].height', '1.5 mm');

    // M1, reached with Alt+↓ from the slit: sorts by m_J at 0.6 T, passes m_J = +1/2 on to M2
    await page.locator('.tree [data-id="S1"]').first().focus();
    await page.keyboard.press('Alt+ArrowDown');
    await page.waitForSelector('.inspector .insp-id:text-is("M1")');
    await type('elements[1].gap', '5 cm');
    await choose(page.locator('.inspector').getByLabel('ports group', { exact: true }), 'mJ');
    await type('elements[1].field', '0.6 T');
    await type('elements[1].gradient', '300 T/m');
    await type('elements[1].length', '6 cm');
    await type('elements[1].aperture.width', '3 mm');
    await type('elements[1].aperture.height', '3 mm');
    await choose(page.locator('.inspector').getByLabel('mJ=+1/2', { exact: true }), 'M2');
    await choose(page.locator('.inspector').getByLabel('mJ=-1/2', { exact: true }), 'stop');

    // M2: sorts each eigenstate at 0.1 T (between the weak- and strong-field regimes), roll 0°; F=2,mF=+2 → D1,
    // F=2,mF=+1 → D2, everything else to a stop
    await selectElement('M2');
    await type('elements[2].gap', '12 cm');
    await type('elements[2].axis.roll', '0 deg');
    await choose(page.locator('.inspector').getByLabel('ports group', { exact: true }), 'each');
    await type('elements[2].field', '0.1 T');
    await type('elements[2].gradient', '200 T/m');
    await type('elements[2].length', '8 cm');
    await type('elements[2].aperture.width', '4 mm');
    await type('elements[2].aperture.height', '6 mm');
    const routes = page.locator('.inspector table.routes select[data-port]');
    const ports = await routes.evaluateAll((xs) => xs.map((x) => (x as HTMLSelectElement).dataset.port!));
    expect(ports).toEqual(expect.arrayContaining(['F=2,mF=+2', 'F=2,mF=+1']));
    const want: Record<string, string> = { 'F=2,mF=+2': 'D1', 'F=2,mF=+1': 'D2' };
    for (const p of ports) await choose(page.locator(`.inspector table.routes select[data-port="${p}"]`), want[p] ?? 'stop');
    const routed = await page.locator('.inspector table.routes select[data-port]').evaluateAll((xs) => Object.fromEntries(xs.map((x) => [(x as HTMLSelectElement).dataset.port, (x as HTMLSelectElement).value])));
    for (const [p, t] of Object.entries(routed)) expect(t, p).toBe(want[p] ?? 'stop');
    expect(Object.keys(routed)).toEqual(expect.arrayContaining(Object.keys(want)));
    await page.locator('section.inspector').screenshot({ path: screenshotPath('scratch/m2-inspector') });

    // the detectors: 45 cm behind M2, windows 1 mm wide and 0.6 mm tall, first on the axis
    for (const [i, id] of [[3, 'D1'], [4, 'D2']] as const) {
      await selectElement(id);
      await type(`elements[${i}].gap`, '45 cm');
      await type(`elements[${i}].efficiency`, '0.5');
      await type(`elements[${i}].background`, '20 /s');
      await type(`elements[${i}].dwell`, '5 s');
      await type(`elements[${i}].window.width`, '1 mm');
      await type(`elements[${i}].window.height`, '0.6 mm');
      await type(`elements[${i}].window.x`, '0 mm');
      await type(`elements[${i}].window.z`, '0 mm');
    }
    // then each window centred on its sub-beam: the displacement the app's ports CSV gives, to 0.1 mm
    const centres = await displacements();
    for (const [i, id] of [[3, 'D1'], [4, 'D2']] as const) {
      expect(Number.isFinite(centres.get(id)), id).toBe(true);
      await selectElement(id);
      await type(`elements[${i}].window.z`, `${centres.get(id)!.toFixed(1)} mm`);
    }
    // the two sub-beams land apart: the windows differ
    expect(centres.get('D1')!.toFixed(1)).not.toBe(centres.get('D2')!.toFixed(1));
    await shot('built');
  });

  it('shows the results of its own document: Save gives the text, runDocumentText in Node gives the same table', async () => {
    const { page } = app;
    const [download] = await Promise.all([page.waitForEvent('download'), page.keyboard.press('Control+s')]);
    const file = join(RESULTS_DIR, 'scratch', 'bench-r-rb87.spinyard');
    await download.saveAs(file);
    const text = readFileSync(file, 'utf8');
    const run = runDocumentText(text);
    if (!run.ok) throw new Error(run.problems.join('\n'));
    const { doc, result } = run;

    // the saved document is the line built above
    expect(doc.species).toBe('Rb-87');
    expect(doc.oven.velocity).toMatchObject({ kind: 'effusive', temperature: '400 K' });
    expect(doc.elements.map((e) => [e.id, e.kind])).toEqual([['S1', 'slit'], ['M1', 'magnet'], ['M2', 'magnet'], ['D1', 'detector'], ['D2', 'detector']]);
    const m1 = doc.elements[1] as unknown as { group: string; ports: Record<string, string> };
    const m2 = doc.elements[2] as unknown as { group: string; ports: Record<string, string> };
    expect(m1.group).toBe('mJ');
    expect(m1.ports).toMatchObject({ 'mJ=+1/2': 'M2', 'mJ=-1/2': 'stop' });
    expect(m2.group).toBe('each');
    expect(m2.ports).toMatchObject({ 'F=2,mF=+2': 'D1', 'F=2,mF=+1': 'D2' });
    for (const [p, t] of Object.entries(m2.ports)) if (p !== 'F=2,mF=+2' && p !== 'F=2,mF=+1') expect(t, p).toBe('stop');

    // the ports table, leaf by leaf, at full precision
    const shown = await tableYields(page);
    const leaves = result.leaves.map((l) => ({ path: l.path.join(' → ') || '(oven)', target: l.target, yield: l.yield }));
    expect(shown.map((r) => [r.path, r.target])).toEqual(leaves.map((r) => [r.path, r.target]));
    shown.forEach((r, i) => expect(Math.abs(r.yield - leaves[i].yield)).toBeLessThanOrEqual(1e-9 * Math.abs(leaves[i].yield) + 1e-15));
    // both detectors see atoms: the line does what it was built for
    const d1 = result.detectors.find((d) => d.id === 'D1')!;
    const d2 = result.detectors.find((d) => d.id === 'D2')!;
    expect(d1.signal).toBeGreaterThan(0);
    expect(d2.signal).toBeGreaterThan(0);

    // the detectors table as shown is the one number rule applied to the Node run
    const cells = await page.$$eval('table.detectors tbody tr', (rows) => rows.map((r) => [...r.querySelectorAll('td')].map((td) => td.textContent ?? '')));
    const want = detectorCells(result);
    expect(cells.map((c) => c.slice(0, 6))).toEqual(want.map((w) => [w.id, w.yield, w.rate, w.counts, w.background, w.signalToBackground]));
    expect(cells.flat().join(' ')).not.toMatch(/NaN/);

    // every detector's rate at full precision, from the app's own CSV export of the ports table
    const [csv] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export table as CSV' }).click()]);
    const csvFile = join(RESULTS_DIR, 'scratch', 'bench-r-ports.csv');
    await csv.saveAs(csvFile);
    const lines = readFileSync(csvFile, 'utf8').trim().split('\r\n');
    const head = csvFields(lines[0]);
    const target = head.indexOf('target');
    const rate = head.indexOf('detector rate (1/s)');
    expect(rate).toBeGreaterThan(0);
    const seen = new Map<string, number>();
    for (const line of lines.slice(1)) {
      const c = csvFields(line);
      expect(c).toHaveLength(head.length);
      if (c[rate] !== '') seen.set(c[target], Number(c[rate]));
    }
    expect([...seen.keys()].sort()).toEqual(result.detectors.map((d) => d.id).sort());
    for (const d of result.detectors) {
      const got = seen.get(d.id)!;
      expect(Number.isFinite(got), d.id).toBe(true);
      expect(Math.abs(got - d.rate), d.id).toBeLessThanOrEqual(1e-9 * d.rate);
    }
    await page.locator('table.detectors').scrollIntoViewIfNeeded();
    await shot('results');
    await page.locator('[data-chart^="plane-"] .main-svg').first().waitFor({ timeout: 60_000 });
    await page.locator('[data-chart^="plane-"]').first().scrollIntoViewIfNeeded();
    await shot('detector-plane');
    await page.locator('[data-chart^="plane-"]').first().screenshot({ path: screenshotPath('scratch/detector-plane-chart') });
  });

  it('sent no request off 127.0.0.1 and logged no page error', async () => {
    expect(app.requests.length).toBeGreaterThan(0);
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
  });
});
