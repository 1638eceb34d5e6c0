/**
 * Every sample beamline (samples/*.spinyard) loads, validates, is written as serializeDoc writes it, and
 * runs; the simple lines are checked against closed forms computed here from the sample's own set-points.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { isProblem, parseBeamlineText, parseQuantity, serializeDoc } from '../src/beamline/index.ts';
import { levelsListing, runDocumentText, type RunResult } from '../src/engine/index.ts';
import { lookupSpecies, type AtomSpecies } from '../src/species/index.ts';

const dir = resolve(import.meta.dirname, '..', 'samples');
const names = readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort();

// CODATA 2018 (reference-data.md §4): μB (J/T), ħ (J s), k_B (J/K, exact)
const MU_B = 9.2740100783e-24;
const HBAR = 1.054571817e-34;
const K_B = 1.380649e-23;

const loaded = new Map<string, ReturnType<typeof loadNow>>();
/** A sample's text, document and result (each sample is run once per test file). */
function load(name: string) {
  if (!loaded.has(name)) loaded.set(name, loadNow(name));
  return loaded.get(name)!;
}

function loadNow(name: string) {
  const text = readFileSync(join(dir, name), 'utf8');
  const doc = JSON.parse(text) as { title: string; elements: Record<string, any>[]; oven: Record<string, any> };
  const run = runDocumentText(text);
  if (!run.ok) throw new Error(`${name}: ${run.problems.join('; ')}`);
  return { text, doc, result: run.result };
}

const el = (doc: { elements: Record<string, any>[] }, id: string) => doc.elements.find((e) => e.id === id)!;
const angle = (q: string) => {
  const v = parseQuantity(q, 'angle', 'test');
  if (isProblem(v)) throw new Error(v.message);
  return v;
};
const q = (text: string, dim: Parameters<typeof parseQuantity>[1]) => {
  const v = parseQuantity(text, dim, 'test');
  if (isProblem(v)) throw new Error(v.message);
  return v;
};
const detYield = (r: RunResult, id: string) => r.detectors.find((d) => d.id === id)!.yield;
const leaf = (r: RunResult, path: string[]) => {
  const l = r.leaves.find((x) => x.path.join(' ') === path.join(' '));
  if (!l) throw new Error(`no leaf ${path.join(' ')}`);
  return l;
};

describe('samples/*.spinyard', () => {
  it('never report a negative loss', () => {
    for (const n of names) expect(load(n).result.lost, n).toBeGreaterThanOrEqual(0);
  });

  it('has the sample lines of issues 2 and 3', () => {
    expect(names.length).toBeGreaterThanOrEqual(10);
  });

  for (const name of names) {
    it(`${name} loads, validates, is written in the stable key order and runs`, () => {
      const text = readFileSync(join(dir, name), 'utf8');
      const parsed = parseBeamlineText(text);
      expect(parsed.ok, parsed.ok ? '' : parsed.problems.map((p) => `${p.path}: ${p.message}`).join('\n')).toBe(true);
      expect(serializeDoc(JSON.parse(text))).toBe(text);
      const { doc, result } = load(name);
      expect(doc.title).toMatch(/^Bench [A-Z], /);
      const total = result.leaves.reduce((s, l) => s + l.yield, 0) + result.lost;
      expect(Math.abs(total - 1)).toBeLessThan(1e-12);
    });
  }
});

describe('bench-c-roll-calibration: spin-1/2 analyser rolled by α', () => {
  // Standard result (Sakurai, Modern Quantum Mechanics, §1.4 and §3.2): for spin 1/2,
  // P(+ along n̂₂ | + along n̂₁) = cos²(θ₁₂/2). An unpolarised beam passes the polariser with ½.
  it('D1 = ½cos²(α/2), D2 = ½sin⁴(α/2), D3 = ½sin²(α/2)cos²(α/2), with α read from the sample', () => {
    const { doc, result } = load('bench-c-roll-calibration.spinyard');
    const a = angle(el(doc, 'M2').axis.roll);
    expect(a).toBeGreaterThan(0);
    const c2 = Math.cos(a / 2) ** 2, s2 = Math.sin(a / 2) ** 2;
    expect(detYield(result, 'D1')).toBeCloseTo(0.5 * c2, 12);
    expect(detYield(result, 'D2')).toBeCloseTo(0.5 * s2 * s2, 12);
    expect(detYield(result, 'D3')).toBeCloseTo(0.5 * s2 * c2, 12);
  });
});

describe('bench-e-metastable-helium-spin1: spin 1, analyser rolled by β', () => {
  // PDG review "Clebsch-Gordan coefficients, spherical harmonics, and d functions":
  // d¹₁₁ = (1+cosβ)/2, d¹₁₀ = −sinβ/√2, d¹₁,₋₁ = (1−cosβ)/2; m = +1 passes M1 with 1/3.
  it('D1, D2, D3 = ⅓|d¹_{m,1}(β)|²', () => {
    const { doc, result } = load('bench-e-metastable-helium-spin1.spinyard');
    const b = angle(el(doc, 'M2').axis.roll);
    expect(detYield(result, 'D1')).toBeCloseTo(((1 + Math.cos(b)) / 2) ** 2 / 3, 12);
    expect(detYield(result, 'D2')).toBeCloseTo(Math.sin(b) ** 2 / 2 / 3, 12);
    expect(detYield(result, 'D3')).toBeCloseTo(((1 - Math.cos(b)) / 2) ** 2 / 3, 12);
  });
});

describe('bench-a-spin32-rotator: m = +3/2 turned by the rotator', () => {
  // PDG d-functions: d^{3/2}_{3/2,3/2} = ((1+cosθ)/2)cos(θ/2), d^{3/2}_{3/2,1/2} = −√3((1+cosθ)/2)sin(θ/2),
  // d^{3/2}_{3/2,−1/2} = √3((1−cosθ)/2)cos(θ/2), d^{3/2}_{3/2,−3/2} = −((1−cosθ)/2)sin(θ/2);
  // the rotator's axis is transverse to the analyser's, so the populations are |d|² (about x as about y).
  it('D1…D4 = ¼|d^{3/2}_{m,3/2}(θ)|²', () => {
    const { doc, result } = load('bench-a-spin32-rotator.spinyard');
    const t = angle(el(doc, 'R1').angle);
    const c = Math.cos(t), ch = Math.cos(t / 2), sh = Math.sin(t / 2);
    const d = [((1 + c) / 2) * ch, -Math.sqrt(3) * ((1 + c) / 2) * sh, Math.sqrt(3) * ((1 - c) / 2) * ch, -((1 - c) / 2) * sh];
    ['D1', 'D2', 'D3', 'D4'].forEach((id, k) => expect(detYield(result, id)).toBeCloseTo(d[k] ** 2 / 4, 12));
  });
});

describe('bench-d-recombiner-closure: coherent and incoherent recombiner side by side', () => {
  // |+z⟩ = (|+x⟩ + |−x⟩)/√2; K = P₊ₓ + e^{iφ}P₋ₓ gives ⟨+z|K|+z⟩ = (1 + e^{iφ})/2, probability cos²(φ/2)
  // (spin-1/2 algebra, Sakurai §1.4); the incoherent sum Σ P ρ P leaves ½ : ½ along z.
  it('coherent: DC1 = ½cos²(φ/2); incoherent: DI1 = DI2 = ¼', () => {
    const { doc, result } = load('bench-d-recombiner-closure.spinyard');
    const phi = angle(el(doc, 'RC').phases['-1/2']);
    expect(detYield(result, 'DC1')).toBeCloseTo(0.5 * Math.cos(phi / 2) ** 2, 12);
    expect(detYield(result, 'DC2')).toBeCloseTo(0.5 * Math.sin(phi / 2) ** 2, 12);
    expect(detYield(result, 'DI1')).toBeCloseTo(0.25, 12);
    expect(detYield(result, 'DI2')).toBeCloseTo(0.25, 12);
  });
});

describe('bench-f-mixed-detectors: detectors and stops on one spin-1 line', () => {
  it('yields from d¹ (PDG) and rates = flux × yield × efficiency + background', () => {
    const { doc, result } = load('bench-f-mixed-detectors.spinyard');
    const b = angle(el(doc, 'M2').axis.roll);
    const flux = q(doc.oven.flux, 'rate');
    expect(detYield(result, 'HW')).toBeCloseTo(1 / 3, 12);
    // m = −1 along z onto m' = −1 along n̂: |d¹₋₁,₋₁(β)|² = |d¹₁₁(β)|²
    expect(detYield(result, 'CH')).toBeCloseTo(((1 + Math.cos(b)) / 2) ** 2 / 3, 12);
    for (const id of ['HW', 'CH']) {
      const e = el(doc, id);
      const d = result.detectors.find((x) => x.id === id)!;
      expect(d.rate).toBeCloseTo(flux * d.yield * e.efficiency + q(e.background, 'rate'), 3);
      expect(d.sigma).toBeCloseTo(Math.sqrt(d.rate * q(e.dwell, 'time')), 6);
    }
    expect(result.leaves.filter((l) => l.target === 'stop')).toHaveLength(3);
  });
});

describe('bench-b-idealised-axis: an analyser axis with a component along the beam', () => {
  it('warns that the axis is an idealisation, naming the element, and still gives ½cos²(θ/2)', () => {
    const { doc, result } = load('bench-b-idealised-axis.spinyard');
    expect(result.warnings.some((w) => /^elements\[1\]\.axis: has a component along the beam/.test(w))).toBe(true);
    const t = angle(el(doc, 'M2').axis.theta);
    expect(detYield(result, 'D1')).toBeCloseTo(0.5 * Math.cos(t / 2) ** 2, 12);
  });
});

describe('bench-g-silver-split: natural silver, effusive, at the magnet exit', () => {
  it('splits the two m_J sub-beams by 0.1…1 mm (common practice, order of magnitude: reference-data.md §5)', () => {
    const { result } = load('bench-g-silver-split.spinyard');
    const up = leaf(result, ['M1:mJ=-1/2']);
    const down = leaf(result, ['M1:mJ=+1/2']);
    const split = up.displacement!.z - down.displacement!.z;
    expect(split).toBeGreaterThan(1e-4);
    expect(split).toBeLessThan(1e-3);
    expect(result.detectors[0].neighbours?.[0].verdict).toBe('resolved');
  });

  it('mean displacement = μ_eff G L(L/2 + D)/(2kT) to 1 % (docs/design.md deflection with Ramsey, Molecular Beams, ⟨1/v²⟩ = M/(2kT): reference-data.md §5)', () => {
    const { doc, result } = load('bench-g-silver-split.spinyard');
    const m = el(doc, 'M1');
    const G = q(m.gradient, 'gradient'), L = q(m.length, 'length'), D = q(el(doc, 'DU').gap, 'length');
    const T = q(doc.oven.velocity.temperature, 'temperature');
    // μ_eff of the m_J = −1/2 port: mean of its two eigenstates per isotope, weighted by abundance
    const listing = levelsListing('Ag', q(m.field, 'field'));
    const mu = listing.isotopes!.reduce((s, iso) => {
      const pos = iso.levels.filter((l) => l.highField.startsWith('mJ=-1/2'));
      return s + iso.fraction * pos.reduce((a, l) => a + l.moment, 0) / pos.length;
    }, 0);
    const z = (mu * MU_B * G * L * (L / 2 + D)) / (2 * K_B * T);
    expect(leaf(result, ['M1:mJ=-1/2']).displacement!.z / z).toBeCloseTo(1, 2);
  });
});

describe('bench-h-rb87-mj-then-eigenstate: Rb-87 sorted by m_J, then by eigenstate', () => {
  it('without clipping, the m_J = +1/2 port holds F=2, m_F = +2 … −1 with 1/8 each and nothing else', () => {
    // Breit–Rabi states of J = 1/2, I = 3/2 (Steck, Rubidium 87 D Line Data): m_J = +1/2 continues to
    // F = 2, m_F = +2 … −1; the unpolarised oven puts 1/8 in each |F, m_F⟩.
    const { doc } = load('bench-h-rb87-mj-then-eigenstate.spinyard');
    const ideal = structuredClone(doc);
    for (const e of ideal.elements) delete e.aperture;
    const run = runDocumentText(JSON.stringify(ideal));
    if (!run.ok) throw new Error(run.problems.join('; '));
    for (const id of ['D1', 'D2', 'D3', 'D4']) expect(detYield(run.result, id)).toBeCloseTo(1 / 8, 12);
    const empty = run.result.leaves.filter((x) => /^M2:(F=1,|F=2,mF=-2)/.test(x.path[1] ?? ''));
    expect(empty).toHaveLength(4);
    for (const l of empty) expect(Math.abs(l.yield)).toBeLessThan(1e-12);
  });

  it('in the weak-field sorter the sub-beams lie in m_F order along z (μ_eff ≈ −g_F m_F μB)', () => {
    const { result } = load('bench-h-rb87-mj-then-eigenstate.spinyard');
    const z = ['+2', '+1', '0', '-1'].map((m) => leaf(result, ['M1:mJ=+1/2', `M2:F=2,mF=${m}`]).displacement!.z);
    for (let k = 1; k < z.length; k++) expect(z[k]).toBeGreaterThan(z[k - 1]);
  });
});

describe('bench-j-cs-precession-coil: precession between two m_J sorters', () => {
  it('D1 = (7 + ⟨cos¹⁶(θ(v)/2)⟩)/16 over the effusive distribution, θ = g_F μB B ℓ/(ħ v)', () => {
    // After M1 the beam holds F = 4, m_F = +4 … −3 (1/16 each). A transverse field turns F = 4 by θ at the
    // Larmor rate g_F μB B/ħ; M2's m_J = +1/2 port takes F = 4, m_F ≠ −4, so its share is
    // (1/16)(9 − 1 − 1 + |d⁴₋₄,₋₄(θ)|²), d⁴₋₄,₋₄ = cos⁸(θ/2) (PDG d-functions, stretched state).
    // g_F = g_J [F(F+1) − I(I+1) + J(J+1)]/[2F(F+1)] + g_I [F(F+1) + I(I+1) − J(J+1)]/[2F(F+1)]
    // (D. A. Steck, Cesium D Line Data, eq. for the hyperfine Landé factor).
    // Flux-weighted effusive f(v) ∝ v³ exp(−Mv²/2kT) (Ramsey, Molecular Beams; reference-data.md §5).
    const { doc, result } = load('bench-j-cs-precession-coil.spinyard');
    const cs = lookupSpecies('Cs-133') as AtomSpecies;
    const I = cs.i2 / 2, J = cs.j2 / 2, F = 4;
    const ff = F * (F + 1), ii = I * (I + 1), jj = J * (J + 1);
    const gF = (cs.gJ.value * (ff - ii + jj)) / (2 * ff) + (cs.gI.value * (ff + ii - jj)) / (2 * ff);
    const c = el(doc, 'C1');
    const B = Math.hypot(q(c.field.x, 'field'), q(c.field.y, 'field'), q(c.field.z, 'field'));
    const ell = q(c.length, 'length');
    const T = q(doc.oven.velocity.temperature, 'temperature');
    const a = cs.massKg.value / (2 * K_B * T);
    const vmax = 12 / Math.sqrt(a);
    const n = 400_000; // Simpson's rule on (0, vmax]; the weight v³e^{−av²} vanishes at both ends
    let num = 0, den = 0;
    for (let k = 1; k <= n; k++) {
      const v = (k * vmax) / n;
      const w = (k === n ? 1 : k % 2 ? 4 : 2) * v ** 3 * Math.exp(-a * v * v);
      const th = (gF * MU_B * B * ell) / (HBAR * v);
      num += w * Math.cos(th / 2) ** 16;
      den += w;
    }
    const expected = (7 + num / den) / 16;
    expect(detYield(result, 'D1')).toBeCloseTo(expected, 6);
    expect(detYield(result, 'D2')).toBeCloseTo(0.5 - expected, 6);
  });
});

describe('bench-k-field-twist-passage: adiabatic and sudden passage', () => {
  // Adiabatic following (Bloch & Rabi, RMP 17, 237 (1945)): a slowly turning strong field carries m = +1
  // along z into m = +1 along x. Sudden limit: the state stays along z, and the x analyser finds |d¹_{m,−1}(90°)|²
  // = ¼, ½, ¼ (PDG d-functions).
  it('T1 (1 mT over 5 cm) is adiabatic: m = +1 of M1 leaves MA in +1', () => {
    const { result } = load('bench-k-field-twist-passage.spinyard');
    expect(detYield(result, 'DA1')).toBeGreaterThan(1 / 3 - 1e-6);
    expect(detYield(result, 'DA0') + detYield(result, 'DA2')).toBeLessThan(1e-6);
  });

  it('a leaf at the rounding floor (MA −1 after the adiabatic twist) has no place on the detector plane', () => {
    const { result } = load('bench-k-field-twist-passage.spinyard');
    const empty = leaf(result, ['M1:+1', 'MA:-1']);
    expect(empty.yield).toBeLessThan(1e-15);
    expect(empty.displacement).toBeUndefined();
    // the verdicts at the DA plane name only the two sub-beams that arrive; MA (along x) parts them along x
    const da = result.detectors.find((d) => d.id === 'DA1')!;
    expect(da.neighbours?.length).toBeGreaterThan(0);
    const pairs = (da.neighbours ?? []).map((n) => `${n.a} | ${n.b} ${n.axis}`);
    expect(pairs.some((p) => p.includes('MA:-1'))).toBe(false);
    expect((da.neighbours ?? []).every((n) => n.axis === 'x')).toBe(true);
  });

  it('T2 (0.1 µT over 1 cm) is nearly sudden: m = −1 splits ¼ : ½ : ¼ along x, to a few 1e-3', () => {
    const { result } = load('bench-k-field-twist-passage.spinyard');
    expect(detYield(result, 'DS1')).toBeCloseTo(1 / 12, 2);
    expect(detYield(result, 'DS0')).toBeCloseTo(1 / 6, 3);
    expect(detYield(result, 'DS2')).toBeCloseTo(1 / 12, 2);
  });
});
