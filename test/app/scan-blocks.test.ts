// Scans dealt out over a pool of workers: the pool's size, the blocks, and the merge of the blocks' points and
// warnings back into the one worker's result (engine scanResult: the document's own warnings first, then each
// point's by first appearance in scan order, a point's indices sorted).
import { describe, expect, it } from 'vitest';
import { blockPoints, mergeScanBlocks, scanBlocks, scanPoolSize } from '../../src/app/scan-blocks.ts';
import type { ScanPoint, ScanResult } from '../../src/app/core-adapter.ts';

describe('scanPoolSize', () => {
  it('is one worker per core but one, at most 4 and at least 1', () => {
    expect(scanPoolSize(2)).toBe(1);
    expect(scanPoolSize(3)).toBe(2);
    expect(scanPoolSize(5)).toBe(4);
    expect(scanPoolSize(16)).toBe(4);
    expect(scanPoolSize(1)).toBe(1);
    expect(scanPoolSize(0)).toBe(1);
    expect(scanPoolSize(undefined)).toBe(1);
  });
});

describe('scanBlocks', () => {
  it('deals the points out in contiguous blocks of ⌈n/w⌉, in order, covering each point once', () => {
    expect(scanBlocks(10, 3)).toEqual([{ start: 0, end: 4 }, { start: 4, end: 8 }, { start: 8, end: 10 }]);
    expect(scanBlocks(37, 2)).toEqual([{ start: 0, end: 19 }, { start: 19, end: 37 }]);
    expect(scanBlocks(2, 4)).toEqual([{ start: 0, end: 1 }, { start: 1, end: 2 }]);
    expect(scanBlocks(5, 1)).toEqual([{ start: 0, end: 5 }]);
    for (const [n, w] of [[1, 4], [7, 4], [400, 3], [9, 9]]) {
      const bs = scanBlocks(n, w);
      expect(bs.length).toBeLessThanOrEqual(w);
      expect(bs.flatMap((b) => Array.from({ length: b.end - b.start }, (_, i) => b.start + i))).toEqual(Array.from({ length: n }, (_, i) => i));
    }
  });
});

/** A point with warnings (indices) and numbers, as scanPoint makes it. */
const pt = (k: number, warnings?: number[], error?: string): ScanPoint => (error
  ? { index: [k], values: [k], error }
  : { index: [k], values: [k], detectors: [{ id: 'D1', yield: k / 10, rate: k, signal: k, counts: k, sigma: Math.sqrt(k) }], leaves: [], lost: 0, ...(warnings ? { warnings } : {}) });

const head = (own: string[]): ScanResult => ({ format: 'spinyard.scan', version: 1, title: 't', parameters: [], detectors: ['D1'], points: [], warnings: own });

describe('mergeScanBlocks', () => {
  it('numbers the warnings as one worker does: the document\'s first, then by first appearance in scan order', () => {
    // one worker over 6 points meets A (point 0), C and B (point 2, in that order), D (point 5); the document has W
    const one: ScanResult = {
      ...head(['W']),
      points: [pt(0, [1]), pt(1), pt(2, [1, 2, 3]), pt(3, undefined, 'refused'), pt(4, [3]), pt(5, [2, 4])],
      warnings: ['W', 'A', 'C', 'B', 'D'],
    };
    // two blocks: the second numbered its own warnings from 0 (B first met at point 4 there, then C, D at point 5)
    const first = blockPoints([pt(0, [0]), pt(1), pt(2, [0, 1, 2])], ['A', 'C', 'B']);
    const second = blockPoints([pt(3, undefined, 'refused'), pt(4, [0]), pt(5, [1, 2])], ['B', 'C', 'D']);
    expect(first[2]).toMatchObject({ warningTexts: ['A', 'C', 'B'] });
    expect('warnings' in first[2]).toBe(false);
    const merged = mergeScanBlocks(head(['W']), [first, second]);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(one));
  });

  it('keeps the frame of the head and its own warnings when no point warns', () => {
    const merged = mergeScanBlocks(head(['W1', 'W2']), [blockPoints([pt(0), pt(1)], []), blockPoints([pt(2)], [])]);
    expect(merged.warnings).toEqual(['W1', 'W2']);
    expect(merged.points.map((p) => p.index[0])).toEqual([0, 1, 2]);
    expect(merged.points.every((p) => !('warnings' in p) && !('warningTexts' in p))).toBe(true);
    expect(Object.keys(merged)).toEqual(['format', 'version', 'title', 'parameters', 'detectors', 'points', 'warnings']);
  });
});
