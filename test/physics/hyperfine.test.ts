import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import {
  hyperfineHamiltonianHz, zeemanLevels, zeroFieldStates, mjSortCleanField, gF, zeroFieldEnergyHz,
  hyperfineSplittingHz, MU_B_OVER_H, zeemanEigen, type HyperfineParams,
} from '../../src/physics/hyperfine.ts';
import { eigh } from '../../src/physics/eigh.ts';
import { compositeSpin, spinOperators, spinSquared } from '../../src/physics/spin.ts';
import { cmatMul, cmatDagger, cmatKron, cmatIdentity, cmatAdd, cmatTrace, cmatMaxAbsDiff, cmatHermiticityError, type CMat } from '../../src/physics/cmat.ts';
import { unitarityError } from '../../src/physics/eigh.ts';
import { rotationToAxis, axisFromAngles, type Vec3 } from '../../src/physics/rotation.ts';

// Parameters as in ../shared/reference-data.md §1 (sources named there: Steck via pylcp/ElecSus,
// SI second, Tiecke, pylcp); written out here so the physics layer is tested without the species layer.
const CS: HyperfineParams = { i2: 7, j2: 1, gJ: 2.00254032, gI: -0.00039885395, aHz: 9192631770 / 4 };
const RB87: HyperfineParams = { i2: 3, j2: 1, gJ: 2.00233113, gI: -0.0009951414, aHz: 3417.341305452145e6 };
const H1: HyperfineParams = { i2: 1, j2: 1, gJ: 2.0022838, gI: -3.0420644046e-3, aHz: 1420.405751768e6 };
const K40: HyperfineParams = { i2: 8, j2: 1, gJ: 2.00229421, gI: 0.000176490, aHz: -285.7308e6 };
const LI6: HyperfineParams = { i2: 2, j2: 1, gJ: 2.0023010, gI: -0.0004476540, aHz: 152.1368407e6 };
const Z: Vec3 = { x: 0, y: 0, z: 1 };

/** 2F, 2m_F from a label "F=9/2,mF=-7/2". */
function parseLow(label: string): { f2: number; m2: number } {
  const m = /^F=(\d+)(\/2)?,mF=([+-]?\d+)(\/2)?$/.exec(label)!;
  return { f2: m[2] ? +m[1] : 2 * +m[1], m2: m[4] ? +m[3] : 2 * +m[3] };
}

/**
 * Breit–Rabi formula (G. Breit and I. I. Rabi, Phys. Rev. 38, 2082 (1931)), J = ½:
 * E(F = I ± ½, m) = −ΔE/(2(2I+1)) + g_I μB m B ± (ΔE/2)√(1 + 4mx/(2I+1) + x²), x = (g_J − g_I)μB B/ΔE,
 * ΔE = A(I+½) (signed). For m = ±(I+½) (one state) the square root is read as (1 ± x) with its sign.
 */
function breitRabi(p: HyperfineParams, f2: number, m2: number, b: number): number {
  const I = p.i2 / 2, m = m2 / 2;
  const dE = p.aHz * (I + 0.5);
  const x = ((p.gJ - p.gI) * MU_B_OVER_H * b) / dE;
  const base = -dE / (2 * (2 * I + 1)) + p.gI * MU_B_OVER_H * m * b;
  if (Math.abs(m2) === p.i2 + 1) return base + (dE / 2) * (1 + Math.sign(m) * x);
  const root = Math.sqrt(1 + (4 * m * x) / (2 * I + 1) + x * x);
  return base + (f2 === p.i2 + 1 ? 1 : -1) * (dE / 2) * root;
}

function fieldsUpTo2T(): number[] {
  const out = [0];
  for (let k = -6; k <= 0; k++) for (const s of [1, 2, 5]) out.push(s * 10 ** k);
  out.push(2);
  return out;
}

describe('hyperfineHamiltonianHz', () => {
  it('is Hermitian and traceless (A I·J, Zeeman and quadrupole terms), d = (2I+1)(2J+1)', () => {
    const q: HyperfineParams = { i2: 3, j2: 3, gJ: 1.3, gI: -0.001, aHz: 100e6, bHz: 20e6 };
    for (const p of [CS, RB87, K40, q]) {
      const h = hyperfineHamiltonianHz(p, { x: 0.1, y: -0.2, z: 0.3 });
      expect(h.rows).toBe((p.i2 + 1) * (p.j2 + 1));
      expect(cmatHermiticityError(h)).toBeLessThan(1e-6);
      expect(Math.abs(cmatTrace(h).re)).toBeLessThan(1e-6 * Math.abs(p.aHz));
    }
  });
  it('gives the zero-field energies E_F = A K/2 + B[(3/2)K(K+1) − 2I(I+1)J(J+1)]/[4I(2I−1)J(2J−1)] (Steck, Rb 87 D Line Data, Eq. 16)', () => {
    // I = 3/2, J = 3/2 with a quadrupole term (an excited-state-like case; Steck's 5²P3/2 form)
    const p: HyperfineParams = { i2: 3, j2: 3, gJ: 1.3362, gI: -0.0009951414, aHz: 84.7185e6, bHz: 12.4965e6 };
    const e = eigh(hyperfineHamiltonianHz(p, { x: 0, y: 0, z: 0 })).values;
    const expected: number[] = [];
    for (let f2 = 0; f2 <= 6; f2 += 2) {
      const I = 1.5, J = 1.5, F = f2 / 2;
      const K = F * (F + 1) - I * (I + 1) - J * (J + 1);
      const ef = (p.aHz * K) / 2 + (p.bHz! * (1.5 * K * (K + 1) - 2 * I * (I + 1) * J * (J + 1))) / (4 * I * (2 * I - 1) * J * (2 * J - 1));
      for (let k = 0; k <= f2; k++) expected.push(ef);
      expect(zeroFieldEnergyHz(p, f2)).toBeCloseTo(ef, 3);
    }
    expected.sort((a, b) => a - b);
    for (let k = 0; k < 16; k++) expect(Math.abs(e[k] - expected[k])).toBeLessThan(1e-6);
  });
  it('rejects a quadrupole constant where I < 1 or J < 1', () => {
    expect(() => hyperfineHamiltonianHz({ ...RB87, bHz: 1e6 }, Z)).toThrow(/quadrupole constant B applies only where I ≥ 1 and J ≥ 1/);
  });
  it('is g μB J·B for a bare spin (i2 = 0)', () => {
    const h = hyperfineHamiltonianHz({ i2: 0, j2: 1, gJ: 2.00231930436, gI: 0, aHz: 0 }, { x: 0, y: 0, z: 1 });
    expect(h.re[0]).toBeCloseTo(0.5 * 2.00231930436 * MU_B_OVER_H, 3);
    expect(h.re[3]).toBeCloseTo(-0.5 * 2.00231930436 * MU_B_OVER_H, 3);
  });
});

describe('zero-field splittings A(I+½)', () => {
  it('Cs-133: 9 192 631 770 Hz exactly (SI definition of the second)', () => {
    const e = zeemanLevels(CS, 0, Z).values;
    expect(hyperfineSplittingHz(CS)).toBe(9192631770);
    expect(Math.abs(e[15] - e[0] - 9192631770)).toBeLessThan(1e-6);
  });
  it('H: 1 420 405 751.768 Hz (hydrogen maser line, reference-data.md §1, HFS compilation V2)', () => {
    const e = zeemanLevels(H1, 0, Z).values;
    expect(Math.abs(e[3] - e[0] - 1420405751.768)).toBeLessThan(1e-6);
  });
  it('Rb-87: 6 834 682 610.904 Hz (D. A. Steck, Rubidium 87 D Line Data; full value 6 834 682 610.904 290 Hz, digits after .904 from memory)', () => {
    const e = zeemanLevels(RB87, 0, Z).values;
    expect(Math.abs(e[7] - e[0] - 6834682610.904)).toBeLessThan(5e-4);
    expect(Math.abs(e[7] - e[0] - 6834682610.90429)).toBeLessThan(1e-6);
  });
  it('K-40: inverted, A(I+½) = −1285.7886 MHz (Tiecke, Properties of Potassium; computed in reference-data.md)', () => {
    const lv = zeemanLevels(K40, 0, Z).levels;
    expect(lv[0].lowField).toBe('F=9/2,mF=+9/2');
    expect(lv[17].lowField).toBe('F=7/2,mF=-7/2');
    expect(Math.abs(lv[17].energyHz - lv[0].energyHz - 1285.7886e6)).toBeLessThan(1e-6);
  });
});

describe('zeemanLevels: Breit–Rabi (Phys. Rev. 38, 2082 (1931)), J = ½, B from 0 to 2 T', () => {
  for (const [name, p] of [['H', H1], ['Rb-87', RB87], ['Cs-133', CS], ['K-40 (A < 0)', K40], ['Li-6 (I = 1)', LI6]] as const) {
    it(`${name}: every level matches E(F, m_F) to 1e-9 of max(|E|, |ΔE|)`, () => {
      const dE = Math.abs(p.aHz * (p.i2 / 2 + 0.5));
      let worst = 0;
      for (const b of fieldsUpTo2T()) {
        for (const axis of [Z, axisFromAngles(1.1, 0.4)]) {
          const { levels } = zeemanLevels(p, b, axis);
          const seen = new Set<string>();
          for (const l of levels) {
            seen.add(l.lowField);
            const { f2, m2 } = parseLow(l.lowField);
            expect(m2).toBe(l.mF2);
            const e = breitRabi(p, f2, m2, b);
            worst = Math.max(worst, Math.abs(l.energyHz - e) / Math.max(Math.abs(e), dE));
          }
          expect(seen.size).toBe(levels.length);
        }
      }
      expect(worst).toBeLessThan(1e-9);
    });
  }

  it('the stretched state F=I+½, m_F=−(I+½) is |m_J=−½, m_I=−I⟩ with energy linear in B below and above x = 1 (the trap)', () => {
    for (const p of [RB87, CS, LI6, H1]) {
      const I = p.i2 / 2;
      const dE = p.aHz * (I + 0.5);
      const bx1 = dE / ((p.gJ - p.gI) * MU_B_OVER_H);
      const half = (x2: number) => (x2 % 2 === 0 ? `${x2 / 2}` : `${x2}/2`);
      const label = `F=${half(p.i2 + 1)},mF=-${half(p.i2 + 1)}`;
      for (const f of [0.3, 0.9, 0.999, 1.001, 1.5, 3]) {
        const b = f * bx1;
        const l = zeemanLevels(p, b, Z).levels.find((x) => x.mF2 === -(p.i2 + 1))!;
        expect(l.lowField).toBe(label);
        expect(l.highField).toBe(`mJ=-1/2,mI=-${half(p.i2)}`);
        const linear = -dE / (2 * (2 * I + 1)) - p.gI * MU_B_OVER_H * (I + 0.5) * b + (dE / 2) * (1 - (b * (p.gJ - p.gI) * MU_B_OVER_H) / dE);
        expect(Math.abs(l.energyHz - linear)).toBeLessThan(1e-9 * dE);
        // the naive +√(1 − 2x + x²) = |1 − x| would differ above x = 1
        if (f >= 1.5) expect(Math.abs(l.energyHz - (-dE / (2 * (2 * I + 1)) - p.gI * MU_B_OVER_H * (I + 0.5) * b + (dE / 2) * Math.abs(1 - f)))).toBeGreaterThan(1e-3 * dE);
      }
    }
  });

  it('K-40 (A < 0): F=9/2 lies below F=7/2 and continues into m_J = −½ (except the stretched m_F = +9/2)', () => {
    const lv = zeemanLevels(K40, 0.05, Z).levels;
    const by = (low: string) => lv.find((l) => l.lowField === low)!;
    expect(by('F=9/2,mF=+7/2').highField).toBe('mJ=-1/2,mI=+4');
    expect(by('F=7/2,mF=+7/2').highField).toBe('mJ=+1/2,mI=+3');
    expect(by('F=9/2,mF=+9/2').highField).toBe('mJ=+1/2,mI=+4');
    expect(by('F=9/2,mF=-9/2').highField).toBe('mJ=-1/2,mI=-4');
    expect(by('F=9/2,mF=+7/2').energyHz).toBeLessThan(by('F=7/2,mF=+7/2').energyHz);
  });
});

describe('zeemanLevels: Cs-133 at 0.8 T against the project-shared table of ../shared/peers/README.md (independent NumPy peer)', () => {
  const lv = zeemanLevels(CS, 0.8, Z).levels;
  const by = (low: string) => lv.find((l) => l.lowField === low)!;
  it('energies of the quoted levels (MHz, 3 decimals)', () => {
    expect(by('F=4,mF=+4').energyHz / 1e6).toBeCloseTo(15217.363, 3);
    expect(by('F=4,mF=-3').energyHz / 1e6).toBeCloseTo(7778.928, 3);
    expect(by('F=4,mF=-4').energyHz / 1e6).toBeCloseTo(-7173.811, 3);
    expect(by('F=3,mF=-3').energyHz / 1e6).toBeCloseTo(-8901.211, 3);
    expect(by('F=3,mF=+3').energyHz / 1e6).toBeCloseTo(-15560.527, 3);
  });
  it('port mJ=+1/2 holds F=4, m_F = −3 … +4; μ_eff ranges as quoted', () => {
    const up = lv.filter((l) => l.mJ2 === 1).map((l) => l.lowField).sort();
    expect(up).toEqual(['F=4,mF=+1', 'F=4,mF=+2', 'F=4,mF=+3', 'F=4,mF=+4', 'F=4,mF=-1', 'F=4,mF=-2', 'F=4,mF=-3', 'F=4,mF=0']);
    const muUp = lv.filter((l) => l.mJ2 === 1).map((l) => l.moment);
    expect(Math.max(...muUp)).toBeCloseTo(-0.91526, 5);
    expect(Math.min(...muUp)).toBeCloseTo(-0.99987, 5);
    expect(by('F=4,mF=-4').moment).toBeCloseTo(0.99987, 5);
    const muF3 = lv.filter((l) => l.F2 === 6).map((l) => l.moment);
    expect(Math.min(...muF3)).toBeCloseTo(0.91366, 5);
    expect(Math.max(...muF3)).toBeCloseTo(0.98180, 5);
  });
});

describe('zeemanLevels: structure', () => {
  it('vectors are unitary eigenvectors of the full H(B n̂), moments = −⟨g_J J_n + g_I I_n⟩ (Hellmann–Feynman)', () => {
    for (const p of [CS, RB87, K40]) {
      for (const b of [0, 1e-5, 0.01, 0.3, 1.2]) {
        const n = axisFromAngles(0.9, -2.1);
        const { levels, vectors, values } = zeemanLevels(p, b, n);
        expect(unitarityError(vectors)).toBeLessThan(1e-12);
        const h = hyperfineHamiltonianHz(p, { x: b * n.x, y: b * n.y, z: b * n.z });
        const hv = cmatMul(h, vectors);
        const scale = Math.abs(p.aHz) * 10 + MU_B_OVER_H * b * 3;
        for (let k = 0; k < values.length; k++) {
          for (let r = 0; r < values.length; r++) {
            const d = values.length;
            expect(Math.hypot(hv.re[r * d + k] - values[k] * vectors.re[r * d + k], hv.im[r * d + k] - values[k] * vectors.im[r * d + k])).toBeLessThan(1e-12 * scale);
          }
          if (k > 0) expect(values[k]).toBeGreaterThanOrEqual(values[k - 1] - 1e-12 * scale);
        }
        // Hellmann–Feynman by a finite difference of the energies of the same label
        if (b > 0) {
          const db = b * 1e-6;
          const up = zeemanLevels(p, b + db, n).levels, dn = zeemanLevels(p, b - db, n).levels;
          for (const l of levels) {
            const eu = up.find((x) => x.lowField === l.lowField)!.energyHz, ed = dn.find((x) => x.lowField === l.lowField)!.energyHz;
            expect(Math.abs(-(eu - ed) / (2 * db) / MU_B_OVER_H - l.moment)).toBeLessThan(1e-5);
          }
        }
      }
    }
  });
  it('at B = 0 the moment is the weak-field limit −g_F m_F along any axis (docs/design.md)', () => {
    for (const p of [CS, RB87, K40, LI6]) {
      for (const l of zeemanLevels(p, 0, axisFromAngles(0.4, 1.3)).levels) {
        expect(Math.abs(l.moment + gF(p, l.F2) * (l.mF2 / 2))).toBeLessThan(1e-12);
      }
    }
  });
  it('each level vector at B = 0 is the zero-field |F, m_F⟩ of zeroFieldStates with the same phase', () => {
    const n = axisFromAngles(1.2, 0.3);
    const zf = zeroFieldStates(RB87, n);
    const { levels } = zeemanLevels(RB87, 0, n);
    for (const l of levels) {
      const c = zf.labels.indexOf(l.lowField);
      let dr = 0;
      for (let r = 0; r < 8; r++) dr = Math.max(dr, Math.hypot(l.vector.re[r] - zf.vectors.re[r * 8 + c], l.vector.im[r] - zf.vectors.im[r * 8 + c]));
      expect(dr).toBeLessThan(1e-12);
    }
  });
  it('m_F along n̂ is exact: n̂·F v = m_F v', () => {
    const n = axisFromAngles(2.0, 0.7);
    const c = compositeSpin(CS.i2, CS.j2);
    const fn = cmatAdd(cmatAdd(scale(c.F.jx, n.x), scale(c.F.jy, n.y)), scale(c.F.jz, n.z));
    for (const l of zeemanLevels(CS, 0.2, n).levels) {
      const fv = cmatMul(fn, l.vector);
      for (let r = 0; r < 16; r++) expect(Math.hypot(fv.re[r] - (l.mF2 / 2) * l.vector.re[r], fv.im[r] - (l.mF2 / 2) * l.vector.im[r])).toBeLessThan(1e-12);
    }
  });
  it('bare spin: |j m⟩ along n̂, labels "+1/2" / "+1", "0", "-1", moment −g m', () => {
    const g = 2.00231930436;
    const lv = zeemanLevels({ i2: 0, j2: 2, gJ: g, gI: 0, aHz: 0 }, 0.01, axisFromAngles(0.5, 0)).levels;
    expect(lv.map((l) => l.lowField)).toEqual(['-1', '0', '+1']);
    expect(lv.map((l) => l.highField)).toEqual(['mJ=-1', 'mJ=0', 'mJ=+1']);
    lv.forEach((l) => expect(l.moment).toBeCloseTo(-g * (l.mF2 / 2), 12));
    const half = zeemanLevels({ i2: 0, j2: 1, gJ: g, gI: 0, aHz: 0 }, 0, Z).levels;
    expect(half.map((l) => l.lowField)).toEqual(['+1/2', '-1/2']);
  });
  it('rejects a negative field and a zero axis with messages naming them', () => {
    expect(() => zeemanLevels(CS, -1, Z)).toThrow(/field size must be a finite number ≥ 0 T, got -1/);
    expect(() => zeemanLevels(CS, 1, { x: 0, y: 0, z: 0 })).toThrow(/quantisation axis must be a non-zero/);
    expect(() => zeemanLevels({ ...CS, i2: 2.5 }, 1, Z)).toThrow(/2j must be a non-negative integer/);
  });
});

function scale(a: CMat, s: number): CMat {
  return { rows: a.rows, cols: a.cols, re: a.re.map((x) => x * s), im: a.im.map((x) => x * s) };
}

describe('zeroFieldStates', () => {
  it('are eigenstates of F² and n̂·F with the labelled F, m_F, F descending then m_F descending', () => {
    const n = axisFromAngles(0.8, 2.2);
    const c = compositeSpin(CS.i2, CS.j2);
    const f2 = spinSquared(c.F);
    const r = rotationToAxis(c.F, n);
    const { labels, vectors } = zeroFieldStates(CS, n);
    expect(labels.slice(0, 3)).toEqual(['F=4,mF=+4', 'F=4,mF=+3', 'F=4,mF=+2']);
    expect(labels[9]).toBe('F=3,mF=+3');
    expect(unitarityError(vectors)).toBeLessThan(1e-12);
    // rotate back to ẑ: R† v must be an F², F_z eigenvector
    const back = cmatMul(cmatDagger(r), vectors);
    const fb = cmatMul(f2, back), zb = cmatMul(c.F.jz, back);
    labels.forEach((lab, k) => {
      const { f2: F2, m2 } = parseLow(lab);
      const ff = (F2 / 2) * (F2 / 2 + 1);
      for (let i = 0; i < 16; i++) {
        expect(Math.abs(fb.re[i * 16 + k] - ff * back.re[i * 16 + k])).toBeLessThan(1e-12);
        expect(Math.abs(zb.re[i * 16 + k] - (m2 / 2) * back.re[i * 16 + k])).toBeLessThan(1e-12);
      }
    });
  });
  it('follow the Condon–Shortley ladder: F−|F, m⟩ = √(F(F+1) − m(m−1)) |F, m−1⟩, positive (along ẑ)', () => {
    for (const p of [RB87, CS, K40, LI6]) {
      const si = spinOperators(p.i2), sj = spinOperators(p.j2);
      const fm = cmatAdd(cmatKron(si.jm, cmatIdentity(p.j2 + 1)), cmatKron(cmatIdentity(p.i2 + 1), sj.jm));
      const { labels, vectors } = zeroFieldStates(p, Z);
      const d = labels.length;
      const fv = cmatMul(fm, vectors);
      for (let k = 0; k + 1 < d; k++) {
        const a = parseLow(labels[k]), b = parseLow(labels[k + 1]);
        if (a.f2 !== b.f2) continue;
        const F = a.f2 / 2, m = a.m2 / 2;
        const c = Math.sqrt(F * (F + 1) - m * (m - 1));
        for (let r = 0; r < d; r++) {
          expect(Math.abs(fv.re[r * d + k] - c * vectors.re[r * d + k + 1])).toBeLessThan(1e-12);
          expect(Math.abs(fv.im[r * d + k] - c * vectors.im[r * d + k + 1])).toBeLessThan(1e-12);
        }
      }
    }
  });
  it('reproduce Clebsch–Gordan coefficients of the PDG table (RPP "Clebsch-Gordan coefficients"): 3/2 × 1/2', () => {
    // ⟨3/2, 1/2; 1/2, −1/2 | 2, 0⟩ ... with I = 3/2 coupled first: |2, 0⟩ = √(1/2)|1/2,−1/2⟩ + √(1/2)|−1/2,+1/2⟩,
    // |1, 0⟩ = √(1/2)|1/2,−1/2⟩ − √(1/2)|−1/2,+1/2⟩; |2, 1⟩ = √(3/4)|1/2,+1/2⟩ + √(1/4)|3/2,−1/2⟩;
    // |1, 1⟩ = √(3/4)|3/2,−1/2⟩ − √(1/4)|1/2,+1/2⟩ (PDG 3/2 × 1/2 block, Condon–Shortley)
    const { labels, vectors } = zeroFieldStates(RB87, Z);
    const col = (l: string) => labels.indexOf(l);
    const idx = (mI2: number, mJ2: number) => ((3 - mI2) / 2) * 2 + (1 - mJ2) / 2;
    const at = (l: string, mI2: number, mJ2: number) => vectors.re[idx(mI2, mJ2) * 8 + col(l)];
    expect(at('F=2,mF=0', 1, -1)).toBeCloseTo(Math.sqrt(0.5), 14);
    expect(at('F=2,mF=0', -1, 1)).toBeCloseTo(Math.sqrt(0.5), 14);
    expect(at('F=1,mF=0', 1, -1)).toBeCloseTo(Math.sqrt(0.5), 14);
    expect(at('F=1,mF=0', -1, 1)).toBeCloseTo(-Math.sqrt(0.5), 14);
    expect(at('F=2,mF=+1', 1, 1)).toBeCloseTo(Math.sqrt(0.75), 14);
    expect(at('F=2,mF=+1', 3, -1)).toBeCloseTo(0.5, 14);
    expect(at('F=1,mF=+1', 3, -1)).toBeCloseTo(Math.sqrt(0.75), 14);
    expect(at('F=1,mF=+1', 1, 1)).toBeCloseTo(-0.5, 14);
  });
  it('are the same state as docs/design.md\'s pure state exp(−iφF_z)exp(−iθF_y)|F, m_F⟩', () => {
    const n = axisFromAngles(1.3, -0.6);
    const r = rotationToAxis(compositeSpin(RB87.i2, RB87.j2).F, n);
    expect(cmatMaxAbsDiff(zeroFieldStates(RB87, n).vectors, cmatMul(r, zeroFieldStates(RB87, Z).vectors))).toBeLessThan(1e-13);
  });
  it('bare spin: labels "+1/2", "-1/2"', () => {
    expect(zeroFieldStates({ i2: 0, j2: 1, gJ: 2, gI: 0, aHz: 0 }, Z).labels).toEqual(['+1/2', '-1/2']);
  });
});

describe('gF', () => {
  it('F=4 of Cs-133 is (g_J + 7 g_I)/8 = 0.24996854279375 (../shared/peers/README.md, closed-form cross-check)', () => {
    expect(gF(CS, 8)).toBeCloseTo(0.24996854279375, 14);
  });
  it('Rb-87: g_F(2) ≈ +1/2, g_F(1) ≈ −1/2 (Steck, Rb 87 D Line Data, Table 7, approximately −1/2 and 1/2)', () => {
    expect(gF(RB87, 4)).toBeCloseTo(0.5, 2);
    expect(gF(RB87, 2)).toBeCloseTo(-0.5, 2);
  });
});

describe('mjSortCleanField', () => {
  it('Cs-133: the moments of each m_J group share its sign just above the returned field and not below', () => {
    const bc = mjSortCleanField(CS);
    // J = ½ estimate without the g_I term: x_c = (2I−1)/(2I+1) = 3/4, x = (g_J − g_I)μB B/ΔE
    expect(bc / ((0.75 * 9192631770) / ((CS.gJ - CS.gI) * MU_B_OVER_H))).toBeCloseTo(1, 2);
    const mixed = (b: number) => zeemanLevels(CS, b, Z).levels.some((l) => l.moment * -Math.sign(l.mJ2) <= 0);
    expect(mixed(bc * (1 - 1e-6))).toBe(true);
    expect(mixed(bc)).toBe(false);
    expect(mixed(0.8)).toBe(false);
  });
  it('Rb-87 is about 0.122 T (x_c ≈ 1/2) and H is clean at any B > 0; a bare spin needs no field', () => {
    expect(mjSortCleanField(RB87) / ((0.5 * 6834682610.904) / ((RB87.gJ - RB87.gI) * MU_B_OVER_H))).toBeCloseTo(1, 2);
    expect(mjSortCleanField(H1)).toBeLessThan(1e-9);
    expect(mjSortCleanField({ i2: 0, j2: 1, gJ: 2, gI: 0, aHz: 0 })).toBe(0);
  });
});

describe('zeemanLevels against the independent NumPy/QuTiP fixtures (test/reference/breit_rabi.py)', () => {
  for (const name of ['Rb-87', 'Cs-133', 'Na-23']) {
    it(`${name}: eigenvalues to 1e-9 relative and moments to 1e-9 at every field and axis`, () => {
      const path = fileURLToPath(new URL(`../fixtures/species/levels_${name}.json`, import.meta.url));
      const fx = JSON.parse(readFileSync(path, 'utf8'));
      const p: HyperfineParams = fx.params;
      let worstE = 0, worstM = 0;
      for (const pt of fx.points) {
        const [x, y, z] = pt.axis;
        const { levels } = zeemanLevels(p, pt.field_T, { x, y, z });
        levels.forEach((l, k) => {
          worstE = Math.max(worstE, Math.abs(l.energyHz - pt.energies_Hz[k]) / Math.abs(pt.energies_Hz[k]));
          worstM = Math.max(worstM, Math.abs(l.moment - pt.moments_muB[k]));
        });
      }
      expect(fx.points.length).toBeGreaterThanOrEqual(15);
      expect(worstE).toBeLessThan(1e-9);
      expect(worstM).toBeLessThan(1e-9);
    });
  }
});

describe('zeemanEigen: the m_F-block eigenvectors (half-angle formulas of each 2×2 block)', () => {
  // every sign of the blocks' off-diagonal (A > 0 and A < 0) and of their diagonal difference, from zero
  // field (degenerate blocks) through the crossing region to the Paschen–Back side
  for (const [name, p] of [['H', H1], ['Cs-133', CS], ['K-40 (A < 0)', K40], ['Li-6 (I = 1)', LI6]] as const) {
    it(`${name}: V is unitary and V† H V is diagonal with the listed energies, 0 to 2 T along a tilted axis`, () => {
      const n: Vec3 = { x: 0.48, y: -0.36, z: 0.8 };
      for (const b of [0, 1e-7, 1e-4, 0.01, 0.05, 0.3, 2]) {
        const z = zeemanEigen(p, b, n);
        const h = hyperfineHamiltonianHz(p, { x: b * n.x, y: b * n.y, z: b * n.z });
        const v = z.vectors;
        expect(unitarityError(v)).toBeLessThan(1e-13);
        const d = cmatMul(cmatDagger(v), cmatMul(h, v));
        const scale = Math.max(...h.re.map(Math.abs));
        for (let i = 0; i < v.rows; i++) for (let j = 0; j < v.rows; j++) {
          const want = i === j ? z.values[i] : 0;
          expect(Math.hypot(d.re[i * v.rows + j] - want, d.im[i * v.rows + j])).toBeLessThan(1e-13 * scale);
        }
      }
    });
  }
});
