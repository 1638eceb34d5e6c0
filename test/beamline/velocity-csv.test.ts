// A measured velocity table from CSV: columns found by their header names, the speed's unit from the header,
// every refusal with its line and column.
import { describe, expect, it } from 'vitest';
import { readVelocityCsv } from '../../src/beamline/velocity-csv.ts';

function ok(text: string) {
  const r = readVelocityCsv(text);
  if (!r.ok) throw new Error(r.message);
  return r;
}
function refused(text: string): string {
  const r = readVelocityCsv(text);
  if (r.ok) throw new Error('expected a refusal');
  return r.message;
}

describe('readVelocityCsv', () => {
  it('reads speed and weight columns, keeping the numbers as written with the header\'s unit', () => {
    const r = ok('speed (m/s),weight\n250,0.1\n300.5,0.25\n1e3,0\n');
    expect(r.points).toEqual([['250 m/s', 0.1], ['300.5 m/s', 0.25], ['1e3 m/s', 0]]);
    expect(r.notes).toEqual([]);
  });
  it('takes other separators, units in square brackets, comments, a BOM, CRLF and extra columns', () => {
    const r = ok('\uFEFF# chopper run 7, bench H oven at 420 K\r\ntime [us];v [km/s];counts;w\r\n1;0.31;10;2\r\n2;0.42;12;3\r\n');
    expect(r.points).toEqual([['0.31 km/s', 10], ['0.42 km/s', 12]]);
    expect(r.notes).toEqual(['columns left alone: time, w']);
  });
  it('sorts a table written in decreasing speed (time of flight) and says so', () => {
    const r = ok('speed (m/s)\tweight\n600\t1\n400\t2\n200\t3\n');
    expect(r.points).toEqual([['200 m/s', 3], ['400 m/s', 2], ['600 m/s', 1]]);
    expect(r.notes).toContain('rows sorted by increasing speed');
  });
  it('refuses a speed column without a unit, or with a unit that is not a speed', () => {
    expect(refused('speed,weight\n300,1\n')).toBe('line 1: the speed column "speed" gives no unit: write it in brackets, e.g. "speed (m/s)"');
    expect(refused('speed (K),weight\n300,1\n')).toMatch(/^line 1: the speed column's unit "K" is not a speed/);
  });
  it('refuses a header without the columns it needs, naming the ones it has', () => {
    expect(refused('time (s),weight\n1,2\n')).toBe('line 1: no speed column in the header (time (s), weight): name one "speed (m/s)"');
    expect(refused('speed (m/s),time (s)\n1,2\n')).toMatch(/no weight column/);
    expect(refused('\n\n# nothing\n')).toMatch(/no header row/);
  });
  it('names the line and the column of a cell it cannot take', () => {
    expect(refused('speed (m/s),weight\n300,1\nabc,2\n')).toBe('line 3, column 1 (speed): "abc" is not a number');
    expect(refused('speed (m/s);weight\n300,5;1\n')).toBe('line 2, column 1 (speed): "300,5" is not a number (write decimals with a point)');
    expect(refused('speed (m/s),weight\n300,\n')).toBe('line 2, column 2 (weight): empty');
    expect(refused('speed (m/s),weight\n-300,1\n')).toBe('line 2, column 1 (speed): a speed must be positive, got -300 m/s');
    expect(refused('speed (m/s),weight\n300,-1\n')).toBe('line 2, column 2 (weight): a weight must be 0 or more, got -1');
  });
  it('refuses a repeated speed, a table of zero weights and a header without rows', () => {
    expect(refused('speed (m/s),weight\n300,1\n200,1\n300,2\n')).toMatch(/^lines 2 and 4: the same speed 300 m\/s twice/);
    expect(refused('speed (m/s),weight\n300,0\n400,0\n')).toMatch(/every weight is 0/);
    expect(refused('speed (m/s),weight\n')).toMatch(/no rows/);
  });
});
