import { describe, expect, it } from 'vitest';
import { bareLine } from './examples.ts';
import { check, lines, ok, rbLine } from './helpers.ts';

describe('readOven: velocity tables', () => {
  const withTable = (points: unknown) => {
    const d = bareLine();
    d.oven.velocity = { kind: 'table', points };
    return d;
  };
  it('normalises the weights by their sum', () => {
    const r = ok(check(withTable([['300 m/s', 1], ['400 m/s', 3]])));
    expect(r.line.oven.velocity).toEqual({ kind: 'table', points: [[300, 0.25], [400, 0.75]] });
  });
  it('rejects an empty table', () => {
    expect(lines(withTable([]))).toEqual(['oven.velocity.points: the velocity table is empty: give at least one [speed, weight] pair']);
  });
  it('rejects negative speeds and weights', () => {
    expect(lines(withTable([['-300 m/s', 1], ['400 m/s', -3]]))).toEqual([
      'oven.velocity.points[0][0]: a speed must be positive, got -300 m/s',
      'oven.velocity.points[1][1]: a weight must not be negative, got -3',
    ]);
  });
  it('rejects an unsorted table', () => {
    expect(lines(withTable([['400 m/s', 1], ['300 m/s', 1]]))).toEqual([
      'oven.velocity.points[1]: the table is not sorted by speed: 300 m/s follows 400 m/s (speeds must increase strictly)',
    ]);
  });
  it('rejects zero total weight', () => {
    expect(lines(withTable([['300 m/s', 0], ['400 m/s', 0]]))).toEqual(['oven.velocity.points: the weights of the velocity table sum to 0']);
  });
  it('rejects a point that is not a pair and a speed without unit', () => {
    expect(lines(withTable([['300 m/s'], [400, 1]]))).toEqual([
      'oven.velocity.points[0]: expected a [speed, weight] pair, got a list',
      'oven.velocity.points[1][0]: expected a speed, got the plain number 400 with no unit (write e.g. "600 m/s")',
    ]);
  });
});

describe('readOven: state', () => {
  it('reads pure and populations states with the species labels', () => {
    const d = rbLine();
    d.oven.state = { kind: 'pure', axis: { roll: '0 deg' }, m: 'F=2,mF=+2' };
    expect(ok(check(d)).line.oven.state).toMatchObject({ kind: 'pure', m: 'F=2,mF=+2' });
    d.oven.state = { kind: 'populations', axis: { roll: '0 deg' }, p: { 'F=2,mF=+2': 0.7, 'F=1,mF=-1': 0.3 } };
    expect(ok(check(d)).line.oven.state).toMatchObject({ kind: 'populations', p: { 'F=2,mF=+2': 0.7, 'F=1,mF=-1': 0.3 } });
  });
  it('rejects a state label the species does not have', () => {
    const d = rbLine();
    d.oven.state = { kind: 'pure', axis: { roll: '0 deg' }, m: '+1/2' };
    expect(lines(d)[0]).toMatch(/^oven\.state\.m: no state "\+1\/2" for this species; its states are F=2,mF=\+2, /);
  });
  it('normalises populations with a warning and rejects negative ones', () => {
    const d = bareLine();
    d.oven.state = { kind: 'populations', axis: { roll: '0 deg' }, p: { '+1/2': 2, '-1/2': 2 } };
    const r = ok(check(d));
    expect(r.line.oven.state).toMatchObject({ p: { '+1/2': 0.5, '-1/2': 0.5 } });
    expect(r.warnings).toEqual([{ path: 'oven.state.p', message: 'the populations sum to 4; normalised to 1' }]);
    d.oven.state.p = { '+1/2': -1 };
    expect(lines(d)).toEqual(['oven.state.p["+1/2"]: a population must not be negative, got -1']);
  });
});

