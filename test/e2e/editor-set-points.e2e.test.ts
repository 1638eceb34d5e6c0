// The set-points of issue 14 item 2 in the browser: bench H's F=2,mF=-2 routed from the UI (the magnet's ports
// offered by its own sorting), the levels panel with the sorted ports marked, the oven's state edited, a velocity
// table imported from CSV and edited row by row, an element placed by its distance from the oven aperture.
// Every check compares with the engine run here in Node on the document the UI should have made.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { openApp, screenshotPath, tableYields, waitForFreshResults, RESULTS_DIR, SAMPLES_DIR, type App, runMenu as menuCommand, selectElement as selectInTree } from './harness.ts';
import { documentText, readDocument, runEngine, type BeamlineDoc } from '../../src/app/core-adapter.ts';

let app: App;
const SAMPLE = 'bench-h-rb87-mj-then-eigenstate.spinyard';

beforeAll(async () => {
  mkdirSync(join(RESULTS_DIR, 'editor'), { recursive: true });
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

function engineYields(doc: BeamlineDoc): { path: string; target: string; yield: number }[] {
  const r = readDocument(documentText(doc));
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  return runEngine(r.line).leaves.map((l) => ({ path: l.path.join(' → ') || '(oven)', target: l.target, yield: l.yield }));
}
function expectYields(shown: { path: string; target: string; yield: number }[], want: { path: string; target: string; yield: number }[]) {
  expect(shown.map((r) => [r.path, r.target])).toEqual(want.map((r) => [r.path, r.target]));
  shown.forEach((r, i) => expect(r.yield).toBeCloseTo(want[i].yield, 12));
}
function sampleDoc(): BeamlineDoc {
  const r = readDocument(readFileSync(join(SAMPLES_DIR, SAMPLE), 'utf8'));
  if (!r.ok) throw new Error('bench H does not read');
  return r.doc;
}
const runMenu = (menu: string, command: string) => menuCommand(app.page, menu, command);
const selectElement = (id: string) => selectInTree(app.page, id);
async function selectOven() {
  await app.page.locator('.tree [data-id="oven"]').first().click();
  await app.page.waitForSelector('.inspector h2:text-is("Oven and species")');
}
/** The whole window, and the inspector on its own (it scrolls: the element shot shows all of it). */
async function shot(name: string) {
  await app.page.screenshot({ path: screenshotPath(`editor/${name}`), fullPage: true });
  await app.page.locator('section.inspector').screenshot({ path: screenshotPath(`editor/${name}-inspector`) });
}

describe('every set-point editable (bench H, Rb-87)', () => {
  let seq = 0;
  let doc: BeamlineDoc;

  it('routes F=2,mF=-2 of the eigenstate sorter M2 to a new detector from the inspector', async () => {
    const { page } = app;
    seq = await waitForFreshResults(page);
    await runMenu('Samples', `samples.open.${SAMPLE}`);
    seq = await waitForFreshResults(page, seq);
    doc = sampleDoc();
    await selectElement('M2');
    const insp = page.locator('.inspector');
    // the ports M2 does not list are its own eigenstates, not m_J labels
    await expect(insp.locator('button:text-is("list mJ=+1/2")').count()).resolves.toBe(0);
    await insp.locator('button:text-is("list F=2,mF=-2")').click();
    seq = await waitForFreshResults(page, seq);
    const ports = (doc.elements[2] as { ports: Record<string, string> }).ports;
    doc = { ...doc, elements: doc.elements.map((e, i) => (i === 2 ? { ...e, ports: { ...ports, 'F=2,mF=-2': 'stop' } } : e)) } as BeamlineDoc;
    const listed = engineYields(doc);
    expectYields(await tableYields(page), listed);
    const stopped = listed.find((r) => r.path.endsWith('M2:F=2,mF=-2'));
    expect(stopped?.target).toBe('stop');
    // add a detector on the port now listed
    await insp.locator('button[aria-label="Add a detector on F=2,mF=-2"]').click();
    seq = await waitForFreshResults(page, seq);
    const rows = await tableYields(page);
    const row = rows.find((r) => r.path.endsWith('M2:F=2,mF=-2'));
    expect(row, JSON.stringify(rows)).toBeDefined();
    expect(row!.target).not.toBe('stop');
    // (M1 passes m_J = +1/2 only, and F=2,mF=-2 is m_J = -1/2 at every field: the leaf carries round-off)
    // the same sub-beam, now on a detector: the fraction of the flux it carries is the engine's
    expect(row!.yield).toBeCloseTo(stopped!.yield, 12);
    const newId = row!.target;
    await selectElement('M2');
    const levels = page.locator('table.levels[data-magnet="M2"]');
    await expect(levels.locator('tr[data-level="F=2,mF=-2"]').getAttribute('data-target')).resolves.toBe(newId);
    await expect(levels.locator('tr[data-level="F=1,mF=0"]').getAttribute('data-target')).resolves.toBe('stop');
    await page.locator('[data-chart="levels-M2"]').waitFor();
    await page.waitForFunction(() => document.querySelector('[data-chart="levels-M2"] .main-svg') !== null, undefined, { timeout: 60_000 });
    await page.locator('section.levels-panel').scrollIntoViewIfNeeded();
    await shot('bench-h-m2-port-routed-levels');
  });

  it('edits the oven state: populations along an axis (equal shares give the unpolarised yields), then one population', async () => {
    const { page } = app;
    const before = await tableYields(page);
    await selectOven();
    const kind = page.locator('select[name="oven.state.kind"]');
    await kind.selectOption('populations');
    seq = await waitForFreshResults(page, seq);
    await expect(page.locator('input[name="oven.state.p[\\"F=2,mF=-2\\"]"]').inputValue()).resolves.toBe('0.125');
    const equal = await tableYields(page);
    equal.forEach((r, i) => expect(r.yield).toBeCloseTo(before[i].yield, 10));
    // all atoms in F=2,mF=+2 along z: M1 (m_J sorter at 0.5 T) passes it all, M2 sends it to D1
    for (const l of ['F=2,mF=+1', 'F=2,mF=0', 'F=2,mF=-1', 'F=2,mF=-2', 'F=1,mF=+1', 'F=1,mF=0', 'F=1,mF=-1']) {
      const f = page.locator(`input[name="oven.state.p[\\"${l}\\"]"]`);
      await f.fill('');
      await f.press('Enter');
      seq = await waitForFreshResults(page, seq);
    }
    const pure = await tableYields(page);
    const d1 = pure.filter((r) => r.target === 'D1').reduce((a, r) => a + r.yield, 0);
    const rest = pure.filter((r) => r.target !== 'D1' && r.target !== 'stop').reduce((a, r) => a + r.yield, 0);
    expect(d1).toBeGreaterThan(0);
    expect(rest).toBeLessThan(1e-9);
    // an entry that is no number stays in its field with the message; the document keeps the last valid state
    const f = page.locator('input[name="oven.state.p[\\"F=2,mF=+2\\"]"]');
    await f.fill('lots');
    await f.press('Enter');
    await page.locator('.oven-state .field-error').first().waitFor();
    await shot('bench-h-oven-populations');
    await page.keyboard.press('Escape');
    // undo back to unpolarised
    await page.locator('.tree [data-id="oven"]').first().focus();
    for (let i = 0; i < 8; i++) {
      await page.keyboard.press('Control+z');
    }
    seq = await waitForFreshResults(page, 0);
    await expect(kind.inputValue()).resolves.toBe('unpolarized');
  });

  it('imports a velocity table from CSV, edits a row, adds and removes rows, and refuses a bad file with its line', async () => {
    const { page } = app;
    await selectOven();
    const input = page.locator('input[type="file"][name="velocity-csv"]');
    await input.setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from('speed,weight\n200,1\n') });
    await expect(page.locator('.velocity-table .field-error').first().textContent()).resolves.toMatch(/bad\.csv: line 1: the speed column "speed" gives no unit/);
    const csv = '# chopper time-of-flight, bench H oven at 420 K\nspeed (m/s),weight\n200,0.5\n300,1.5\n400,2\n500,1\n600,0.25\n';
    await input.setInputFiles({ name: 'tof.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
    seq = await waitForFreshResults(page, seq);
    const table: [string, number][] = [['200 m/s', 0.5], ['300 m/s', 1.5], ['400 m/s', 2], ['500 m/s', 1], ['600 m/s', 0.25]];
    await expect(page.locator('table[aria-label="Velocity table"] tbody tr').count()).resolves.toBe(5);
    // the engine ran with the imported table: the velocity chart's stems are its speeds with the weights normalised
    await page.waitForFunction((s) => document.querySelector<HTMLElement>('[data-chart="velocity"]')?.dataset.seq === String(s), seq, { timeout: 60_000 });
    const stems = await page.$eval('[data-chart="velocity"]', (el) => {
      const d = (el as unknown as { data: { x: (number | null)[]; y: (number | null)[] }[] }).data[0];
      return d.x.map((x, i) => [x, d.y[i]]).filter((_, i) => i % 3 === 1);
    });
    const sum = table.reduce((a, [, wt]) => a + wt, 0);
    expect(stems.map(([x]) => x)).toEqual([200, 300, 400, 500, 600]);
    stems.forEach(([, y], i) => expect(y).toBeCloseTo(table[i][1] / sum, 12));
    const w = page.locator('input[name="oven.velocity.points[1][1]"]');
    await w.fill('3');
    await w.press('Enter');
    seq = await waitForFreshResults(page, seq);
    await page.locator('button[aria-label="Add a row after row 5"]').click();
    seq = await waitForFreshResults(page, seq);
    await expect(page.locator('input[name="oven.velocity.points[5][0]"]').inputValue()).resolves.toBe('700 m/s');
    await page.locator('button[aria-label="Remove row 1"]').click();
    seq = await waitForFreshResults(page, seq);
    table[1][1] = 3;
    const want = [...table.slice(1), ['700 m/s', 0] as [string, number]];
    await expect(page.locator('table[aria-label="Velocity table"] tbody tr').count()).resolves.toBe(5);
    const vals = await page.$$eval('table[aria-label="Velocity table"] tbody input', (xs) => xs.map((x) => (x as HTMLInputElement).value));
    expect(vals).toEqual(want.flatMap(([s, wt]) => [s, String(wt)]));
    await page.locator('[data-chart="velocity"]').scrollIntoViewIfNeeded();
    await shot('bench-h-velocity-table');
  });

  it('places M2 by its distance from the oven aperture: the gap follows, a place upstream of M1 is refused', async () => {
    const { page } = app;
    await selectElement('M2');
    // M1 starts at 35 cm (S1 at 30 cm, gap 5 cm) and is 5 cm long: it ends at 40 cm; M2's gap is 10 cm, so it starts at 50 cm
    const pos = page.locator('input[name="elements[2].position"]');
    await expect(pos.inputValue()).resolves.toBe('50 cm');
    await pos.fill('38 cm');
    await pos.press('Enter');
    await expect(page.locator('.inspector .field-error').first().textContent()).resolves.toBe(
      'M2 cannot start at 38 cm from the oven aperture: M1 ends at 40 cm, so its gap would be negative (move M1 first)');
    await pos.fill('45 cm');
    await pos.press('Enter');
    seq = await waitForFreshResults(page, seq);
    await page.waitForFunction(() => (document.querySelector('input[name="elements[2].position"]') as HTMLInputElement | null)?.value === '45 cm');
    // the file keeps a gap of 5 cm: the text the app would save
    const gap = await page.evaluate(() => (document.querySelector('input[name="elements[2].gap"]') as HTMLInputElement | null)?.value);
    if (gap !== undefined) expect(gap).toBe('5 cm');
    await shot('bench-h-m2-position');
  });

  it('switches M1 to sorting by eigenstate: its ports are carried over, the detectors see the same yields', async () => {
    const { page } = app;
    const before = await tableYields(page);
    await selectElement('M1');
    await page.getByLabel('ports group').selectOption('each');
    seq = await waitForFreshResults(page, seq);
    const ports = await page.$$eval('.inspector table.routes select[data-port]', (xs) => xs.map((x) => [(x as HTMLSelectElement).dataset.port, (x as HTMLSelectElement).value]));
    expect(ports).toEqual([['F=2,mF=+2', 'M2'], ['F=2,mF=+1', 'M2'], ['F=2,mF=0', 'M2'], ['F=2,mF=-1', 'M2'], ['*', 'stop']]);
    const after = await tableYields(page);
    const sumAt = (rows: typeof before, t: string) => rows.filter((r) => r.target === t).reduce((a, r) => a + r.yield, 0);
    for (const t of ['D1', 'D2', 'D3', 'D4']) expect(sumAt(after, t)).toBeCloseTo(sumAt(before, t), 9);
    await shot('bench-h-m1-by-eigenstate');
  });
});
