import { describe, it, expect } from 'vitest';
import { canRedo, canUndo, historyPush, historyRedo, historyStart, historyUndo } from '../../src/app/history.ts';

describe('history', () => {
  it('undoes and redoes edits in order', () => {
    const a = { v: 1 }, b = { v: 2 }, c = { v: 3 };
    let h = historyPush(historyPush(historyStart(a), b), c);
    expect(h.present).toBe(c);
    h = historyUndo(h);
    expect(h.present).toBe(b);
    h = historyUndo(h);
    expect(h.present).toBe(a);
    expect(canUndo(h)).toBe(false);
    expect(historyUndo(h)).toBe(h);
    h = historyRedo(h);
    expect(h.present).toBe(b);
    h = historyRedo(h);
    expect(h.present).toBe(c);
    expect(canRedo(h)).toBe(false);
  });

  it('drops the redo list on a new edit and ignores an edit to the same value', () => {
    const a = { v: 1 }, b = { v: 2 }, d = { v: 4 };
    let h = historyUndo(historyPush(historyStart(a), b));
    expect(canRedo(h)).toBe(true);
    h = historyPush(h, d);
    expect(canRedo(h)).toBe(false);
    expect(h.past).toEqual([a]);
    expect(historyPush(h, d)).toBe(h);
  });

  it('keeps at most `limit` past documents', () => {
    let h = historyStart(0);
    for (let i = 1; i <= 10; i++) h = historyPush(h, i, 3);
    expect(h.past).toEqual([7, 8, 9]);
    expect(h.present).toBe(10);
  });
});
