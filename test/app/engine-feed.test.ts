// An edit in the editor serializes its new document once and reads and validates it once; the engine
// gets the normalized line (plain data, structured-cloned into the worker) instead of text to read again.
// The counts come from the document layer itself: its writer, JSON reader and validator are wrapped here.
import { beforeEach, describe, expect, it, vi } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';

const counts = vi.hoisted(() => ({ serialize: 0, parseJson: 0, validate: 0 }));

vi.mock('../../src/beamline/serialize.ts', async (orig) => {
  const m = await orig<typeof import('../../src/beamline/serialize.ts')>();
  return { ...m, serializeDoc: (...a: Parameters<typeof m.serializeDoc>) => (counts.serialize++, m.serializeDoc(...a)) };
});
vi.mock('../../src/beamline/json.ts', async (orig) => {
  const m = await orig<typeof import('../../src/beamline/json.ts')>();
  return { ...m, parseJson: (...a: Parameters<typeof m.parseJson>) => (counts.parseJson++, m.parseJson(...a)) };
});
vi.mock('../../src/beamline/check.ts', async (orig) => {
  const m = await orig<typeof import('../../src/beamline/check.ts')>();
  return { ...m, checkBeamline: (...a: Parameters<typeof m.checkBeamline>) => (counts.validate++, m.checkBeamline(...a)) };
});

import { checkDocument, readDocument, type Beamline, type BeamlineDoc } from '../../src/app/core-adapter.ts';
import { ACCEPTED_GROWTH, createEngineFeed } from '../../src/app/engine-feed.ts';
import { estimatedSeconds } from '../../src/app/core-adapter.ts';
import { bothPortsText, twistText } from '../fixtures/cost-lines.ts';
import { applyInspectorEdit } from '../../src/app/inspector-edit.ts';
import { newDocument } from '../../src/app/default-doc.ts';
import { serveEngineRequest } from '../../src/app/engine-serve.ts';
import { runLine } from '../../src/engine/index.ts';
import type { EngineReply } from '../../src/app/engine-protocol.ts';

/** The normalized line of a valid document. */
function checkLine(d: BeamlineDoc): Beamline {
  const r = checkDocument(d);
  if (!r.ok) throw new Error('invalid');
  return r.line;
}
const reset = () => Object.assign(counts, { serialize: 0, parseJson: 0, validate: 0 });
const check = (d: BeamlineDoc) => {
  const r = checkDocument(d);
  return r.ok ? undefined : r.problems;
};

/** True when `v` holds only what a structured clone copies as it is: primitives, plain objects, arrays. */
function isPlainData(v: unknown, path = 'line'): string | undefined {
  if (v === null || ['number', 'string', 'boolean', 'undefined'].includes(typeof v)) return undefined;
  if (typeof v !== 'object') return `${path}: a ${typeof v}`;
  const proto = Object.getPrototypeOf(v);
  if (proto !== Object.prototype && proto !== Array.prototype) return `${path}: an instance of ${proto?.constructor?.name ?? 'null'}`;
  for (const [k, x] of Object.entries(v)) {
    const bad = isPlainData(x, `${path}.${k}`);
    if (bad) return bad;
  }
  return undefined;
}

describe('createEngineFeed', () => {
  beforeEach(reset);

  it('an inspector edit: one serialization, one read and validation, and the engine gets the line', () => {
    const runs: { seq: number; line: Beamline }[] = [];
    const seqs: number[] = [];
    const feed = createEngineFeed((seq, line) => runs.push({ seq, line }), (s) => seqs.push(s));
    const doc0 = newDocument();
    expect(feed.send(doc0)).toBe(true);
    const l0 = checkDocument(doc0);
    reset();

    // what the editor does for one edit: apply it (validation included), send it at once, then render
    // (the view and the unsaved-changes mark read the check and its text) and send again from the effect
    const r = applyInspectorEdit(doc0, l0.ok ? l0.line : (undefined as never), {
      kind: 'quantity', path: 'elements[1].axis.roll', text: '35 deg', spec: { type: 'quantity', key: 'axis.roll', label: 'axis roll', dim: 'angle' },
    }, check);
    if (!r.ok) throw new Error(r.message);
    expect(feed.send(r.doc)).toBe(true);
    const view = checkDocument(r.doc);
    expect(view.text).toContain('"roll": "35 deg"');
    expect(feed.send(r.doc)).toBe(false);

    expect(counts).toEqual({ serialize: 1, parseJson: 1, validate: 1 });
    expect(seqs).toEqual([1, 2]);
    expect(runs).toHaveLength(2);
    expect(view.ok && runs[1].line).toBe(view.ok && view.line);
    expect(runs[1].line.elements[1]).toMatchObject({ id: 'M2', axis: { x: Math.sin(Math.PI * 35 / 180) } });
  });

  it('a refused entry is never validated or sent (its quantity is refused first); an invalid document is not sent', () => {
    const runs: unknown[] = [];
    const feed = createEngineFeed((_s, l) => runs.push(l), () => {});
    const doc0 = newDocument();
    feed.send(doc0);
    reset();
    const r = applyInspectorEdit(doc0, {} as Beamline, {
      kind: 'quantity', path: 'elements[1].axis.roll', text: '60', spec: { type: 'quantity', key: 'axis.roll', label: 'axis roll', dim: 'angle' },
    }, check);
    expect(r.ok).toBe(false);
    expect(counts).toEqual({ serialize: 0, parseJson: 0, validate: 0 });
    const bad = { ...doc0, oven: { ...doc0.oven, to: 'nowhere' } };
    expect(feed.send(bad)).toBe(false);
    expect(runs).toHaveLength(1);
  });

  it('does not send a document whose text was sent last (undo back to it sends it again), unless reset', () => {
    const runs: unknown[] = [];
    const feed = createEngineFeed((_s, l) => runs.push(l), () => {});
    const a = newDocument();
    const b = { ...a, title: 'Bench A, rolled' };
    expect([feed.send(a), feed.send({ ...a }), feed.send(b), feed.send(a)]).toEqual([true, false, true, true]);
    feed.reset();
    expect(feed.send(a)).toBe(true);
    expect(runs).toHaveLength(4);
  });
});

describe('a "Run anyway" and the edits after it', () => {
  const docOf = (text: string): BeamlineDoc => {
    const r = readDocument(text);
    if (!r.ok) throw new Error(r.problems.join('; '));
    return r.doc;
  };

  it('runs the edits of the same document unasked while the estimate stays within 4× of the accepted one; a document opened anew asks again', () => {
    const runs: { seq: number; accept: boolean | undefined }[] = [];
    const feed = createEngineFeed((seq, _l, accept) => runs.push({ seq, accept }), () => {});
    const twist = docOf(twistText());
    const edited = { ...twist, title: `${twist.title}, edited` };
    expect(feed.send(twist)).toBe(true);
    expect(runs.at(-1)?.accept).toBeUndefined();
    expect(feed.runAnyway()).toBe(true);
    expect(runs.at(-1)?.accept).toBe(true);
    // an edit that keeps the estimate: run without asking
    expect(feed.send(edited)).toBe(true);
    expect(runs.at(-1)?.accept).toBe(true);
    // a line estimated at far more than 4× the accepted one: asked again (the engine refuses it unaccepted)
    const much = docOf(bothPortsText(15));
    expect(estimatedSeconds(checkLine(much))).toBeGreaterThan(ACCEPTED_GROWTH * estimatedSeconds(checkLine(twist)));
    expect(feed.send(much)).toBe(true);
    expect(runs.at(-1)?.accept).toBeUndefined();
    // opened anew: the acceptance is forgotten
    feed.reset();
    expect(feed.send(twist)).toBe(true);
    expect(runs.at(-1)?.accept).toBeUndefined();
  });
});

describe('the normalized line sent to the worker', () => {
  const dir = join(import.meta.dirname, '..', '..', 'samples');
  const names = readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort();

  it('is plain data for every sample and the new document, and a structured clone of it runs to the same result', () => {
    expect(names.length).toBeGreaterThan(0);
    const lines: [string, Beamline][] = [['new document', (checkDocument(newDocument()) as { line: Beamline }).line]];
    for (const n of names) {
      const r = readDocument(readFileSync(join(dir, n), 'utf8'));
      if (!r.ok) throw new Error(`${n}: ${r.problems.map((p) => p.message).join('; ')}`);
      lines.push([n, r.line]);
    }
    for (const [n, line] of lines) {
      expect(isPlainData(line), n).toBeUndefined();
      expect(Object.isFrozen(line.elements[0] ?? line.oven), n).toBe(true); // the reader freezes it; the clone is not frozen
      const copy = structuredClone(line);
      expect(copy, n).toEqual(line);
      const replies: EngineReply[] = [];
      serveEngineRequest({ seq: 7, line: copy }, (m) => replies.push(m));
      const last = replies.at(-1)!;
      if (last.type !== 'result') throw new Error(`${n}: ${last.type === 'error' ? last.message : last.type}`);
      expect(last.seq).toBe(7);
      expect(last.result, n).toEqual(runLine(line));
      expect(Object.isFrozen(copy.oven), n).toBe(true); // the worker freezes what it runs
    }
  });

  it('is checked by a test that sees what is not plain data', () => {
    expect(isPlainData({ a: [1, { b: 'x' }] })).toBeUndefined();
    expect(isPlainData({ a: new Float64Array(2) })).toBe('line.a: an instance of Float64Array');
    expect(isPlainData({ a: new Map() })).toBe('line.a: an instance of Map');
    expect(isPlainData({ f: () => 1 })).toBe('line.f: a function');
  });
});
