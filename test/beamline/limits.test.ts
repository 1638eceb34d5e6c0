/**
 * The ranges of docs/design.md "Keys by element kind" (src/beamline/limits.ts): each quantity is read at the edges of its
 * range and refused just beyond, with a message naming the range; absurd values that used to give NaN or ∞
 * in the engine (a speed of 1e-297 m/s, g = 2e300, a speed ratio of 1e-300, weights that overflow their
 * sum) are refused at their path.
 */
import { describe, expect, it } from 'vitest';
import { FIRST_SLIT_MIN_DISTANCE, LIMITS, within } from '../../src/beamline/limits.ts';
import { bareLine } from './examples.ts';
import { check, lines, ok, rbLine } from './helpers.ts';

type Doc = Record<string, any>;

/** One key of a line: how to set it, the values read at the edges, the values refused and the message. */
const CASES: { name: string; line: () => Doc; set: (d: Doc, v: unknown) => void; path: string; good: unknown[]; bad: unknown[]; says: string }[] = [
  { name: 'fixed speed', line: bareLine, set: (d, v) => { d.oven.velocity = { kind: 'fixed', speed: v }; }, path: 'oven.velocity.speed',
    good: ['0.1 m/s', '1e6 m/s', '1000 km/s'], bad: ['1e-297 m/s', '0.09 m/s', '1.1e6 m/s', '1 c'], says: 'the speed must be between 0.1 m/s and 1e6 m/s' },
  { name: 'supersonic speed', line: bareLine, set: (d, v) => { d.oven.velocity = { kind: 'supersonic', speed: v, ratio: 20 }; }, path: 'oven.velocity.speed',
    good: ['1800 m/s'], bad: ['2e6 m/s'], says: 'the speed must be between 0.1 m/s and 1e6 m/s' },
  { name: 'supersonic speed ratio', line: bareLine, set: (d, v) => { d.oven.velocity = { kind: 'supersonic', speed: '1800 m/s', ratio: v }; }, path: 'oven.velocity.ratio',
    good: [0.5, 1e4, '350'], bad: [1e-300, 0.49, 1.01e4], says: 'the speed ratio must be between 0.5 and 1e4' },
  { name: 'effusive temperature', line: bareLine, set: (d, v) => { d.oven.velocity = { kind: 'effusive', temperature: v }; }, path: 'oven.velocity.temperature',
    good: ['0.1 K', '1e5 K', '1200 degC', '4 K'], bad: ['0.05 K', '2e5 K', '1e300 K'], says: 'the temperature must be between 0.1 K and 1e5 K' },
  { name: 'vapor temperature', line: rbLine, set: (d, v) => { d.oven.flux = { kind: 'vapor', temperature: v }; }, path: 'oven.flux.temperature',
    good: ['460 K'], bad: ['1e6 K'], says: 'the temperature must be between 0.1 K and 1e5 K' },
  { name: 'flux', line: bareLine, set: (d, v) => { d.oven.flux = v; }, path: 'oven.flux',
    good: ['0 /s', '1e30 /s'], bad: ['1e31 /s', '1e300 /s'], says: 'the flux must be at most 1e30 /s' },
  { name: 'g factor', line: bareLine, set: (d, v) => { d.species.g = v; }, path: 'species.g',
    good: [0, -1000, 1000, -2.00231930436], bad: [2e300, -1001], says: 'the g factor must be within ±1000' },
  { name: 'mass', line: bareLine, set: (d, v) => { d.species.mass = v; }, path: 'species.mass',
    good: ['1e-4 u', '1e9 u', '5.485799e-4 u'], bad: ['1e-5 u', '2e9 u', '1e-300 kg'], says: 'the mass must be between 1e-4 u and 1e9 u' },
  { name: 'gap', line: bareLine, set: (d, v) => { d.elements[1].gap = v; }, path: 'elements[1].gap',
    good: ['0 m', '1000 m', '1 km'], bad: ['1001 m', '1e300 m'], says: 'the gap must be at most 1000 m' },
  { name: 'magnet length', line: bareLine, set: (d, v) => { d.elements[0].length = v; }, path: 'elements[0].length',
    good: ['0 m', '1 km'], bad: ['2 km'], says: 'the length must be at most 1000 m' },
  { name: 'magnet field', line: bareLine, set: (d, v) => { d.elements[0].field = v; }, path: 'elements[0].field',
    good: ['0 T', '1000 T', '45 T'], bad: ['1001 T', '1e20 T'], says: 'the field size must be at most 1000 T' },
  { name: 'gradient', line: bareLine, set: (d, v) => { d.elements[0].gradient = v; }, path: 'elements[0].gradient',
    good: ['1e6 T/m', '-1e6 T/m', '250 T/m', '-20 G/cm'], bad: ['1.1e6 T/m', '-2e6 T/m'], says: 'the gradient must be within ±1e6 T/m' },
  { name: 'ambient field', line: bareLine, set: (d, v) => { d.ambient = { x: v, y: '0 T', z: '0 T' }; }, path: 'ambient.x',
    good: ['-1000 T', '50 uT'], bad: ['-1001 T'], says: 'the x component must be within ±1000 T' },
  { name: 'detector background', line: bareLine, set: (d, v) => { d.elements[2].background = v; }, path: 'elements[2].background',
    good: ['0 /s', '1e15 /s'], bad: ['1e16 /s'], says: 'the background must be at most 1e15 /s' },
  { name: 'detector dwell', line: bareLine, set: (d, v) => { d.elements[2].dwell = v; }, path: 'elements[2].dwell',
    good: ['1 ms', '1e9 s', '2 h'], bad: ['1e10 s'], says: 'the dwell must be at most 1e9 s' },
  { name: 'detector window size', line: bareLine, set: (d, v) => { d.elements[2].window = { width: v, height: '1 mm' }; }, path: 'elements[2].window.width',
    good: ['1 nm', '1 km'], bad: ['0.5 nm', '1e-300 m', '2 km'], says: 'the width must be between 1 nm and 1000 m' },
  { name: 'detector window offset', line: bareLine, set: (d, v) => { d.elements[2].window = { width: '1 mm', height: '1 mm', x: v }; }, path: 'elements[2].window.x',
    good: ['-1000 m', '3 mm'], bad: ['-1001 m'], says: 'the offset x must be within ±1000 m' },
];

describe('limits of the document quantities', () => {
  for (const c of CASES) {
    it(`${c.name}: reads ${c.good.join(', ')} and refuses ${c.bad.join(', ')} at ${c.path}`, () => {
      for (const v of c.good) {
        const d = c.line();
        c.set(d, v);
        ok(check(d));
      }
      for (const v of c.bad) {
        const d = c.line();
        c.set(d, v);
        const l = lines(d);
        expect(l, String(v)).toHaveLength(1);
        if (/ c$/.test(String(v))) expect(l[0]).toMatch(new RegExp(`^${c.path.replace(/[.[\]]/g, '\\$&')}: `));
        else expect(l[0]).toBe(`${c.path}: ${c.says}, got ${typeof v === 'string' ? v : String(v)}`);
      }
    });
  }
});

describe('limits of the other element kinds', () => {
  const withElement = (el: Doc) => {
    const d = bareLine();
    d.oven.to = 'X1';
    d.elements.unshift({ id: 'X1', to: 'M1', ...el });
    return d;
  };
  const rf = { kind: 'rf', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm' };
  const twist = { kind: 'twist', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm' };
  const field = { kind: 'field', field: { x: '5 uT', y: '0 T', z: '0 T' }, length: '5 cm' };
  const slit = { kind: 'slit', gap: '10 cm', width: '0.1 mm', height: '3 mm' };
  it('reads each kind at its limits', () => {
    ok(check(withElement({ ...rf, frequency: '1e15 Hz', amplitude: '1000 T', static: { x: '1000 T', y: '-1000 T', z: '0 T' }, length: '1 km' })));
    ok(check(withElement({ ...twist, field: '1000 T', length: '1000 m' })));
    ok(check(withElement({ ...field, field: { x: '-1000 T', y: '0 T', z: '1000 T' } })));
    ok(check(withElement({ ...slit, width: '1 nm', height: '1000 m', x: '-1000 m', z: '1000 m' })));
  });
  it('refuses each kind beyond its limits, naming the range', () => {
    expect(lines(withElement({ ...rf, frequency: '1e16 Hz' }))).toEqual(['elements[0].frequency: the frequency must be at most 1e15 Hz, got 1e16 Hz']);
    expect(lines(withElement({ ...rf, amplitude: '2000 T' }))).toEqual(['elements[0].amplitude: the amplitude must be at most 1000 T, got 2000 T']);
    expect(lines(withElement({ ...rf, static: { x: '0 T', y: '0 T', z: '1e4 T' } }))).toEqual(['elements[0].static.z: the z component must be within ±1000 T, got 1e4 T']);
    expect(lines(withElement({ ...twist, field: '2 kT' }))).toEqual(['elements[0].field: the field size must be at most 1000 T, got 2 kT']);
    expect(lines(withElement({ ...field, length: '1e5 m' }))).toEqual(['elements[0].length: the length must be at most 1000 m, got 1e5 m']);
    expect(lines(withElement({ ...slit, width: '1e-12 m' }))).toEqual(['elements[0].width: the width must be between 1 nm and 1000 m, got 1e-12 m']);
    expect(lines(withElement({ ...slit, z: '-2 km' }))).toEqual(['elements[0].z: the offset z must be within ±1000 m, got -2 km']);
  });
  it('refuses a recombiner field beyond the limit (a hyperfine species)', () => {
    const d = rbLine();
    d.elements[2].to = 'C1';
    d.elements.push({ id: 'C1', kind: 'recombiner', axis: { roll: '0 deg' }, open: ['mJ=+1/2'], field: '1e9 T', to: 'T1' });
    expect(lines(d)).toEqual(['elements[7].field: the field size must be at most 1000 T, got 1e9 T']);
  });
});

describe('sums of weights and populations', () => {
  it('refuses velocity-table weights whose sum overflows (it used to give NaN yields)', () => {
    const d = bareLine();
    d.oven.velocity = { kind: 'table', points: [['500 m/s', 1e308], ['600 m/s', 1e308]] };
    expect(lines(d)).toEqual(['oven.velocity.points: the weights of the velocity table sum to more than 1.8e308, beyond the range of a number: scale them down (only their ratios count)']);
  });
  it('reads large and tiny weights whose sum is finite, normalised to 1', () => {
    const d = bareLine();
    d.oven.velocity = { kind: 'table', points: [['500 m/s', 8e307], ['600 m/s', 8e307]] };
    expect(ok(check(d)).line.oven.velocity).toEqual({ kind: 'table', points: [[500, 0.5], [600, 0.5]] });
    d.oven.velocity = { kind: 'table', points: [['500 m/s', 1e-300], ['600 m/s', 3e-300]] };
    const v = ok(check(d)).line.oven.velocity;
    expect(v.kind === 'table' && v.points.map((p) => p[1])).toEqual([0.25, 0.75]);
  });
  it('refuses a table speed outside the speed range', () => {
    const d = bareLine();
    d.oven.velocity = { kind: 'table', points: [['1e-297 m/s', 1], ['600 m/s', 1]] };
    expect(lines(d)).toEqual(['oven.velocity.points[0][0]: a speed must be between 0.1 m/s and 1e6 m/s, got 1e-297 m/s']);
  });
  it('refuses populations whose sum overflows', () => {
    const d = bareLine();
    d.oven.state = { kind: 'populations', axis: { roll: '0 deg' }, p: { '+1/2': 1e308, '-1/2': 1e308 } };
    expect(lines(d)).toEqual(['oven.state.p: the populations sum to more than 1.8e308, beyond the range of a number: scale them down (only their ratios count)']);
  });
});

describe('the first slit after the oven', () => {
  /** The bare line with a slit S1 first, at `gap`, and the oven's aperture when `aperture`. */
  const slitFirst = (gap: string | undefined, aperture: boolean, before?: Doc) => {
    const d = bareLine();
    if (aperture) d.oven.aperture = { width: '1 mm', height: '3 mm' };
    const s1: Doc = { id: 'S1', kind: 'slit', width: '0.1 mm', height: '3 mm', to: 'M1' };
    if (gap !== undefined) s1.gap = gap;
    d.elements.unshift(s1);
    if (before) {
      d.elements.unshift({ ...before, to: 'S1' });
      d.oven.to = before.id;
    } else d.oven.to = 'S1';
    return d;
  };
  it('refuses a first slit at the oven aperture (the collimation divides by the distance between them)', () => {
    expect(lines(slitFirst(undefined, true))).toEqual([
      'elements[0].gap: this slit is the first after the oven and stands 0 m from the oven aperture: the collimation runs from the aperture to the first slit and needs at least 1 µm between them; give this slit or an element before it a gap',
    ]);
    expect(lines(slitFirst('0 m', false))[0]).toMatch(/^elements\[0\]\.gap: this slit is the first after the oven and stands 0 m from the oven \(a point without oven\.aperture\)/);
    expect(lines(slitFirst('0.5 um', true))[0]).toMatch(/stands 5e-7 m from the oven aperture/);
  });
  it(`reads a first slit ${FIRST_SLIT_MIN_DISTANCE} m or more from the oven, by its own gap or by the elements before it`, () => {
    ok(check(slitFirst('1 um', true)));
    ok(check(slitFirst('30 cm', true)));
    ok(check(slitFirst('0 m', true, { id: 'F0', kind: 'field', field: { x: '0 T', y: '0 T', z: '1 uT' }, length: '2 cm' })));
    ok(check(slitFirst('0 m', true, { id: 'R0', kind: 'rotator', gap: '1 cm', axis: { roll: '90 deg' }, angle: '0 deg' })));
    expect(lines(slitFirst('0 m', true, { id: 'R0', kind: 'rotator', axis: { roll: '90 deg' }, angle: '0 deg' }))[0]).toMatch(/^elements\[1\]\.gap: this slit is the first/);
  });
  it('checks every path: a slit reached at 0 m through one magnet port is refused though another path reaches it later', () => {
    const d = bareLine();
    d.oven.aperture = { width: '1 mm', height: '3 mm' };
    d.elements[0].ports = { '+1/2': 'S1', '-1/2': 'F1' }; // M1 (no length) → S1 at 0 m, and M1 → F1 (5 cm) → S1
    d.elements.push(
      { id: 'F1', kind: 'field', field: { x: '0 T', y: '0 T', z: '1 uT' }, length: '5 cm', to: 'S1' },
      { id: 'S1', kind: 'slit', width: '0.1 mm', height: '3 mm', to: 'M2' },
    );
    expect(lines(d)).toEqual([expect.stringMatching(/^elements\[5\]\.gap: this slit is the first after the oven and stands 0 m/)]);
    d.elements[0].length = '1 cm';
    ok(check(d));
  });
  it('does not care about later slits, which may touch the element before them', () => {
    const d = slitFirst('20 cm', true);
    d.elements[0].to = 'S2';
    d.elements.splice(1, 0, { id: 'S2', kind: 'slit', width: '0.1 mm', height: '3 mm', to: 'M1' });
    ok(check(d));
  });
});

describe('values quoted in range messages', () => {
  it('shows a written value on one line, by its two ends when long', () => {
    const d = bareLine();
    d.elements[1].gap = '-1\ncm';
    d.elements[0].gap = `${'1'.repeat(200)} km`;
    expect(lines(d)).toEqual([
      'elements[0].gap: the gap must be at most 1000 m, got 1111111111111111111111111111…1111111111111111111111111 km (203 characters)',
      'elements[1].gap: the gap must not be negative, got -1\\ncm',
    ]);
  });
});

describe('within', () => {
  it('checks the magnitude of a signed quantity and both ends of a range', () => {
    expect(within(-1e6, LIMITS.gradient)).toBe(true);
    expect(within(-1.000001e6, LIMITS.gradient)).toBe(false);
    expect(within(0.1, LIMITS.speed)).toBe(true);
    expect(within(0.0999, LIMITS.speed)).toBe(false);
    expect(within(Number.NaN, LIMITS.speed)).toBe(false);
  });
});
