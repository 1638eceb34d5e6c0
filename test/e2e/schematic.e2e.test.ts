// The schematic in Chromium, sample by sample: each sub-beam drawn where the engine's centre line puts it at every
// element of its route (computed here in Node on the same document), labels that cover no other label, branches in
// rows of their own, and a click on an element's drawing selecting that element. Screenshots in test-results/schematic/.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { openApp, foreignRequests, waitForFreshResults, RESULTS_DIR, SAMPLES_DIR, type App } from './harness.ts';
import { readDocument, runEngine } from '../../src/app/core-adapter.ts';
import { leafRoute, placeElements } from '../../src/app/layout.ts';

let app: App;
const SHOTS = join(RESULTS_DIR, 'schematic');

beforeAll(async () => {
  mkdirSync(SHOTS, { recursive: true });
  app = await openApp();
}, 600_000);

afterAll(async () => {
  await app?.close();
});

const names = readdirSync(SAMPLES_DIR).filter((n) => n.endsWith('.spinyard')).sort();

interface Drawn {
  leaf: number;
  view: string;
  points: [number, number][];
  trace: { y: number[]; t: number[]; base: number[] };
}

interface Box { x: number; y: number; width: number; height: number; text: string; kind: string }

async function openSample(name: string): Promise<void> {
  const { page } = app;
  const before = Number((await page.locator('section.results').getAttribute('data-seq')) ?? 0);
  await page.locator('[data-menu-button="Samples"]').click();
  await page.locator(`[data-command="samples.open.${name}"]`).click();
  await waitForFreshResults(page, before);
}

function overlap(a: Box, b: Box, pad = 0.5): boolean {
  return a.x + pad < b.x + b.width && b.x + pad < a.x + a.width && a.y + pad < b.y + b.height && b.y + pad < a.y + a.height;
}

describe('the schematic drawn from the physics', () => {
  it.each(names)('%s: centre lines at every element, labels apart, a click selects what is under the pointer', async (name) => {
    const { page } = app;
    await openSample(name);
    const svg = page.locator('svg.schematic');
    await svg.waitFor();
    await svg.screenshot({ path: join(SHOTS, `${name.replace('.spinyard', '')}.png`) });

    // the engine in Node on the same document
    const parsed = readDocument(readFileSync(join(SAMPLES_DIR, name), 'utf8'));
    if (!parsed.ok) throw new Error('sample does not read');
    const result = runEngine(parsed.line);
    const { placed } = placeElements(parsed.line);
    const pxPerM = Number(await svg.getAttribute('data-px-per-m'));
    const k = Number(await svg.getAttribute('data-k'));
    const drawn: Drawn[] = await page.$$eval('svg.schematic g.beam', (gs) => gs.map((g) => {
      const pl = g.querySelector('polyline')!;
      return {
        leaf: Number((g as SVGGElement).dataset.leaf),
        view: (g.closest('[data-view]') as SVGGElement).dataset.view!,
        points: (pl.getAttribute('points') ?? '').trim().split(/\s+/).map((s) => s.split(',').map(Number) as [number, number]),
        trace: JSON.parse(pl.dataset.trace!),
      };
    }));
    // every leaf that carries flux, in both views
    expect(drawn.length).toBe(2 * result.leaves.filter((l) => Math.abs(l.yield) >= 1e-12).length);
    let compared = 0;
    for (const d of drawn) {
      const leaf = result.leaves[d.leaf];
      // the polyline is its base (row and slot) less its offset across the beam, point for point
      d.points.forEach(([, Y], i) => expect(Math.abs(Y - (d.trace.base[i] - d.trace.t[i]))).toBeLessThan(0.01));
      const scale = pxPerM * k;
      if (!leaf.centreLine) {
        // no geometry: on the axis
        for (const t of d.trace.t) expect(t).toBe(0);
        continue;
      }
      // every element of the route: the drawn offset at its entrance and exit is the engine's centre line there
      const across = (p: { x: number; z: number }) => (d.view === 'side' ? p.z : p.x);
      const engineAt = (y: number) => {
        const cl = leaf.centreLine!;
        for (let i = 1; i < cl.length; i++) {
          if (y <= cl[i].y + 1e-12) {
            const a = cl[i - 1], b = cl[i];
            const f = b.y > a.y ? Math.max(0, (y - a.y) / (b.y - a.y)) : 1;
            return across(a) + f * (across(b) - across(a));
          }
        }
        return across(cl[cl.length - 1]);
      };
      for (const id of leafRoute(parsed.line, leaf.path)) {
        const p = placed.get(id)!;
        for (const y of [p.y0, p.y1]) {
          if (y > leaf.plane! + 1e-12) continue;
          const i = d.trace.y.findIndex((v) => Math.abs(v - y) < 1e-12);
          expect(i, `${name}: leaf ${d.leaf} has a vertex at ${id} (${y} m)`).toBeGreaterThanOrEqual(0);
          expect(Math.abs(d.trace.t[i] - engineAt(y) * scale)).toBeLessThan(0.05);
          compared++;
        }
      }
      // and it ends on the leaf's displacement at its plane
      const last = d.trace.t.length - 1;
      expect(d.trace.y[last]).toBeCloseTo(leaf.plane!, 12);
      expect(Math.abs(d.trace.t[last] - across(leaf.displacement!) * scale)).toBeLessThan(0.05);
    }
    if (result.leaves.some((l) => l.centreLine)) expect(compared).toBeGreaterThan(0);

    // no text covers another (labels, dials' angles, position ticks, branch notes)
    const boxes: Box[] = await page.$$eval('svg.schematic text', (ts) => ts.filter((t) => (t.textContent ?? '').trim() !== '').map((t) => {
      const b = (t as SVGTextElement).getBoundingClientRect();
      return { x: b.x, y: b.y, width: b.width, height: b.height, text: t.textContent ?? '', kind: t.getAttribute('class') ?? '' };
    }));
    const clashes: string[] = [];
    for (let i = 0; i < boxes.length; i++) for (let j = i + 1; j < boxes.length; j++) {
      if (overlap(boxes[i], boxes[j])) clashes.push(`"${boxes[i].text}" / "${boxes[j].text}"`);
    }
    expect(clashes, name).toEqual([]);

    // a dial shows the magnet's axis: its arrow along the axis's part across the beam, an oblique mark where it has one along the beam
    for (const e of parsed.line.elements) {
      if (e.kind !== 'magnet') continue;
      const dial = page.locator(`svg.schematic [data-dial="${e.id}"]`);
      await expect.poll(() => dial.count()).toBe(1);
      const oblique = await dial.locator('.oblique').count();
      expect(oblique, `${e.id} oblique mark`).toBe(Math.abs(e.axis.y) > 1e-3 ? 1 : 0);
      const arrow = dial.locator('line');
      if (Math.hypot(e.axis.x, e.axis.z) > 0.2) {
        const [x1, y1, x2, y2] = await Promise.all(['x1', 'y1', 'x2', 'y2'].map((a) => arrow.getAttribute(a).then(Number)));
        // screen y is down: the arrow's direction is (x, −z) of the axis
        const ang = Math.atan2(x2 - x1, -(y2 - y1));
        const want = Math.atan2(e.axis.x, e.axis.z);
        expect(Math.abs(Math.atan2(Math.sin(ang - want), Math.cos(ang - want)))).toBeLessThan(1e-3);
      }
    }

    // glyphs of one view do not sit on each other, and a click at the middle of each selects that element
    for (const view of ['side', 'top']) {
      const glyphs: (Box & { id: string })[] = await page.$$eval(`svg.schematic [data-view="${view}"] [data-element]`, (gs) => gs.map((g) => {
        const b = (g as SVGGElement).getBoundingClientRect();
        return { id: (g as SVGGElement).dataset.element!, x: b.x, y: b.y, width: b.width, height: b.height, text: '', kind: '' };
      }));
      for (let i = 0; i < glyphs.length; i++) for (let j = i + 1; j < glyphs.length; j++) {
        expect(overlap(glyphs[i], glyphs[j], 0.6), `${name} ${view}: ${glyphs[i].id} and ${glyphs[j].id} overlap`).toBe(false);
      }
      // and no element's name or dial lies over another element's drawing
      const labels: (Box & { id: string })[] = await page.$$eval(`svg.schematic [data-view="${view}"] [data-label]`, (gs) => gs.map((g) => {
        const b = (g as SVGGElement).getBoundingClientRect();
        return { id: (g as SVGGElement).dataset.label!, x: b.x, y: b.y, width: b.width, height: b.height, text: '', kind: '' };
      }));
      for (const l of labels) for (const gl of glyphs) {
        if (l.id !== gl.id) expect(overlap(l, gl, 0.6), `${name} ${view}: the label of ${l.id} lies over ${gl.id}`).toBe(false);
      }
    }
    const detectors = parsed.line.elements.filter((e) => e.kind === 'detector').map((e) => e.id);
    for (const view of ['side', 'top']) {
      for (const id of detectors) {
        const g = page.locator(`svg.schematic [data-view="${view}"] [data-element="${id}"]`);
        const box = (await g.boundingBox())!;
        await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2);
        await page.waitForSelector(`.inspector .insp-id:text-is("${id}")`, { timeout: 10_000 });
      }
    }
  });

  it('sent no request off 127.0.0.1 and logged no page error', () => {
    expect(foreignRequests(app)).toEqual([]);
    expect(app.errors).toEqual([]);
  });
});
