/**
 * Evaluation reuse (src/engine/replay.ts): a run that replays the recorded part of a walk and walks only the region of
 * the changed element gives the same result, bit for bit, as a run of the whole line — the requirement "a scan point
 * equals a plain run of the line with that set-point, to 1e-14", held here to the last bit for every number of the
 * result (leaves, detectors, lost, warnings, positions, quadrature, invariants).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile, evaluate, scan, type Plan } from '../../src/engine/index.ts';
import { EvaluationSession } from '../../src/engine/replay.ts';
import { lineWithValues } from '../../src/beamline/parameters.ts';

const deg = Math.PI / 180;

function planOf(text: string): Plan {
  const c = compile(text);
  if (!c.ok) throw new Error(c.problems.join('\n'));
  return c.plan;
}

function sample(name: string): string {
  return readFileSync(new URL(`../../samples/${name}`, import.meta.url), 'utf8');
}

/** Every difference between two results, numbers compared bit for bit (Object.is: −0 and 0 differ, NaN equals NaN). */
function differences(a: unknown, b: unknown, path = '', out: string[] = []): string[] {
  if (out.length > 5) return out;
  if (typeof a === 'number' && typeof b === 'number') {
    if (!Object.is(a, b)) out.push(`${path}: ${a} ≠ ${b}`);
  } else if (a !== null && b !== null && typeof a === 'object' && typeof b === 'object') {
    const ka = Object.keys(a), kb = Object.keys(b);
    if (ka.join('\u0000') !== kb.join('\u0000')) out.push(`${path}: keys ${ka.join(',')} ≠ ${kb.join(',')}`);
    for (const k of ka) differences((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`, out);
  } else if (a !== b) out.push(`${path}: ${String(a)} ≠ ${String(b)}`);
  return out;
}

type Outcome = { result: unknown } | { error: string };

function outcome(plan: Plan, values: Record<string, number>, session?: EvaluationSession): Outcome {
  try {
    return { result: evaluate(plan, values, session ? { session } : {}) };
  } catch (err) {
    return { error: (err as Error).message };
  }
}

/**
 * Evaluates `grid` in order with one session, then every point again on a line compiled anew without one (no object
 * of the first line is shared): the two agree bit for bit. Returns the session's counts.
 */
function agreeOnGrid(text: string, grid: Record<string, number>[]): EvaluationSession['stats'] {
  const session = new EvaluationSession();
  const plan = planOf(text);
  const withSession = grid.map((v) => outcome(plan, v, session));
  const plain = planOf(text);
  grid.forEach((v, k) => {
    const a = withSession[k], b = outcome(plain, v);
    expect(differences(a, b), `at ${JSON.stringify(v)}`).toEqual([]);
  });
  return session.stats;
}

function grid1(name: string, values: number[]): Record<string, number>[] {
  return values.map((v) => ({ [name]: v }));
}

function grid2(a: string, av: number[], b: string, bv: number[]): Record<string, number>[] {
  return av.flatMap((x) => bv.map((y) => ({ [a]: x, [b]: y })));
}

/**
 * A Cs-133 line of this project's own (W1's arrangement, a measured velocity table of six speeds): polariser, a
 * transverse field, analyser; the table's exact sums count their speeds as quadrature nodes.
 */
const TABLE_LINE = JSON.stringify({
  format: 'spinyard.beamline', version: 1, title: 'Replay check: Cs-133, precession between two m_J sorters, six measured speeds',
  species: 'Cs-133',
  oven: {
    state: { kind: 'unpolarized' },
    velocity: { kind: 'table', points: [['120 m/s', 0.05], ['180 m/s', 0.2], ['240 m/s', 0.3], ['300 m/s', 0.25], ['360 m/s', 0.15], ['420 m/s', 0.05]] },
    flux: '1e9 /s', to: 'M1',
  },
  elements: [
    { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', ports: { 'mJ=+1/2': 'F1', 'mJ=-1/2': 'stop' } },
    { id: 'F1', kind: 'field', field: { x: '10 uT', y: '0 T', z: '0 T' }, length: '5 cm', to: 'M2' },
    { id: 'M2', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', ports: { 'mJ=+1/2': 'D1', 'mJ=-1/2': 'D2' } },
    { id: 'D1', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' },
    { id: 'D2', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' },
  ],
});

/**
 * The same species and speeds, a line whose walk outside the scanned analyser M3 does everything a replay must
 * repeat: both ports of M1 reach F1 (one through R0, 2 cm on, so F1 is placed at two distances: a warning), M3 is reached
 * along both of those paths, and M2's other port ends at D2 behind its own field region (leaves, averages and
 * their quadrature nodes, Hermiticity of their own).
 */
const SEGMENT_LINE = JSON.stringify({
  format: 'spinyard.beamline', version: 1, title: 'Replay check: what the walk does outside the scanned analyser',
  species: 'Cs-133',
  oven: JSON.parse(TABLE_LINE).oven,
  elements: [
    { id: 'M1', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', ports: { 'mJ=+1/2': 'F1', 'mJ=-1/2': 'R0' } },
    { id: 'R0', kind: 'rotator', gap: '2 cm', axis: { theta: '90 deg', phi: '0 deg' }, angle: '30 deg', to: 'F1' },
    { id: 'F1', kind: 'field', field: { x: '10 uT', y: '0 T', z: '0 T' }, length: '5 cm', to: 'M2' },
    { id: 'M2', kind: 'magnet', axis: { roll: '35 deg' }, field: '0.8 T', group: 'mJ', ports: { 'mJ=+1/2': 'M3', 'mJ=-1/2': 'F2' } },
    { id: 'F2', kind: 'field', field: { x: '7 uT', y: '0 T', z: '0 T' }, length: '3 cm', to: 'D2' },
    { id: 'M3', kind: 'magnet', axis: { roll: '0 deg' }, field: '0.8 T', group: 'mJ', ports: { 'mJ=+1/2': 'D3', 'mJ=-1/2': 'D4' } },
    { id: 'D2', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' },
    { id: 'D3', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' },
    { id: 'D4', kind: 'detector', efficiency: 1, background: '0 /s', dwell: '1 s' },
  ],
});

/**
 * A chain of four Rb-87 analysers of this project's own (0.5 T, 180 T/m, 5 cm, pole gaps 2 mm × 6 mm), each passing
 * m_J = +1/2 through a 35° rotator to the next: more than 16 sub-beams leave M3 for R3 and are merged there.
 */
function analyserChain(): string {
  const elements: unknown[] = [{ id: 'S1', kind: 'slit', gap: '25 cm', width: '0.8 mm', height: '0.05 mm', to: 'M1' }];
  for (let i = 1; i <= 4; i++) {
    const last = i === 4;
    elements.push({
      id: `M${i}`, kind: 'magnet', gap: i === 1 ? '4 cm' : '2 cm', axis: { roll: '0 deg' }, field: '0.5 T', gradient: '180 T/m', length: '5 cm',
      aperture: { width: '2 mm', height: '6 mm' }, group: 'mJ', ports: { 'mJ=+1/2': last ? 'D1' : `R${i}`, 'mJ=-1/2': i === 1 ? 'stop' : `X${i}` },
    });
    if (i > 1) elements.push({ id: `X${i}`, kind: 'detector', gap: '5 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '20 mm' } });
    if (!last) elements.push({ id: `R${i}`, kind: 'rotator', gap: '2 cm', axis: { roll: '90 deg' }, angle: '35 deg', to: `M${i + 1}` });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '30 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '30 mm' } });
  return JSON.stringify({
    format: 'spinyard.beamline', version: 1, title: 'Replay check: Rb-87 analyser chain of four', species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '5e8 /s', velocity: { kind: 'effusive', temperature: '420 K' }, aperture: { width: '1 mm', height: '0.05 mm' }, to: 'S1' },
    elements,
  });
}

describe('evaluation reuse: a replayed run equals a run of the whole line, bit for bit', () => {
  it('sub-beams merged at a magnet before the scanned rotator: the merged counts and fraction are repeated', () => {
    const text = analyserChain();
    expect(agreeOnGrid(text, grid1('R3.angle', [0, 0.2, 0.5])).replayed).toBe(1);
    expect(evaluate(planOf(text), { 'R3.angle': 0.2 }).merged?.subBeams ?? 0).toBeGreaterThan(16);
  });

  it('what the walk did outside the scanned element is repeated: leaves, warnings, positions, averages and their nodes', () => {
    const stats = agreeOnGrid(SEGMENT_LINE, grid1('M3.axis.roll', [0, 10 * deg, 50 * deg, 80 * deg]));
    expect(stats.replayed).toBe(2);
    const r = evaluate(planOf(SEGMENT_LINE), { 'M3.axis.roll': 10 * deg });
    expect(r.warnings.some((w) => /^elements\[2\]: reached at 2\.0 cm along one path and 0\.0 cm/.test(w))).toBe(true);
    expect(r.invariants?.maxHermiticity ?? 0).toBeGreaterThan(0);
    // the cut at a detector: the run's largest departure from Hermiticity is among the recorded leaves
    expect(agreeOnGrid(SEGMENT_LINE, grid1('D4.dwell', [1, 2, 3])).replayed).toBe(1);
  });

  it('a map over a field and the last magnet\'s roll (W2\'s shape): each row records once, its other points replay; quadrature nodes counted as in a run of its own', () => {
    const b = [0, 4e-6, 1.5e-5], a = [0, 20 * deg, 55 * deg, 90 * deg];
    const stats = agreeOnGrid(TABLE_LINE, grid2('F1.field.x', b, 'M2.axis.roll', a));
    expect(stats.replayed).toBeGreaterThanOrEqual(b.length * (a.length - 1) - 1);
    const r = evaluate(planOf(TABLE_LINE), { 'F1.field.x': 4e-6 });
    expect(r.quadrature?.nodes ?? 0).toBeGreaterThan(0);
  });

  it('the same map with the axes the other way round (the field inner): replays from the field region', () => {
    const stats = agreeOnGrid(TABLE_LINE, grid2('M2.axis.roll', [10 * deg, 70 * deg], 'F1.field.x', [1e-6, 7e-6, 1.2e-5]));
    expect(stats.replayed).toBeGreaterThan(0);
  });

  it('bench C (spin ½, one speed): the first magnet\'s roll, the last magnet\'s roll, both, a detector\'s dwell', () => {
    const text = sample('bench-c-roll-calibration.spinyard');
    // M1 is the oven's own target: nothing stands before it to reuse, and nothing is recorded
    expect(agreeOnGrid(text, grid1('M1.axis.roll', [0, 15 * deg, 40 * deg, 90 * deg])).recorded).toBe(0);
    expect(agreeOnGrid(text, grid1('M3.axis.roll', [0, 15 * deg, 40 * deg, 90 * deg])).replayed).toBeGreaterThan(0);
    agreeOnGrid(text, grid2('M1.axis.roll', [0, 30 * deg], 'M3.axis.roll', [0, 45 * deg, 120 * deg]));
    expect(agreeOnGrid(text, grid1('D3.dwell', [1, 2, 5])).replayed).toBeGreaterThan(0);
  });

  it('bench D: flux lost at a recombiner before the scanned detector is added in its recorded order', () => {
    const text = sample('bench-d-recombiner-closure.spinyard');
    expect(agreeOnGrid(text, grid1('DI2.dwell', [1, 3, 7])).replayed).toBeGreaterThan(0);
    agreeOnGrid(text, grid1('MI.axis.roll', [0, 25 * deg, 60 * deg]));
  });

  it('bench E (supersonic spin 1, deflecting magnets): the χ values a recorded segment looked up count their nodes once', () => {
    const text = sample('bench-e-metastable-helium-spin1.spinyard');
    expect(agreeOnGrid(text, grid1('M2.axis.roll', [0, 30 * deg, 60 * deg, 80 * deg])).replayed).toBeGreaterThan(0);
    // a gap behind deflecting magnets moves the planes their sub-beams are merged at: nothing recorded holds
    expect(agreeOnGrid(text, grid1('D2.gap', [0, 0.01, 0.02])).replayed).toBe(0);
  });

  it('bench G (silver, apertures and the detector plane): a detector window behind two deflecting magnets', () => {
    const text = sample('bench-g-silver-split.spinyard');
    expect(agreeOnGrid(text, grid1('DL.window.z', [-5e-4, 0, 5e-4])).replayed).toBeGreaterThan(0);
  });

  it('bench H (Rb-87, hyperfine): the first magnet\'s roll and the last magnet\'s roll', () => {
    const text = sample('bench-h-rb87-mj-then-eigenstate.spinyard');
    agreeOnGrid(text, grid1('M1.axis.roll', [0, 20 * deg, 45 * deg]));
    expect(agreeOnGrid(text, grid1('M2.axis.roll', [0, 20 * deg, 45 * deg])).replayed).toBeGreaterThan(0);
  });

  it('oven parameters: nothing can be reused, every point is walked whole and still agrees', () => {
    const text = sample('bench-j-cs-precession-coil.spinyard');
    const stats = agreeOnGrid(text, grid1('oven.velocity.temperature', [380, 400, 430]));
    expect(stats.replayed).toBe(0);
    expect(stats.recorded).toBe(0);
    expect(agreeOnGrid(text, grid2('oven.flux', [1e9, 2e9], 'M2.axis.roll', [0, 30 * deg])).replayed).toBeGreaterThan(0);
  });

  it('a field twist before the scanned element: the walk is recorded at the twist, and the other twist\'s grids are one segment', () => {
    const text = sample('bench-k-field-twist-passage.spinyard');
    // MS sits behind T2: the record cuts at T2; T1's subtree (its doubling grids, its unconverged warning, the flux
    // its analyser stops) lies outside and is replayed as recorded
    const ms = agreeOnGrid(text, grid1('MS.axis.roll', [0, 30 * deg, 60 * deg, 90 * deg]));
    expect(ms.recorded).toBe(1);
    expect(ms.replayed).toBe(2);
    // MA behind T1 likewise; T2's grids are then the segment after the arrival
    expect(agreeOnGrid(text, grid1('MA.axis.roll', [80 * deg, 85 * deg, 88 * deg, 90 * deg])).replayed).toBe(2);
    // the first magnet: both twists are behind it; nothing before it to record
    expect(agreeOnGrid(text, grid1('M1.field', [0.25, 0.3])).replayed).toBe(0);
  });

  it('a refused value gives the message of a run without a session, and the next point goes on from the last line read', () => {
    const text = sample('bench-c-roll-calibration.spinyard');
    agreeOnGrid(text, grid1('D1.efficiency', [0.5, 1.5, 0.7, 0.9]));
  });
});

describe('a scan evaluates through its plan\'s session', () => {
  it('bench J: every point of a 2-D scan equals a plain evaluation at its values', () => {
    const text = sample('bench-j-cs-precession-coil.spinyard');
    const r = scan(planOf(text), [{ name: 'C1.field.x', from: 0, to: 2e-6, points: 3 }, { name: 'M2.axis.roll', from: 0, to: 90 * deg, points: 3 }], {});
    const plain = planOf(text);
    for (const pt of r.points) {
      const one = evaluate(plain, { 'C1.field.x': pt.values[0], 'M2.axis.roll': pt.values[1] }, { light: true });
      expect(differences(pt.detectors, one.detectors.map((d) => ({ id: d.id, yield: d.yield, rate: d.rate, signal: d.signal, counts: d.counts, sigma: d.sigma })))).toEqual([]);
      expect(differences(pt.leaves!.map((l) => [l.yield, l.rate, l.captured]), one.leaves.map((l) => [l.yield, l.rate, l.captured]))).toEqual([]);
      expect(Object.is(pt.lost, one.lost)).toBe(true);
    }
  });
});

describe('EvaluationSession.lineAt: only the parts whose values changed are read again', () => {
  it('equals the line read with all values, keeps every unchanged part, and gives back an element read before with the same values', () => {
    const plan = planOf(sample('bench-h-rb87-mj-then-eigenstate.spinyard'));
    const s = new EvaluationSession();
    const at = (v: Record<string, number>) => {
      const r = s.lineAt(plan.source, v);
      if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('; '));
      const full = lineWithValues(plan.source, v);
      if (!full.ok) throw new Error('refused');
      expect(r.line).toEqual(full.line);
      return r.line;
    };
    const m1 = plan.line.elements.findIndex((e) => e.id === 'M1'), m2 = plan.line.elements.findIndex((e) => e.id === 'M2');
    const l1 = at({ 'M1.axis.roll': 0.1, 'M2.axis.roll': 0.2 });
    const l2 = at({ 'M1.axis.roll': 0.1, 'M2.axis.roll': 0.3 });
    expect(l2.elements[m1]).toBe(l1.elements[m1]);
    expect(l2.elements[m2]).not.toBe(l1.elements[m2]);
    expect(l2.oven).toBe(plan.line.oven);
    const l3 = at({ 'M1.axis.roll': 0.1, 'M2.axis.roll': 0.3 });
    expect(l3).toBe(l2);
    const l4 = at({ 'M1.axis.roll': 0.5, 'M2.axis.roll': 0.2 });
    expect(l4.elements[m2]).toBe(l1.elements[m2]);
    // a parameter left out returns to the document's value
    const l5 = at({ 'M1.axis.roll': 0.5 });
    expect(l5.elements[m2]).toBe(plan.line.elements[m2]);
  });

  it('refuses a value out of the reader\'s bounds as lineWithValues does', () => {
    const plan = planOf(sample('bench-c-roll-calibration.spinyard'));
    const s = new EvaluationSession();
    expect(s.lineAt(plan.source, { 'D1.efficiency': 0.5 }).ok).toBe(true);
    const bad = s.lineAt(plan.source, { 'D1.efficiency': 1.5 });
    const full = lineWithValues(plan.source, { 'D1.efficiency': 1.5 });
    expect(bad.ok).toBe(false);
    expect(full.ok).toBe(false);
    if (!bad.ok && !full.ok) expect(bad.problems).toEqual(full.problems);
  });
});
