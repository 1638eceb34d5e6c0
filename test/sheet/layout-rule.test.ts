import { describe, it, expect } from 'vitest';
import { branchLayout, type RuleElement } from '../../src/sheet/layout-rule.ts';

// The branch layout shared by the setup sheet and the app's schematic, on a line written by hand (cm):
// M1 (0–4) sends +1 to T1 (9–14) and −1 to T2 (9–10): two twists of different lengths, so two rows;
// T1 → MA (19–23) → DA0, DA1 (both at 23: one mark); T2 → MS (15–19) → DS0 (19); X is not reached.
const el = (id: string, kind: string, entrance: number, length: number, routes: [string, string][]): RuleElement =>
  ({ id, kind, entrance, length, routes: routes.map(([port, target]) => ({ port, target })) });
const line: RuleElement[] = [
  el('M1', 'magnet', 0, 4, [['0', 'stop'], ['+1', 'T1'], ['-1', 'T2']]),
  el('T1', 'twist', 9, 5, [['', 'MA']]),
  el('T2', 'twist', 9, 1, [['', 'MS']]),
  el('MS', 'magnet', 15, 4, [['*', 'DS0']]),
  el('MA', 'magnet', 19, 4, [['0', 'DA0'], ['+1', 'DA1']]),
  el('DS0', 'detector', 19, 0, []),
  el('DA0', 'detector', 23, 0, []),
  el('DA1', 'detector', 23, 0, []),
  el('X', 'slit', 30, 0, []),
];

describe('branchLayout', () => {
  it('continues a row with the first target, opens a row below for any other, and groups siblings on one plane', () => {
    const { rowOf, rows, marks } = branchLayout(line, 'M1', 1e-6);
    expect(Object.fromEntries(rowOf)).toEqual({ M1: 0, T1: 0, MA: 0, DA0: 0, DA1: 0, T2: 1, MS: 1, DS0: 1, X: 2 });
    expect(rows[1]).toEqual({ parent: 0, from: 4, to: 19, origin: { id: 'M1', ports: ['-1'], first: 'T2' } });
    expect(rows[2]).toMatchObject({ parent: -1, from: 30 });
    expect(marks.find((m) => m.ids.includes('DA0'))!.ids).toEqual(['DA0', 'DA1']);
    // the two twists stand at one place but are not one mark: they are on different rows
    expect(marks.filter((m) => m.kind === 'twist').map((m) => m.row)).toEqual([0, 1]);
  });

  it('puts a same-kind target at the same place as the first into the same row (detectors on one plane)', () => {
    const fork = [el('M', 'magnet', 0, 2, [['a', 'D1'], ['b', 'D2'], ['c', 'R']]), el('D1', 'detector', 2, 0, []), el('D2', 'detector', 2, 0, []), el('R', 'rotator', 2, 0, [['', 'stop']])];
    const { rowOf, marks } = branchLayout(fork, 'M', 1e-6);
    expect(Object.fromEntries(rowOf)).toEqual({ M: 0, D1: 0, D2: 0, R: 1 });
    expect(marks.map((m) => m.ids)).toEqual([['M'], ['D1', 'D2'], ['R']]);
  });
});
