import { describe, expect, it } from 'vitest';
import { bareLine } from './examples.ts';
import { check, lines, ok, rbLine } from './helpers.ts';

describe('readSpecies', () => {
  it.each([['1/2', 1], ['3/2', 3], ['1', 2], [1, 2], [0.5, 1], [0, 0]])('reads spin %j as 2j = %i', (spin, j2) => {
    const d = bareLine();
    d.species.spin = spin;
    for (const e of d.elements) if (e.kind === 'magnet') e.ports = { '*': e.ports['+1/2'] };
    const r = ok(check(d));
    expect(r.line.species).toMatchObject({ kind: 'bare', j2 });
  });
  it.each([['2/3'], [-1], ['-1/2'], ['x'], [true]])('rejects spin %j', (spin) => {
    const d = bareLine();
    d.species.spin = spin;
    expect(lines(d)[0]).toMatch(/^species\.spin: (a spin j must have 2j a non-negative integer|expected a spin)/);
  });
  it('rejects an unknown species name and lists the known ones', () => {
    const d = rbLine();
    d.species = 'Rb87';
    expect(lines(d)[0]).toBe('species: unknown species "Rb87" (did you mean "Rb-87"?); known: Rb-87, Rb-85, Cs-133, Ag-107, Ag-109, He-4*, He-3*, Rb, Ag');
  });
  it('rejects a non-positive mass and a unitless mass', () => {
    const d = bareLine();
    d.species.mass = '-3 u';
    expect(lines(d)).toEqual(['species.mass: the mass must be positive, got -3 u']);
    d.species.mass = 106.9;
    expect(lines(d)[0]).toMatch(/species\.mass: expected a mass, got the plain number 106\.9 with no unit/);
  });
});

