// A scan dealt out over a pool of workers (plan-client.ts) and put back together: the points in contiguous blocks in
// scan order (as `spinyard scan --workers N` deals them, src/cli/scan-parallel.ts), each block's points with their
// warnings by text, and the merge that numbers the warnings by their first appearance in scan order after the
// document's own, as a scan in one worker numbers them (scanResult of the engine). A point's numbers do not depend on
// the worker that evaluated it, so the merged result is the one worker's, key for key and bit for bit.
import type { ScanPoint, ScanResult } from './core-adapter.ts';
import type { BlockPoint, ScanBlock } from './engine-protocol.ts';

/** The planning pool's size (scans, long budgets): one worker per core but one (the live run keeps its own), at most 4, at least 1. */
export function scanPoolSize(cores: number | undefined): number {
  const n = Number.isFinite(cores) ? Math.floor(cores as number) : 1;
  return Math.max(1, Math.min(n - 1, 4));
}

/** The points 0 … total − 1 in at most `workers` contiguous blocks of ⌈total / workers⌉ (the last one shorter), in order. */
export function scanBlocks(total: number, workers: number): ScanBlock[] {
  const n = Math.max(1, Math.min(Math.floor(workers), total));
  const size = Math.ceil(total / n);
  const out: ScanBlock[] = [];
  for (let start = 0; start < total; start += size) out.push({ start, end: Math.min(total, start + size) });
  return out;
}

/** A block's points with their warnings as texts: `texts` lists the warning texts by the index the block numbered them. */
export function blockPoints(points: readonly ScanPoint[], texts: readonly string[]): BlockPoint[] {
  return points.map((p) => {
    const { warnings, ...rest } = p;
    return warnings ? { ...rest, warningTexts: warnings.map((i) => texts[i]) } : rest;
  });
}

/**
 * The scan's result from its blocks in scan order: the frame of `head` (parameters, title, detectors, the document's
 * own warnings), every block's points in turn, each point's warnings numbered by their first appearance in scan
 * order after the document's own (a point's new warnings in the order it met them) and sorted, as one worker has them.
 */
export function mergeScanBlocks(head: ScanResult, blocks: readonly (readonly BlockPoint[])[]): ScanResult {
  const own = head.warnings.length;
  const list = [...head.warnings];
  const index = new Map<string, number>();
  const points: ScanPoint[] = [];
  for (const block of blocks) {
    for (const p of block) {
      const { warningTexts, ...point } = p as BlockPoint & { warnings?: number[] };
      if (warningTexts) {
        point.warnings = warningTexts.map((t) => {
          let i = index.get(t);
          if (i === undefined) {
            index.set(t, (i = index.size));
            list[own + i] = t;
          }
          return own + i;
        }).sort((a, b) => a - b);
      }
      points.push(point);
    }
  }
  return { ...head, points, warnings: list };
}
