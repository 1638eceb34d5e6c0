import { describe, expect, it } from 'vitest';
import { checkDocument, type Beamline } from '../../src/app/core-adapter.ts';
import { newDocument } from '../../src/app/default-doc.ts';
import { serveEngineRequest } from '../../src/app/engine-serve.ts';
import type { EngineReply } from '../../src/app/engine-protocol.ts';

const newLine = (): Beamline => structuredClone((checkDocument(newDocument()) as { line: Beamline }).line);

describe('serveEngineRequest', () => {
  it('answers a request with the result of its line, the run time and the request\'s number', () => {
    const replies: EngineReply[] = [];
    let t = 100;
    serveEngineRequest({ seq: 3, line: newLine() }, (m) => replies.push(m), () => (t += 5));
    const r = replies.at(-1)!;
    expect(r.type).toBe('result');
    if (r.type !== 'result') return;
    expect(r.seq).toBe(3);
    expect(r.ms).toBeGreaterThan(0);
    expect(r.result.leaves.map((l) => l.target)).toEqual(['D1', 'D2', 'stop']);
  });

  it('answers with the engine\'s message when the line cannot run, and never throws', () => {
    const line = newLine() as unknown as { species: unknown };
    line.species = { kind: 'named', name: 'Unobtainium-1' };
    const replies: EngineReply[] = [];
    serveEngineRequest({ seq: 4, line: line as Beamline }, (m) => replies.push(m));
    expect(replies).toHaveLength(1);
    expect(replies[0]).toMatchObject({ type: 'error', seq: 4 });
    expect((replies[0] as { message: string }).message).toMatch(/Unobtainium-1/);
  });

  it('freezes the line it received, as the reader does', () => {
    const line = newLine();
    expect(Object.isFrozen(line)).toBe(false);
    serveEngineRequest({ seq: 1, line }, () => {});
    expect(Object.isFrozen(line) && Object.isFrozen(line.elements) && Object.isFrozen(line.elements[1])).toBe(true);
  });
});
