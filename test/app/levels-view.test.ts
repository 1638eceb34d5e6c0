// The levels panel's data: the engine's levels at each magnet's field with the port each level is sorted into
// and where that port goes. The energies are checked against the Breit–Rabi formula for J = 1/2, written here
// from its published form (G. Breit and I. I. Rabi, Phys. Rev. 38, 2082 (1931); as given in D. A. Steck,
// "Rubidium 87 D Line Data"): E(F = I ± 1/2, m) = −ΔE/(2(2I+1)) + g_I μB m B ± (ΔE/2) √(1 + 4mx/(2I+1) + x²),
// x = (g_J − g_I) μB B / ΔE, ΔE = A (I + 1/2). The species' numbers are the library's, so this checks the
// eigen-solution of the listing against the closed form, not the data.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDocument } from '../../src/app/core-adapter.ts';
import { breitRabiCurves, levelsView, portOfLevel, regroupPorts } from '../../src/app/levels-view.ts';
import { lookupSpecies, type AtomSpecies } from '../../src/species/index.ts';
import { BOHR_MAGNETON, PLANCK } from '../../src/physics/constants.ts';

function sample(name: string) {
  const r = readDocument(readFileSync(join(import.meta.dirname, '..', '..', 'samples', name), 'utf8'));
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
  return r.line;
}

const rb = lookupSpecies('Rb-87') as AtomSpecies;
const I = rb.i2 / 2;
const dE = rb.aHz.value * (I + 0.5);
const muB = BOHR_MAGNETON / PLANCK; // Hz/T
function breitRabi(upper: boolean, m: number, B: number): number {
  const x = ((rb.gJ.value - rb.gI.value) * muB * B) / dE;
  const root = Math.sqrt(1 + (4 * m * x) / (2 * I + 1) + x * x);
  // the stretched state m = −(I + 1/2) of the upper manifold takes the root's sign through 1 − x
  const r = upper && m === -(I + 0.5) ? 1 - x : root;
  return -dE / (2 * (2 * I + 1)) + rb.gI.value * muB * m * B + (upper ? 1 : -1) * (dE / 2) * r;
}

describe('levelsView', () => {
  const view = levelsView(sample('bench-h-rb87-mj-then-eigenstate.spinyard'));
  it('lists bench H\'s two magnets at their fields with their groups', () => {
    expect(view.ok).toBe(true);
    if (!view.ok) return;
    expect(view.magnets.map((m) => [m.id, m.field, m.group, m.rows.length])).toEqual([['M1', 0.5, 'mJ', 8], ['M2', 0.02, 'each', 8]]);
  });
  it('gives every level the Breit–Rabi energy at the magnet\'s field (to 1 Hz in GHz)', () => {
    if (!view.ok) throw new Error(view.message);
    for (const m of view.magnets) {
      for (const r of m.rows) {
        const f = /F=(\d),mF=([-+]?\d)/.exec(r.lowField)!;
        const want = breitRabi(Number(f[1]) === I + 0.5, Number(f[2]), m.field);
        expect(Math.abs(r.energy - want)).toBeLessThan(1);
      }
    }
  });
  it('marks M1\'s sorting by m_J (mJ=+1/2 to M2, the rest stopped) and M2\'s by eigenstate, F=2,mF=−2 on "*" (stop)', () => {
    if (!view.ok) throw new Error(view.message);
    const [m1, m2] = view.magnets;
    for (const r of m1.rows) expect([r.port, r.target]).toEqual(r.highField.startsWith('mJ=+1/2') ? ['mJ=+1/2', 'M2'] : ['mJ=-1/2', 'stop']);
    const byLabel = new Map(m2.rows.map((r) => [r.lowField, r.target]));
    expect(byLabel.get('F=2,mF=+2')).toBe('D1');
    expect(byLabel.get('F=2,mF=-1')).toBe('D4');
    expect(byLabel.get('F=2,mF=-2')).toBe('stop');
    expect(byLabel.get('F=1,mF=0')).toBe('stop');
  });
  it('sorts a magnet without a group as the engine does: bench G\'s silver (J = 1/2) by m_J, each port to its collector', () => {
    const v = levelsView(sample('bench-g-silver-split.spinyard'));
    if (!v.ok) throw new Error(v.message);
    const m1 = v.magnets[0];
    expect(m1.group).toBe('mJ');
    expect(new Set(m1.rows.map((r) => r.port))).toEqual(new Set(['mJ=+1/2', 'mJ=-1/2']));
    for (const r of m1.rows) expect(r.target).toBe(r.port === 'mJ=+1/2' ? 'DL' : 'DU');
  });
  it('says why a bare spin has no panel', () => {
    const v = levelsView(sample('bench-a-spin32-rotator.spinyard'));
    expect(v.ok).toBe(false);
  });
});

describe('portOfLevel and breitRabiCurves', () => {
  it('takes the low-field label for "each" and the m_J part of the high-field label for "mJ"', () => {
    const l = { lowField: 'F=2,mF=-1', highField: 'mJ=+1/2,mI=-3/2' };
    expect(portOfLevel(l, 'each')).toBe('F=2,mF=-1');
    expect(portOfLevel(l, 'mJ')).toBe('mJ=+1/2');
  });
  it('draws one continuous curve per level from 0 T: Rb-87 has 8, split by ΔE at 0 T', () => {
    const c = breitRabiCurves('Rb-87', 0.5, 50);
    expect(c.curves).toHaveLength(8);
    const up = c.curves.find((x) => x.name === 'F=2,mF=+2')!;
    const down = c.curves.find((x) => x.name === 'F=1,mF=0')!;
    expect(up.energy[0] - down.energy[0]).toBeCloseTo(dE, 0);
    c.curves.forEach((x) => x.energy.forEach((e, i) => expect(Math.abs(e - breitRabi(x.name.startsWith('F=2'), Number(/mF=([-+]?\d)/.exec(x.name)![1]), c.fields[i]))).toBeLessThan(1)));
  });
});

describe('regroupPorts', () => {
  const line = sample('bench-h-rb87-mj-then-eigenstate.spinyard');
  it('carries M1\'s m_J ports over to its eigenstates at 0.5 T: the four with m_J = +1/2 go on to M2', () => {
    const r = regroupPorts(line, 'M1', 'each');
    expect(r).toEqual({ ok: true, ports: { 'F=2,mF=+2': 'M2', 'F=2,mF=+1': 'M2', 'F=2,mF=0': 'M2', 'F=2,mF=-1': 'M2', '*': 'stop' } });
  });
  it('refuses to sort M2 by m_J: its m_J = +1/2 eigenstates go to four collectors', () => {
    const r = regroupPorts(line, 'M2', 'mJ');
    expect(r?.ok).toBe(false);
    if (r && !r.ok) expect(r.message).toMatch(/^sorting M2 by m_J would put F=2,mF=\+2 \(to D1\) and F=2,mF=\+1 \(to D2\)/);
  });
  it('has nothing to do for the same group or an unknown magnet', () => {
    expect(regroupPorts(line, 'M1', 'mJ')).toBeUndefined();
    expect(regroupPorts(line, 'X', 'each')).toBeUndefined();
  });
});
