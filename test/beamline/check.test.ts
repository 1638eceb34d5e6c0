import { describe, expect, it } from 'vitest';
import { suggest } from '../../src/beamline/read.ts';
import type { Magnet } from '../../src/beamline/types.ts';
import { DESIGN_BEAM_KEYS, DESIGN_V1, bareLine } from './examples.ts';
import { check, lines, ok, problems, rbLine } from './helpers.ts';

describe('the reference documents of docs/design.md', () => {
  it('validates the format v1 example and normalises it to SI', () => {
    const r = ok(check(JSON.parse(DESIGN_V1)));
    expect(r.line.title).toBe('Bench B, roll scan');
    expect(r.line.species).toEqual({ kind: 'bare', j2: 1, g: 2.00231930436, massKg: 106.905 * 1.6605390666e-27 });
    expect(r.line.oven.flux).toEqual({ kind: 'given', value: 2e9 });
    expect(r.line.oven.velocity).toEqual({ kind: 'fixed', speed: 600 });
    expect(r.line.ambient).toEqual({ x: 0, y: 0, z: 0 });
    const m2 = r.line.elements[1] as Magnet;
    // roll α about the beam: n̂ = (sin α, 0, cos α) (docs/design.md, Axes and angles); sin 60° = √3/2
    expect(m2.axis.x).toBeCloseTo(Math.sqrt(3) / 2, 15);
    expect(m2.axis.z).toBeCloseTo(0.5, 15);
    expect(m2.axis.text).toBe('roll 60°');
    expect(m2.group).toBeUndefined();
    expect(r.line.elements[0].gap).toBe(0);
    expect(r.line.elements[2]).toMatchObject({ kind: 'detector', efficiency: 0.9, background: 3, dwell: 10, path: 'elements[2]' });
    expect(r.warnings).toEqual([]);
  });

  it('reports exactly what the beam-keys excerpt lacks: the header and detector D2', () => {
    expect(lines(JSON.parse(DESIGN_BEAM_KEYS))).toEqual(['format: missing "format": not a Spinyard beamline (expected "format": "spinyard.beamline")']);
    const withHeader = { format: 'spinyard.beamline', version: 1, ...JSON.parse(DESIGN_BEAM_KEYS) };
    expect(lines(withHeader)).toEqual(['elements[4].ports["F=2,mF=+1"]: target "D2" is not an element id or "stop"; ids: S1, M1, F1, T1, M2, D1']);
  });

  it('validates the beam-keys example once completed', () => {
    const r = ok(check(rbLine()));
    expect(r.line.species).toEqual({ kind: 'named', name: 'Rb-87' });
    expect(r.line.oven.velocity).toEqual({ kind: 'effusive', temperature: 400 });
    expect(r.line.oven.aperture).toEqual({ x: 0, z: 0, width: 0.2e-3, height: 3e-3 });
    const [s1, m1, f1, t1, m2, d1] = r.line.elements;
    expect(s1).toMatchObject({ kind: 'slit', gap: 0.3, width: 1e-4, height: 3e-3, x: 0, z: 0, to: 'M1' });
    expect(m1).toMatchObject({ kind: 'magnet', gap: 0.05, field: 0.8, gradient: 1000, length: 0.1, group: 'mJ', entry: 'adiabatic' });
    expect(f1).toMatchObject({ kind: 'field', field: { y: 0, z: 0 }, length: 0.05 });
    expect((f1 as { field: { x: number } }).field.x).toBeCloseTo(5e-6, 20);
    expect(t1).toMatchObject({ kind: 'twist', field: 2e-4, length: 0.04 });
    expect(m2).toMatchObject({ group: 'each', ports: { 'F=2,mF=+2': 'D1', 'F=2,mF=+1': 'D2', '*': 'stop' } });
    expect(d1).toMatchObject({ kind: 'detector', efficiency: 0.95, background: 20, dwell: 30 });
    expect((d1 as { window: object }).window).toEqual({ x: 1.1e-3, z: 0, width: 0.3e-3, height: 4e-3 });
  });
});

describe('checkBeamline: header', () => {
  it('rejects a wrong format', () => {
    expect(lines({ ...bareLine(), format: 'other.tool' })).toEqual(['format: not a Spinyard beamline: format is "other.tool", expected "spinyard.beamline"']);
  });
  it('rejects a newer version and says so', () => {
    expect(lines({ ...bareLine(), version: 3 })).toEqual([
      'version: this file is version 3, this Spinyard reads up to 1: open it with a newer Spinyard (the file is not changed)',
    ]);
  });
  it('rejects a missing or odd version', () => {
    const { version: _v, ...noVersion } = bareLine();
    expect(lines(noVersion)[0]).toMatch(/^version: missing "version"/);
    expect(lines({ ...bareLine(), version: '1' })[0]).toMatch(/whole number/);
    expect(lines({ ...bareLine(), version: 0 })[0]).toMatch(/older than any/);
  });
  it('rejects a document that is not an object', () => {
    expect(lines([1, 2])).toEqual(['a beamline is a JSON object, got a list']);
  });
});

describe('checkBeamline: keys', () => {
  it('rejects an unknown key with its path and a suggestion', () => {
    const d = bareLine();
    d.elements[1].gradeint = '100 T/m';
    expect(lines(d)).toEqual([
      'elements[1].gradeint: unknown key "gradeint" in a magnet (did you mean "gradient"?); allowed: id, kind, gap, axis, field, gradient, length, aperture, ports',
    ]);
  });
  it('rejects unknown keys at the top, in the oven and in nested objects', () => {
    const d = bareLine();
    d.ambinet = { x: '0 T', y: '0 T', z: '0 T' };
    d.oven.velocity.spead = '1 m/s';
    d.elements[0].axis.psi = '0 deg';
    const l = lines(d);
    expect(l).toContainEqual(expect.stringMatching(/^ambinet: unknown key "ambinet" in the beamline \(did you mean "ambient"\?\)/));
    expect(l).toContainEqual(expect.stringMatching(/^oven\.velocity\.spead: unknown key "spead"/));
    expect(l).toContainEqual(expect.stringMatching(/^elements\[0\]\.axis: an axis is \{"theta", "phi"\} or \{"roll"\}, got keys "theta", "phi", "psi"/));
  });
  it('rejects group and entry on a bare-spin line, saying why', () => {
    const d = bareLine();
    d.elements[0].group = 'mJ';
    d.elements[1].entry = 'sudden';
    expect(lines(d)).toEqual([
      'elements[0].group: "group" does not apply here: group applies to hyperfine species only (this line\'s species has no nuclear spin)',
      'elements[1].entry: "entry" does not apply here: entry applies to hyperfine species only (this line\'s species has no nuclear spin)',
    ]);
  });
  it('rejects a "to" on a detector and a magnet', () => {
    const d = bareLine();
    d.elements[2].to = 'stop';
    d.elements[0].to = 'M2';
    const l = lines(d);
    expect(l).toContain('elements[2].to: "to" does not apply here: a detector is a leaf: it ends its path and routes nothing');
    expect(l).toContain('elements[0].to: "to" does not apply here: a magnet routes each port in "ports"');
  });
  it('reports all problems at once, not only the first', () => {
    const d = bareLine();
    d.elements[0].axis = { roll: 'pi/4 rad' };
    d.elements[2].efficiency = 1.2;
    d.oven.flux = '-1 /s';
    d.elements[3].dwell = '10 m';
    expect(problems(d).map((p) => p.path)).toEqual(['oven.flux', 'elements[0].axis.roll', 'elements[2].efficiency', 'elements[3].dwell']);
  });
});

describe('checkBeamline: ids and routing', () => {
  it('rejects duplicate ids', () => {
    const d = bareLine();
    d.elements[3].id = 'D1';
    expect(lines(d)).toContain('elements[3].id: duplicate id "D1": elements[2] has it already');
  });
  it.each(['stop', 'oven'])('rejects the reserved id %s', (id) => {
    const d = bareLine();
    d.elements[3].id = id;
    d.elements[1].ports['-1/2'] = 'stop';
    expect(lines(d)).toContainEqual(expect.stringMatching(new RegExp(`^elements\\[3\\]\\.id: "${id}" is reserved`)));
  });
  it('rejects a dangling target', () => {
    const d = bareLine();
    d.elements[1].ports['-1/2'] = 'D3';
    expect(lines(d)).toEqual(['elements[1].ports["-1/2"]: target "D3" is not an element id or "stop"; ids: M1, M2, D1, D2']);
  });
  it('rejects the oven as a target', () => {
    const d = bareLine();
    d.elements[1].ports['-1/2'] = 'oven';
    expect(lines(d)).toEqual(['elements[1].ports["-1/2"]: the oven is the source and cannot be a target']);
  });
  it('rejects a cycle and names it', () => {
    const d = bareLine();
    d.elements[1].ports['-1/2'] = 'M1';
    expect(lines(d)).toEqual(['elements[1].ports["-1/2"]: cycle M1 → M2 → M1: port -1/2 of M2 is routed back upstream']);
  });
  it('rejects a cycle through one-output elements', () => {
    const d = rbLine();
    d.elements[3].to = 'F1'; // T1 → F1 → T1
    expect(lines(d)).toEqual(['elements[3].to: cycle F1 → T1 → F1: the output of T1 is routed back upstream']);
  });
  it('rejects unrouted ports and names them', () => {
    const d = rbLine();
    delete d.elements[4].ports['*'];
    expect(lines(d)).toEqual([
      'elements[4].ports: unrouted ports F=2,mF=0, F=2,mF=-1, F=2,mF=-2, F=1,mF=+1, F=1,mF=0, F=1,mF=-1: route every port by name or with "*"',
    ]);
    const b = bareLine();
    delete b.elements[0].ports['-1/2'];
    expect(lines(b)).toEqual(['elements[0].ports: unrouted port -1/2: route every port by name or with "*"']);
  });
  it('rejects port labels the species does not have', () => {
    const d = rbLine();
    d.elements[1].ports = { 'mJ=+1/2': 'F1', 'mJ=-1/2': 'stop', 'F=3,mF=+3': 'stop' };
    expect(lines(d)).toEqual(['elements[1].ports["F=3,mF=+3"]: no port "F=3,mF=+3" for this species and group; its ports are mJ=+1/2, mJ=-1/2']);
    const b = bareLine();
    b.elements[0].ports['+1'] = 'stop';
    expect(lines(b)[0]).toMatch(/^elements\[0\]\.ports\["\+1"\]: no port "\+1"/);
  });
  it('allows several ports routed to one element', () => {
    const d = bareLine();
    d.elements[1].ports = { '+1/2': 'D1', '-1/2': 'D1' };
    const r = ok(check(d));
    expect(r.warnings).toEqual([{ path: 'elements[3]', message: 'D2 is not reached from the oven' }]);
  });
  it('warns when "*" routes no port', () => {
    const d = bareLine();
    d.elements[0].ports['*'] = 'stop';
    expect(ok(check(d)).warnings).toEqual([{ path: 'elements[0].ports["*"]', message: '"*" routes no port: every port is named' }]);
  });
  it('rejects a one-output element without "to"', () => {
    const d = rbLine();
    delete d.elements[2].to;
    expect(lines(d)).toEqual(['elements[2].to: missing "to": a field region has one output; route it to an element id or "stop"']);
    delete d.oven.to;
    expect(lines(d)).toContain('oven.to: missing "to": the oven has one output; route it to an element id or "stop"');
  });
  it('rejects a rotator, twist, rf, slit and recombiner without "to"', () => {
    const d = bareLine();
    d.elements[0].ports['+1/2'] = 'R1';
    d.elements.push(
      { id: 'R1', kind: 'rotator', axis: { roll: '90 deg' }, angle: '90 deg' },
      { id: 'T1', kind: 'twist', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm' },
      { id: 'RF1', kind: 'rf', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm' },
      { id: 'S1', kind: 'slit', width: '1 mm', height: '1 mm' },
      { id: 'C1', kind: 'recombiner', axis: { roll: '0 deg' }, open: ['+1/2'] },
    );
    expect(lines(d)).toEqual([
      'elements[4].to: missing "to": a rotator has one output; route it to an element id or "stop"',
      'elements[5].to: missing "to": a field twist has one output; route it to an element id or "stop"',
      'elements[6].to: missing "to": an RF flipper has one output; route it to an element id or "stop"',
      'elements[7].to: missing "to": a slit has one output; route it to an element id or "stop"',
      'elements[8].to: missing "to": a recombiner has one output; route it to an element id or "stop"',
    ]);
  });
  it('ends every path at a detector or "stop": routing into a detector and on is refused', () => {
    const d = bareLine();
    d.elements[2].ports = { '*': 'D2' };
    expect(lines(d)).toEqual(['elements[2].ports: "ports" does not apply here: a detector is a leaf: it ends its path and routes nothing']);
  });
  it('rejects a magnet without ports and a stop written as an element', () => {
    const d = bareLine();
    delete d.elements[1].ports;
    d.elements.push({ id: 'X', kind: 'stop' });
    const l = lines(d);
    expect(l).toContain('elements[1].ports: missing "ports": a magnet routes each port (+1/2, -1/2) to an element id or "stop"');
    expect(l).toContain('elements[4].kind: unknown element kind "stop" (a beam stop is the target "stop", not an element); kinds: magnet, rotator, field, twist, rf, recombiner, slit, detector');
  });
});

describe('checkBeamline: quantities and bounds', () => {
  it('rejects negative flux, lengths, gaps, widths and temperatures', () => {
    const d = rbLine();
    d.oven.flux = '-5 /s';
    d.elements[0].gap = '-1 cm';
    d.elements[0].width = '-0.1 mm';
    d.elements[1].length = '-10 cm';
    d.oven.velocity.temperature = '-3 K';
    expect(lines(d)).toEqual([
      'oven.flux: the flux must not be negative, got -5 /s',
      'oven.velocity.temperature: the temperature must be positive, got -3 K',
      'elements[0].gap: the gap must not be negative, got -1 cm',
      'elements[0].width: the width must be positive, got -0.1 mm',
      'elements[1].length: the length must not be negative, got -10 cm',
    ]);
  });
  it('rejects a temperature below absolute zero written in degC', () => {
    const d = rbLine();
    d.oven.velocity.temperature = '-300 degC';
    expect(lines(d)[0]).toMatch(/^oven\.velocity\.temperature: the temperature must be positive/);
  });
  it('rejects an efficiency outside [0, 1]', () => {
    const d = bareLine();
    d.elements[2].efficiency = 1.5;
    d.elements[3].efficiency = -0.1;
    expect(lines(d)).toEqual(['elements[2].efficiency: the efficiency must lie in [0, 1], got 1.5', 'elements[3].efficiency: the efficiency must lie in [0, 1], got -0.1']);
  });
  it('rejects an angle with a wrong unit at its path', () => {
    const d = bareLine();
    d.elements[1].axis = { roll: '4 rad^-1' };
    expect(lines(d)).toEqual(['elements[1].axis.roll: expected an angle, got 4 rad^-1']);
  });
  it('reads an axis given as theta, phi', () => {
    const d = bareLine();
    d.elements[0].axis = { theta: '90 deg', phi: '90 deg' };
    const m1 = ok(check(d)).line.elements[0] as Magnet;
    // n̂(θ, φ) = (sinθ cosφ, sinθ sinφ, cosθ) (docs/design.md, Axes and angles): θ = φ = 90° is +y, along the beam
    expect(m1.axis.y).toBeCloseTo(1, 15);
    expect(m1.axis.text).toBe('θ 90°, φ 90°');
  });
  it('reads a vapor flux and rejects a bad one', () => {
    const d = rbLine();
    d.oven.flux = { kind: 'vapor', temperature: '460 K' };
    expect(ok(check(d)).line.oven.flux).toEqual({ kind: 'vapor', temperature: 460 });
    d.oven.flux = { kind: 'vapour', temperature: '460 K' };
    expect(lines(d)[0]).toMatch(/^oven\.flux\.kind: a flux object is \{"kind": "vapor"/);
  });
  it('requires a velocity', () => {
    const d = bareLine();
    delete d.oven.velocity;
    expect(lines(d)[0]).toMatch(/^oven\.velocity: missing "velocity": one of \{"kind": "fixed"/);
  });
  it('reads the ambient field, default zero', () => {
    const d = bareLine();
    d.ambient = { x: '0 T', y: '0 T', z: '50 uT' };
    expect(ok(check(d)).line.ambient.z).toBeCloseTo(5e-5, 18);
    d.ambient = { x: '0 T', y: '0 T' };
    expect(lines(d)).toEqual(['ambient.z: missing "z"']);
  });
});

describe('checkBeamline: other kinds', () => {
  it('reads rotator and rf elements', () => {
    const d = bareLine();
    d.elements[0].ports['+1/2'] = 'R1';
    d.elements.push(
      { id: 'R1', kind: 'rotator', axis: { roll: '90 deg' }, angle: '(pi/2) rad', to: 'RF1' },
      { id: 'RF1', kind: 'rf', gap: '1 cm', static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm', to: 'M2' },
    );
    const r = ok(check(d));
    expect(r.line.elements[4]).toMatchObject({ kind: 'rotator', to: 'RF1' });
    expect((r.line.elements[4] as { angle: number }).angle).toBeCloseTo(Math.PI / 2, 15);
    expect(r.line.elements[5]).toMatchObject({ kind: 'rf', frequency: 28e6, length: 0.02, gap: 0.01 });
  });
});

describe('checkBeamline: keys named like built-in properties', () => {
  const NAMES = ['toString', 'constructor', 'valueOf', '__proto__', 'hasOwnProperty', 'isPrototypeOf', '__defineGetter__'];
  /** Sets o[k] as JSON.parse does: an own property, "__proto__" included. */
  const own = (o: Record<string, unknown>, k: string, v: unknown) => Object.defineProperty(o, k, { value: v, enumerable: true, writable: true, configurable: true });
  it.each(NAMES)('reports %s as an unknown key, never a function or an object', (k) => {
    const d = bareLine();
    own(d.elements[2], k, 1); // a detector, whose "to" and "ports" have reasons of their own
    own(d.elements[0], k, 1);
    own(d, k, 1);
    own(d.oven.velocity, k, 1);
    const l = lines(d);
    expect(l).toHaveLength(4);
    for (const line of l) {
      expect(line).toMatch(new RegExp(`unknown key "${k}" in `));
      expect(line).not.toMatch(/native code|\[object Object\]|function /);
    }
  });
  it.each(NAMES)('reports %s as a port label, a population and a phase the species lacks', (k) => {
    const d = bareLine();
    own(d.elements[0].ports, k, 'stop');
    d.oven.state = { kind: 'populations', axis: { roll: '0 deg' }, p: { '+1/2': 1 } };
    own(d.oven.state.p, k, 1);
    const l = lines(d);
    expect(l).toEqual([
      `oven.state.p${k.startsWith('_') || /^[A-Za-z]/.test(k) ? `.${k}` : `["${k}"]`}: no state "${k}" for this species; its states are +1/2, -1/2`,
      `elements[0].ports.${k}: no port "${k}" for this species and group; its ports are +1/2, -1/2`,
    ]);
  });
  it('does not take a built-in name for a species, a kind or an id target', () => {
    const d = bareLine();
    d.elements[3].kind = 'constructor';
    expect(lines(d)).toEqual(['elements[3].kind: unknown element kind "constructor"; kinds: magnet, rotator, field, twist, rf, recombiner, slit, detector']);
    const t = bareLine();
    t.elements[1].ports['-1/2'] = 'toString';
    expect(lines(t)).toEqual(['elements[1].ports["-1/2"]: target "toString" is not an element id or "stop"; ids: M1, M2, D1, D2']);
    expect(lines({ ...rbLine(), species: 'hasOwnProperty' })[0]).toMatch(/^species: unknown species "hasOwnProperty"; known: /);
  });
});

describe('checkBeamline: long keys, values and lists', () => {
  it('reports a 1 MB unknown key once, quoted by its two ends, without a suggestion search', () => {
    const d = bareLine();
    const k = `gradient${'x'.repeat(1024 * 1024)}`;
    d.elements[0][k] = '1 T/m';
    const [p] = problems(d);
    expect(p.path).toMatch(/^elements\[0\]\["gradientx+…x+" \(1,048,584 characters\)\]$/);
    expect(p.message).toMatch(/^unknown key "gradientx+…x+" \(1,048,584 characters\) in a magnet; allowed: id, kind, gap, axis, field, gradient, length, aperture, ports$/);
    expect(p.message.length).toBeLessThan(300);
  });
  it('still suggests the nearest key for a short one', () => {
    expect(suggest('gradeint', ['axis', 'gradient'])).toBe(' (did you mean "gradient"?)');
    expect(suggest('GRADIENT', ['gradient'])).toBe(' (did you mean "gradient"?)');
    expect(suggest('g'.repeat(65), ['g'.repeat(65)])).toBe(''); // longer than SUGGEST_MAX_CHARS: not searched
  });
  it('abbreviates a long id, target, species name and kind in messages', () => {
    const long = 'Q'.repeat(100000);
    const d = bareLine();
    d.elements[1].ports['-1/2'] = long;
    d.elements[3].kind = long;
    d.elements[2].id = `${long}:1`;
    const l = lines(d);
    for (const line of l) expect(line.length).toBeLessThan(500);
    expect(l).toContain('elements[2].id: an id must not contain ":" (results write ELEMENT:PORT), got "QQQQQQQQQQQQQQQQQQQQQQQQQQQQ…QQQQQQQQQQQQQQQQQQQQQQQQQQ:1" (100,002 characters)');
    expect(lines({ ...rbLine(), species: long })[0].length).toBeLessThan(500);
  });
  it('lists at most a few hundred characters of ids for a dangling target in a long line', () => {
    const d = bareLine();
    for (let i = 0; i < 20000; i++) d.elements.push({ id: `D${i + 10}`, kind: 'detector' });
    d.elements[1].ports['-1/2'] = 'D3';
    const l = lines(d);
    expect(l).toHaveLength(1);
    expect(l[0]).toMatch(/^elements\[1\]\.ports\["-1\/2"\]: target "D3" is not an element id or "stop"; ids: M1, M2, D1, D2, D10, .*… \(20,004 in all\)$/);
  });
  it('reads a chain of 20,000 elements and names a cycle through all of them, without deep recursion', () => {
    const d = bareLine();
    const n = 20000;
    d.oven.to = 'R0';
    for (let i = 0; i < n; i++) d.elements.push({ id: `R${i}`, kind: 'rotator', axis: { roll: '0 deg' }, angle: '0 deg', to: i + 1 < n ? `R${i + 1}` : 'M1' });
    const r = ok(check(d));
    expect(r.line.elements).toHaveLength(n + 4);
    d.elements[n + 3].to = 'R0'; // back to the first
    const l = lines(d);
    expect(l).toHaveLength(1);
    expect(l[0]).toMatch(/^elements\[20003\]\.to: cycle R0 → R1 → .* … \(20,001 in all\): the output of R19999 is routed back upstream$/);
  });
  it('stops after 1,000 problems and says so', () => {
    const d = bareLine();
    for (let i = 0; i < 100000; i++) d.elements.push(1);
    const l = lines(d);
    expect(l).toHaveLength(1001);
    expect(l[999]).toBe('elements[1003]: expected an element object, got number 1');
    expect(l[1000]).toBe('the reader stopped after 1,000 problems; correct these and read the file again');
  });
});

describe('checkBeamline: bare spins up to the engine\'s limit', () => {
  it.each([['31/2', 31], [15.5, 31], ['15', 30]])('reads spin %j (2j = %i)', (spin, j2) => {
    const d = bareLine();
    d.species.spin = spin;
    for (const e of d.elements) if (e.kind === 'magnet') e.ports = { '*': e.ports['+1/2'] };
    expect(ok(check(d)).line.species).toMatchObject({ kind: 'bare', j2 });
  });
  it.each([['16'], ['1e7'], ['1e9'], [1e300], ['33/2']])('refuses spin %j before building its labels, with the path', (spin) => {
    const d = bareLine();
    d.species.spin = spin;
    expect(lines(d)).toEqual([`species.spin: a bare spin is at most j = 31/2 (2j ≤ 31, the largest the engine's spin matrices take), got ${typeof spin === 'string' ? `"${spin}"` : String(spin)}`]);
  });
});
