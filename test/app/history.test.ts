import { describe, it, expect } from 'vitest';
import { canRedo, canUndo, historyPush, historyRedo, historyStart, historyUndo, redoLabel, undoLabel } from '../../src/app/history.ts';

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

  it('keeps the label of each edit for Undo and Redo, through undo, redo, a new edit and the limit', () => {
    let h = historyPush(historyPush(historyStart('a'), 'b', { label: 'edit b' }), 'c', { label: 'edit c' });
    expect([undoLabel(h), redoLabel(h)]).toEqual(['edit c', '']);
    h = historyUndo(h);
    expect([h.present, undoLabel(h), redoLabel(h)]).toEqual(['b', 'edit b', 'edit c']);
    h = historyUndo(h);
    expect([h.present, undoLabel(h), redoLabel(h)]).toEqual(['a', '', 'edit b']);
    h = historyRedo(historyRedo(h));
    expect([h.present, undoLabel(h), redoLabel(h)]).toEqual(['c', 'edit c', '']);
    h = historyPush(historyUndo(h), 'd', { label: 'edit d', limit: 1 });
    expect(h.past).toEqual(['b']);
    expect(h.pastLabels).toEqual(['edit b']);
    expect([undoLabel(h), redoLabel(h)]).toEqual(['edit d', '']);
    expect(historyUndo(h).presentLabel).toBe('edit b'); // the oldest kept document keeps its label, though nothing is left to undo
    expect(undoLabel(historyUndo(h))).toBe('');
  });
});
