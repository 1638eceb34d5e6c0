/**
 * The oven's state fitted as a density matrix (src/engine/fit.ts): the fidelity against closed forms first, the
 * Cholesky parametrisation, then the reconstruction of a spin-1 oven in a known mixed state from simulated counts
 * (the seeded generator of src/engine/random.ts), and a line whose readings cannot see the state.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, type Plan } from '../../src/engine/index.ts';
import { choleskyVector, densityFromCholesky, fidelity, fit, type FitResult } from '../../src/engine/fit.ts';
import { readMeasurements } from '../../src/engine/measurements.ts';
import { Random } from '../../src/engine/random.ts';
import { type CMat, cmatFrom, cmatMaxAbsDiff } from '../../src/physics/cmat.ts';
import { eigh } from '../../src/physics/eigh.ts';

const deg = Math.PI / 180;

/** A density matrix from rows of [re, im] pairs. */
const mat = (rows: [number, number][][]): CMat => cmatFrom(rows);

/** Σ_k p_k |ψ_k⟩⟨ψ_k| for vectors of [re, im] components. */
function mixture(terms: [number, [number, number][]][]): CMat {
  const d = terms[0][1].length;
  const rows: [number, number][][] = Array.from({ length: d }, () => Array.from({ length: d }, () => [0, 0] as [number, number]));
  for (const [p, v] of terms) {
    for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
      // v_a conj(v_b)
      const [ar, ai] = v[a], [br, bi] = v[b];
      rows[a][b][0] += p * (ar * br + ai * bi);
      rows[a][b][1] += p * (ai * br - ar * bi);
    }
  }
  return mat(rows);
}

describe('fidelity', () => {
  it('of commuting (diagonal) states is (Σ √(p_i q_i))² (Nielsen & Chuang §9.2.2)', () => {
    const p = [0.5, 0.3, 0.2], q = [0.1, 0.6, 0.3];
    const rho = mat(p.map((x, i) => p.map((_, j) => [i === j ? x : 0, 0] as [number, number])));
    const sigma = mat(q.map((x, i) => q.map((_, j) => [i === j ? x : 0, 0] as [number, number])));
    const closed = p.reduce((s, x, i) => s + Math.sqrt(x * q[i]), 0) ** 2;
    expect(fidelity(rho, sigma)).toBeCloseTo(closed, 12);
    expect(fidelity(sigma, rho)).toBeCloseTo(closed, 12);
  });

  it('of two pure states is |⟨ψ|φ⟩|², of a pure and a mixed state ⟨ψ|σ|ψ⟩, and of a state with itself 1', () => {
    const psi: [number, number][] = [[Math.SQRT1_2, 0], [0, Math.SQRT1_2]];
    const phi: [number, number][] = [[Math.cos(0.4), 0], [Math.sin(0.4) * Math.cos(1.1), Math.sin(0.4) * Math.sin(1.1)]];
    // ⟨ψ|φ⟩ = Σ conj(ψ_a) φ_a
    const ipRe = psi.reduce((s, [r, i], a) => s + r * phi[a][0] + i * phi[a][1], 0);
    const ipIm = psi.reduce((s, [r, i], a) => s + r * phi[a][1] - i * phi[a][0], 0);
    const a = mixture([[1, psi]]), b = mixture([[1, phi]]);
    expect(fidelity(a, b)).toBeCloseTo(ipRe ** 2 + ipIm ** 2, 10);
    const sigma = mixture([[0.7, phi], [0.3, [[-phi[1][0], phi[1][1]], [phi[0][0], phi[0][1]]]]]);
    // ⟨ψ|σ|ψ⟩
    let expectRe = 0;
    for (let r = 0; r < 2; r++) for (let c = 0; c < 2; c++) {
      const [sr, si] = [sigma.re[r * 2 + c], sigma.im[r * 2 + c]];
      // conj(ψ_r) σ_rc ψ_c, real part
      const [pr, pi] = psi[r], [qr, qi] = psi[c];
      const xr = sr * qr - si * qi, xi = sr * qi + si * qr;
      expectRe += pr * xr + pi * xi;
    }
    expect(fidelity(a, sigma)).toBeCloseTo(expectRe, 10);
    expect(fidelity(sigma, sigma)).toBeCloseTo(1, 12);
  });
});

describe('the Cholesky parametrisation', () => {
  it('gives back a positive definite ρ from its factor, and any real vector gives a state', () => {
    const w = 2 * Math.PI / 3;
    const f = (k: number): [number, number][] => [0, 1, 2].map((n) => [Math.cos(w * k * n) / Math.sqrt(3), Math.sin(w * k * n) / Math.sqrt(3)]);
    const rho = mixture([[0.55, f(0)], [0.3, f(1)], [0.15, f(2)]]);
    expect(cmatMaxAbsDiff(densityFromCholesky(choleskyVector(rho), 3), rho)).toBeLessThan(1e-14);
    const rng = new Random(5);
    for (let t = 0; t < 50; t++) {
      const v = Array.from({ length: 9 }, () => rng.normal());
      const r = densityFromCholesky(v, 3);
      expect(Math.min(...eigh(r).values)).toBeGreaterThan(-1e-14);
      expect(r.re[0] + r.re[4] + r.re[8]).toBeCloseTo(1, 14);
    }
  });
});

/** A bare spin-1 line: the oven in `state`, one idealised analysing magnet M1 sending m = +1, 0, −1 to D1, D2, D3. */
function spin1Doc(state: unknown): Record<string, unknown> {
  return {
    format: 'spinyard.beamline', version: 1,
    title: 'Spin-1 state tomography bench: an idealised analyser turned to each axis in turn',
    species: { spin: '1', g: 2, mass: '4.0026 u' },
    oven: { state, flux: '2e4 /s', velocity: { kind: 'fixed', speed: '1000 m/s' }, to: 'M1' },
    elements: [
      { id: 'M1', kind: 'magnet', axis: { theta: '0 deg', phi: '0 deg' }, ports: { '+1': 'D1', '0': 'D2', '-1': 'D3' } },
      { id: 'D1', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '10 s' },
      { id: 'D2', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '10 s' },
      { id: 'D3', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '10 s' },
    ],
  };
}

function planOf(doc: unknown): Plan {
  const c = compile(JSON.stringify(doc));
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

/** Counts of D1–D3 with M1 along each (θ, φ) in degrees, Poisson noise from `rng`. */
function tomography(p: Plan, axes: [number, number][], rng: Random): string {
  const rows = ['detector,counts,dwell [s],M1.axis.theta [deg],M1.axis.phi [deg]'];
  for (const [th, ph] of axes) {
    const r = evaluate(p, { 'M1.axis.theta': th * deg, 'M1.axis.phi': ph * deg });
    for (const d of r.detectors) rows.push(`${d.id},${rng.poisson(d.rate * 10)},10,${th},${ph}`);
  }
  return rows.join('\n');
}

/** The known mixed state: 0.55, 0.30, 0.15 on the discrete Fourier basis of |+1⟩, |0⟩, |−1⟩ along z (complex coherences). */
function trueState(): CMat {
  const w = 2 * Math.PI / 3;
  const f = (k: number): [number, number][] => [0, 1, 2].map((n) => [Math.cos(w * k * n) / Math.sqrt(3), Math.sin(w * k * n) / Math.sqrt(3)]);
  return mixture([[0.55, f(0)], [0.3, f(1)], [0.15, f(2)]]);
}

const rows = (m: CMat, part: 're' | 'im') => [0, 1, 2].map((a) => [0, 1, 2].map((b) => m[part][a * 3 + b]));
const asMat = (f: FitResult): CMat => mat(f.density!.re.map((r, a) => r.map((x, b) => [x, f.density!.im[a][b]] as [number, number])));

describe('spin-1 state reconstruction (issue 15: x, y, z and two oblique axes, 10⁶ counts in all)', () => {
  const truth = trueState();
  const truthDoc = { kind: 'density', axis: { theta: '0 deg', phi: '0 deg' }, basis: ['+1', '0', '-1'], re: rows(truth, 're'), im: rows(truth, 'im') };
  // x, y, z, and two oblique axes
  const fiveAxes: [number, number][] = [[90, 0], [90, 90], [0, 0], [55, 30], [120, 250]];

  it('the fitted ρ is positive and its fidelity with the true one exceeds 0.99', () => {
    const data = tomography(planOf(spin1Doc(truthDoc)), fiveAxes, new Random(1515));
    const start = planOf(spin1Doc({ kind: 'unpolarized' }));
    const m = readMeasurements(data, start);
    expect(m.readings.reduce((s, r) => s + r.counts, 0) / 1e6).toBeCloseTo(1, 2);
    const f = fit(start, m, { free: [], state: true });
    expect(f.converged).toBe(true);
    const rho = asMat(f);
    expect(Math.min(...f.density!.eigenvalues)).toBeGreaterThanOrEqual(-1e-12);
    expect(Math.min(...eigh(rho).values)).toBeGreaterThanOrEqual(-1e-12);
    expect(f.density!.re[0][0] + f.density!.re[1][1] + f.density!.re[2][2]).toBeCloseTo(1, 12);
    expect(fidelity(rho, truth)).toBeGreaterThan(0.99);
    // these five axes leave one of the 8 real parameters undetermined (J_x² + J_y² + J_z² = 2): the fit says so
    expect(f.density!.parameters).toBe(8);
    expect(f.density!.determined).toBe(7);
    expect(f.warnings.join('\n')).toMatch(/determine 7 of the 8 real parameters/);
    expect(f.pValue).toBeGreaterThan(0.001);
  }, 60_000);

  it('five axes in general position determine all 8 parameters (4j + 1 for spin j)', () => {
    const data = tomography(planOf(spin1Doc(truthDoc)), [[20, 10], [70, 80], [110, 200], [150, 300], [60, 140]], new Random(1517));
    const start = planOf(spin1Doc({ kind: 'unpolarized' }));
    const f = fit(start, readMeasurements(data, start), { free: [], state: true });
    expect(f.density!.determined).toBe(8);
    expect(f.warnings.join('\n')).not.toMatch(/determine/);
    expect(fidelity(asMat(f), truth)).toBeGreaterThan(0.99);
  }, 60_000);

  it('with a sixth axis every element is determined and lies within 4σ of the truth; the polarization ⟨J⟩/j too', () => {
    const axes = [...fiveAxes, [35, 160] as [number, number]];
    const data = tomography(planOf(spin1Doc(truthDoc)), axes, new Random(1516));
    const start = planOf(spin1Doc({ kind: 'unpolarized' }));
    const f = fit(start, readMeasurements(data, start), { free: [], state: true });
    const dm = f.density!;
    expect(dm.determined).toBe(8);
    expect(fidelity(asMat(f), truth)).toBeGreaterThan(0.999);
    for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) {
      expect(dm.sigmaRe[a][b]).toBeGreaterThan(0);
      expect(Math.abs(dm.re[a][b] - truth.re[a * 3 + b])).toBeLessThan(4 * dm.sigmaRe[a][b]!);
      if (a !== b) expect(Math.abs(dm.im[a][b] - truth.im[a * 3 + b])).toBeLessThan(4 * dm.sigmaIm[a][b]!);
    }
    // ⟨J_z⟩ = ρ(+1,+1) − ρ(−1,−1) along z
    expect(dm.polarization.z).toBeCloseTo(dm.re[0][0] - dm.re[2][2], 12);
    expect(dm.polarization.sigma.x).toBeGreaterThan(0);
    // purity Tr ρ² of the truth: 0.55² + 0.3² + 0.15²
    expect(Math.abs(dm.purity - (0.55 ** 2 + 0.3 ** 2 + 0.15 ** 2))).toBeLessThan(4 * dm.puritySigma!);
    expect(f.coordinates).toEqual(['oven.state ρ(+1, +1)', 'oven.state ρ(0, 0)', 'oven.state Re ρ(+1, 0)', 'oven.state Im ρ(+1, 0)',
      'oven.state Re ρ(+1, -1)', 'oven.state Im ρ(+1, -1)', 'oven.state Re ρ(0, -1)', 'oven.state Im ρ(0, -1)']);
  }, 60_000);
});

describe('spin-½: the density fit agrees with the populations fit where only the populations are seen', () => {
  it('bench C (analysers in the x–z plane behind a polariser along z): the same population and σ, P_x and P_y undetermined', () => {
    const doc = JSON.parse(readFileSync(new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url), 'utf8'));
    doc.oven.state = { kind: 'populations', axis: { theta: '0 deg', phi: '0 deg' }, p: { '+1/2': 0.8, '-1/2': 0.2 } };
    doc.oven.flux = '1e6 /s';
    const truth = planOf(doc);
    const rng = new Random(77);
    const rowsOut = ['detector,counts,dwell [s],M3.axis.roll [deg]'];
    for (let a = 0; a <= 180; a += 20) {
      for (const d of evaluate(truth, { 'M3.axis.roll': a * deg }).detectors) rowsOut.push(`${d.id},${rng.poisson(d.rate * 2)},2,${a}`);
    }
    const start = planOf({ ...doc, oven: { ...doc.oven, state: { kind: 'unpolarized' } } });
    const data = readMeasurements(rowsOut.join('\n'), start);
    const dens = fit(start, data, { free: [], state: true });
    const pops = fit(start, data, { free: [], state: true, stateModel: 'populations' });
    expect(pops.density).toBeUndefined();
    expect(dens.state!.populations[0]).toBeCloseTo(pops.state!.populations[0], 6);
    expect(dens.state!.sigma[0]! / pops.state!.sigma[0]!).toBeCloseTo(1, 3);
    expect(dens.density!.determined).toBe(1);
    expect(dens.density!.polarization.sigma.x).toBeNull();
    expect(dens.density!.polarization.sigma.y).toBeNull();
    expect(dens.density!.polarization.z).toBeCloseTo(2 * dens.state!.populations[0] - 1, 12);
  }, 60_000);
});

describe('bad input', () => {
  it('a free state on a line whose readings no analysing magnet informs: a clear message', () => {
    const doc = spin1Doc({ kind: 'unpolarized' });
    doc.elements = [
      { id: 'S1', kind: 'slit', gap: '20 cm', width: '1 mm', height: '5 mm', to: 'D1' },
      { id: 'D1', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '10 s' },
    ];
    (doc.oven as { to: string }).to = 'S1';
    const p = planOf(doc);
    const data = readMeasurements(`detector,counts\n${'D1,200000\n'.repeat(9)}`, p);
    expect(() => fit(p, data, { free: [], state: true })).toThrow(/oven\.state: no reading depends on the oven's spin state .*analysing magnet/);
  });

  it('a magnet whose ports all reach the one detector of the readings informs nothing either', () => {
    const doc = spin1Doc({ kind: 'unpolarized' });
    (doc.elements as { ports?: Record<string, string> }[])[0].ports = { '+1': 'D1', '0': 'D1', '-1': 'D1' };
    const p = planOf(doc);
    const data = readMeasurements(`detector,counts\n${'D1,200100\n'.repeat(9)}`, p);
    expect(() => fit(p, data, { free: [], state: true })).toThrow(/no reading depends on the oven's spin state/);
  });

  it('fewer readings than the 8 real parameters of a spin-1 ρ', () => {
    const p = planOf(spin1Doc({ kind: 'unpolarized' }));
    const data = readMeasurements('detector,counts\nD1,5\nD2,5\nD3,5\n', p);
    expect(() => fit(p, data, { free: [], state: true })).toThrow(/3 readings for 8 fitted coordinates \(the 8 real parameters of the oven's density matrix\)/);
  });
});

describe('the density state in the document (src/beamline/oven.ts, src/engine/source.ts, the fitted document)', () => {
  const truth = trueState();
  const state = (extra: Record<string, unknown> = {}) => ({ kind: 'density', axis: { theta: '0 deg', phi: '0 deg' }, basis: ['+1', '0', '-1'], re: rows(truth, 're'), im: rows(truth, 'im'), ...extra });
  const problems = (st: unknown): string => {
    const c = compile(JSON.stringify(spin1Doc(st)));
    return c.ok ? '' : c.problems.join('\n');
  };

  it('runs as the same ρ written as populations where it is diagonal, and follows its axis', () => {
    const diag = { kind: 'density', axis: { theta: '40 deg', phi: '10 deg' }, basis: ['-1', '+1', '0'], re: [[0.2, 0, 0], [0, 0.5, 0], [0, 0, 0.3]] };
    const pops = { kind: 'populations', axis: { theta: '40 deg', phi: '10 deg' }, p: { '+1': 0.5, '0': 0.3, '-1': 0.2 } };
    for (const setting of [{ 'M1.axis.theta': 0 }, { 'M1.axis.theta': 1.1, 'M1.axis.phi': 0.3 }] as Record<string, number>[]) {
      const a = evaluate(planOf(spin1Doc(diag)), setting).detectors.map((d) => d.rate);
      const b = evaluate(planOf(spin1Doc(pops)), setting).detectors.map((d) => d.rate);
      a.forEach((x, i) => expect(x).toBeCloseTo(b[i], 9));
    }
  });

  it('gives the analyser along z the diagonal of ρ, and along x the populations of ρ carried to x (closed form: 2×2 check for spin ½)', () => {
    const p = planOf(spin1Doc(state()));
    const z = evaluate(p, { 'M1.axis.theta': 0 }).detectors.map((d) => d.rate / 2e4);
    [0, 1, 2].forEach((a) => expect(z[a]).toBeCloseTo(truth.re[a * 4], 12));
    // spin ½ along x: P(+½_x) = ½ + Re ρ(+½, −½)
    const half = { ...spin1Doc({ kind: 'density', axis: { theta: '0 deg', phi: '0 deg' }, basis: ['+1/2', '-1/2'], re: [[0.7, 0.2], [0.2, 0.3]], im: [[0, -0.1], [0.1, 0]] }), species: { spin: '1/2', g: 2, mass: '1 u' } };
    ((half as Record<string, unknown>).elements as { ports?: Record<string, string> }[])[0].ports = { '+1/2': 'D1', '-1/2': 'D2' };
    const h = planOf(half);
    expect(evaluate(h, { 'M1.axis.theta': Math.PI / 2, 'M1.axis.phi': 0 }).detectors[0].rate / 2e4).toBeCloseTo(0.5 + 0.2, 12);
    // along y: P(+½_y) = ½ − Im ρ(+½, −½)
    expect(evaluate(h, { 'M1.axis.theta': Math.PI / 2, 'M1.axis.phi': Math.PI / 2 }).detectors[0].rate / 2e4).toBeCloseTo(0.5 + 0.1, 12);
  });

  it('refuses a ρ that is not a state, naming where', () => {
    expect(problems(state({ im: undefined, re: [[0.5, 0.1, 0], [0.2, 0.3, 0], [0, 0, 0.2]] }))).toMatch(/oven\.state\.re\[0\]\[1\]: ρ is not Hermitian/);
    expect(problems(state({ im: undefined, re: [[0.5, 0.6, 0], [0.6, 0.3, 0], [0, 0, 0.2]] }))).toMatch(/oven\.state: ρ is not positive semidefinite: its least eigenvalue is -0\.2/);
    expect(problems(state({ re: [[1, 0], [0, 0]] }))).toMatch(/oven\.state\.re: expected 3 rows/);
    expect(problems(state({ basis: ['+1', '0', '+2'] }))).toMatch(/oven\.state\.basis\[2\]: no state "\+2"/);
    expect(problems(state({ basis: ['+1', '0', '0'] }))).toMatch(/listed twice/);
    expect(problems(state({ im: [[0.1, 0, 0], [0, 0, 0], [0, 0, 0]] }))).toMatch(/oven\.state\.im\[0\]\[0\]: a diagonal element of ρ must be real/);
    expect(problems(state({ re: [[0, 0, 0], [0, 0, 0], [0, 0, 0]], im: undefined }))).toMatch(/trace of ρ .* is 0/);
    expect(problems(state({ basis: undefined }))).toMatch(/missing "basis"/);
    const w = compile(JSON.stringify(spin1Doc(state({ im: undefined, re: [[1, 0, 0], [0, 1, 0], [0, 0, 2]] }))));
    expect(w.ok && w.plan.warnings.join('\n')).toMatch(/the trace of ρ is 4; normalised to 1/);
  });

  it('the fitted document holds the fitted ρ, reads back and runs to the fit\'s expected counts', async () => {
    const { fittedDocument } = await import('../../src/cli/fit.ts');
    const { serializeDoc } = await import('../../src/beamline/index.ts');
    const data = tomography(planOf(spin1Doc(state())), [[90, 0], [90, 90], [0, 0], [55, 30], [120, 250], [35, 160]], new Random(3));
    const start = planOf(spin1Doc({ kind: 'unpolarized' }));
    const m = readMeasurements(data, start);
    const f = fit(start, m, { free: [], state: true });
    const text = serializeDoc(fittedDocument(start.doc, f));
    expect(text).toMatch(/"kind": "density"/);
    const back = planOf(JSON.parse(text));
    expect(back.warnings).toEqual([]);
    for (const r of f.residuals.slice(0, 6)) {
      const reading = m.readings.find((x) => x.line === r.line)!;
      const rate = evaluate(back, reading.setPoints).detectors.find((d) => d.id === r.detector)!.rate;
      expect(rate * reading.dwell / r.expected).toBeCloseTo(1, 8);
    }
    // the app's "apply the fitted values" writes the same document (one function for both)
    const { applyPlanEdit } = await import('../../src/app/plan-edit.ts');
    const applied = applyPlanEdit(start.doc, { kind: 'applyFit', fit: f });
    expect(applied.ok && serializeDoc(applied.doc)).toBe(text);
  });
});
