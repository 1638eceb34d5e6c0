import { describe, expect, it } from 'vitest';
import { bareLabels, defaultGroup, isHyperfine, mText, portLabels, stateLabels } from '../../src/beamline/labels.ts';
import { ag, cs133, he3m, he4m, rb, rb87 } from './fakeSpecies.ts';

describe('mText', () => {
  it('writes m with its sign, integers without /2 and zero as "0"', () => {
    expect([1, -1, 2, 0, -2, 3, -5].map(mText)).toEqual(['+1/2', '-1/2', '+1', '0', '-1', '+3/2', '-5/2']);
  });
});

describe('portLabels', () => {
  it('orders a bare spin m from +j to −j', () => {
    expect(bareLabels(1)).toEqual(['+1/2', '-1/2']);
    expect(portLabels({ kind: 'bare', j2: 2 })).toEqual(['+1', '0', '-1']);
    expect(portLabels({ kind: 'bare', j2: 3 })).toEqual(['+3/2', '+1/2', '-1/2', '-3/2']);
    expect(portLabels({ kind: 'bare', j2: 0 })).toEqual(['0']);
  });

  it('gives Rb-87 (I = 3/2, J = 1/2; Steck, Rb-87 D line data) F = 2 and F = 1 states', () => {
    expect(portLabels(rb87, 'each')).toEqual([
      'F=2,mF=+2', 'F=2,mF=+1', 'F=2,mF=0', 'F=2,mF=-1', 'F=2,mF=-2', 'F=1,mF=+1', 'F=1,mF=0', 'F=1,mF=-1',
    ]);
    expect(portLabels(rb87, 'mJ')).toEqual(['mJ=+1/2', 'mJ=-1/2']);
  });

  it('has (2I+1)(2J+1) states for Cs-133 (I = 7/2, J = 1/2: F = 4, 3)', () => {
    const l = stateLabels(cs133);
    expect(l).toHaveLength(16);
    expect(l[0]).toBe('F=4,mF=+4');
    expect(l[l.length - 1]).toBe('F=3,mF=-3');
  });

  it('writes half-integer F as F=3/2 (He-3* 2³S1: I = 1/2, J = 1)', () => {
    expect(stateLabels(he3m)).toEqual(['F=3/2,mF=+3/2', 'F=3/2,mF=+1/2', 'F=3/2,mF=-1/2', 'F=3/2,mF=-3/2', 'F=1/2,mF=+1/2', 'F=1/2,mF=-1/2']);
  });

  it('defaults the group to mJ where J = 1/2, else each', () => {
    expect(defaultGroup(rb87)).toBe('mJ');
    expect(portLabels(rb87)).toEqual(['mJ=+1/2', 'mJ=-1/2']);
    expect(defaultGroup(he3m)).toBe('each');
    expect(portLabels(he3m)).toHaveLength(6);
    expect(portLabels(he3m, 'mJ')).toEqual(['mJ=+1', 'mJ=0', 'mJ=-1']);
  });

  it('treats an atom without nuclear spin (He-4* 2³S1, J = 1) as a bare spin', () => {
    expect(isHyperfine(he4m)).toBe(false);
    expect(portLabels(he4m)).toEqual(['+1', '0', '-1']);
  });

  it('unites the isotopes of a mixture (Rb: Rb-85 F = 3, 2; Rb-87 F = 2, 1)', () => {
    const l = stateLabels(rb);
    expect(l).toHaveLength(7 + 5 + 3);
    expect(l[0]).toBe('F=3,mF=+3');
    expect(l).toContain('F=1,mF=-1');
    expect(stateLabels(ag)).toEqual(['F=1,mF=+1', 'F=1,mF=0', 'F=1,mF=-1', 'F=0,mF=0']);
  });
});
