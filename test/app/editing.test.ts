import { describe, it, expect } from 'vitest';
import { documentDirty, moveGap, parseEps, problemsFor } from '../../src/app/editing.ts';
import { getAt, pathKeys } from '../../src/app/doc-path.ts';
import { lineTree, unreached } from '../../src/app/line-tree.ts';
import { newDocument } from '../../src/app/default-doc.ts';

describe('parseEps', () => {
  it('reads percent and fractions, refuses values outside (0, 1)', () => {
    expect(parseEps('1 %')).toBeCloseTo(0.01, 15);
    expect(parseEps('0.5%')).toBeCloseTo(0.005, 15);
    expect(parseEps('0.02')).toBe(0.02);
    expect(parseEps('1e-3')).toBe(0.001);
    expect(parseEps('0')).toBeUndefined();
    expect(parseEps('150 %')).toBeUndefined();
    expect(parseEps('one')).toBeUndefined();
  });
});

describe('moveGap', () => {
  it('moves by whole µm and refuses a negative gap', () => {
    expect(moveGap(0.05, 0.005)).toBe('55 mm');
    expect(moveGap(0, 0.0001)).toBe('0.1 mm');
    expect(moveGap(0.002, -0.005)).toBeUndefined();
  });
});

describe('problemsFor', () => {
  it('names the problems at the edited path first', () => {
    const ps = [{ path: 'elements[1].axis.roll', message: 'expected an angle' }, { path: 'elements[3]', message: 'x' }];
    expect(problemsFor(ps, 'elements[1].axis.roll')).toBe('expected an angle');
    expect(problemsFor(ps, 'oven.flux')).toBe('elements[1].axis.roll: expected an angle; elements[3]: x');
  });
});

describe('doc paths', () => {
  it('reads the paths the document layer reports', () => {
    const doc = newDocument();
    expect(pathKeys('elements[0].ports["+1/2"]')).toEqual(['elements', 0, 'ports', '+1/2']);
    expect(getAt(doc, 'elements[1].axis.roll')).toBe('60 deg');
    expect(getAt(doc, 'elements[0].ports["-1/2"]')).toBe('stop');
    expect(getAt(doc, 'oven.velocity.speed')).toBe('600 m/s');
    expect(getAt(doc, 'elements[9].id')).toBeUndefined();
    expect(pathKeys('bad path!')).toBeUndefined();
  });
});

describe('lineTree', () => {
  it('nests ports under magnets and shows a shared element once, then as a reference', () => {
    const doc = newDocument();
    (doc.elements[1] as { ports: Record<string, string> }).ports['-1/2'] = 'D1';
    const tree = lineTree(doc);
    expect(tree.map((t) => t.id)).toEqual(['M1']);
    const m2 = tree[0].ports![0].branch[0];
    expect(m2.id).toBe('M2');
    expect(m2.ports!.map((p) => p.branch[0]).map((b) => [b.id, b.shared])).toEqual([['D1', false], ['D1', true]]);
    expect(unreached(doc, tree)).toEqual(['D2']);
  });
});

describe('documentDirty', () => {
  it('a new document is unsaved once edited, and clean again when undone to the start', () => {
    expect(documentDirty({ kind: 'new' }, 'a', 0)).toBe(false);
    expect(documentDirty({ kind: 'new' }, 'b', 1)).toBe(true);
  });
  it('a saved document is unsaved while its text differs from the file', () => {
    expect(documentDirty({ kind: 'saved', text: 'a' }, 'a', 3)).toBe(false);
    expect(documentDirty({ kind: 'saved', text: 'a' }, 'b', 0)).toBe(true);
  });
  it('a recovered draft is unsaved until it is saved, with or without edits', () => {
    expect(documentDirty({ kind: 'recovered' }, 'a', 0)).toBe(true);
    expect(documentDirty({ kind: 'recovered' }, 'a', 2)).toBe(true);
  });
});
