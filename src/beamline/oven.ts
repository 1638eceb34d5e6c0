/**
 * The oven: initial spin state, flux, velocity distribution, aperture, and its one output `to`.
 * - state: unpolarized (ρ = 1/d) | pure {axis, m} (|j m⟩ or |F m_F⟩ along n̂) | populations {axis, p}
 *   (zero-field states along n̂; missing labels 0; normalised by their sum, with a warning when it is not 1) |
 *   density {axis, basis, re, im} (ρ over the zero-field states `basis` along n̂; Hermitian, ≥ 0, trace 1).
 * - flux: a rate "2e9 /s", or {kind: "vapor", temperature} (the engine estimates it from the reservoir).
 * - velocity (required): fixed {speed} | effusive {temperature} | supersonic {speed, ratio} |
 *   table {points: [[speed, weight], …]}: speeds strictly increasing and positive, weights ≥ 0 with a
 *   positive finite sum, normalised to sum 1.
 * Speeds, temperatures, the speed ratio and the flux are checked against the ranges of limits.ts.
 */
import { stateLabels } from './labels.ts';
import { LIMITS } from './limits.ts';
import { listText, quote } from './messages.ts';
import { type Obj, type ReadCtx, at, axis, bounded, checkKeys, choice, describe, full, isObj, object, problem, quantity, rect, setOwn, target, warn } from './read.ts';
import type { Flux, Oven, OvenState, Velocity } from './types.ts';
import { isProblem, parseQuantity } from './units.ts';
import { cmatZeros } from '../physics/cmat.ts';
import { eigh } from '../physics/eigh.ts';
import { plausible } from './plausible.ts';

export const OVEN_KEYS = ['state', 'flux', 'velocity', 'aperture', 'to'] as const;
export const VELOCITY_KINDS = ['fixed', 'effusive', 'supersonic', 'table'] as const;
export const STATE_KINDS = ['unpolarized', 'pure', 'populations', 'density'] as const;

/** How far a density matrix may be from Hermitian, and its least eigenvalue below 0, relative to its trace. */
export const DENSITY_TOLERANCE = 1e-9;

/**
 * A density matrix over the zero-field states `basis` along an axis: `re` (and `im`, 0 where absent) are its
 * rows, in the order of `basis`; Hermitian and positive semidefinite (both to 1e-9 of its trace), normalised to
 * trace 1 (with a warning when it was not 1). States of the species missing from `basis` have no weight.
 */
function readDensity(ctx: ReadCtx, s: Obj, p: string, labels: string[] | undefined): OvenState | undefined {
  checkKeys(ctx, s, p, ['kind', 'axis', 'basis', 're', 'im'], 'a density-matrix state');
  const ax = axis(ctx, s, 'axis', p);
  const bp = at(p, 'basis');
  const basis = s.basis;
  if (basis === undefined) return problem(ctx, bp, `missing "basis": the zero-field states the rows and columns stand for, in order${labels ? `, from ${listText(labels)}` : ''}`);
  if (!Array.isArray(basis) || basis.length === 0) return problem(ctx, bp, `expected a non-empty list of state labels, got ${describe(basis)}`);
  const seen = new Set<string>();
  for (let i = 0; i < basis.length; i++) {
    const l: unknown = basis[i];
    if (typeof l !== 'string') return problem(ctx, at(bp, i), `expected a state label, got ${describe(l)}`);
    if (labels && !labels.includes(l)) return problem(ctx, at(bp, i), `no state ${quote(l)} for this species; its states are ${listText(labels)}`);
    if (seen.has(l)) return problem(ctx, at(bp, i), `the state ${quote(l)} is listed twice`);
    seen.add(l);
  }
  const d = basis.length;
  const part = (key: 're' | 'im'): number[] | undefined => {
    const mp = at(p, key);
    const rows: unknown = s[key];
    if (rows === undefined) return key === 'im' ? new Array<number>(d * d).fill(0) : problem(ctx, mp, `missing "re": the real parts of ρ, ${d} rows of ${d} numbers`);
    if (!Array.isArray(rows) || rows.length !== d) return problem(ctx, mp, `expected ${d} rows (one per state of "basis"), got ${Array.isArray(rows) ? `${rows.length}` : describe(rows)}`);
    const out: number[] = [];
    for (let r = 0; r < d; r++) {
      const row: unknown = rows[r];
      if (!Array.isArray(row) || row.length !== d) return problem(ctx, at(mp, r), `expected a row of ${d} numbers, got ${Array.isArray(row) ? `${row.length}` : describe(row)}`);
      for (let c = 0; c < d; c++) {
        const v = parseQuantity(row[c], 'dimensionless', at(at(mp, r), c));
        if (isProblem(v)) {
          ctx.problems.push(v);
          return undefined;
        }
        if (!Number.isFinite(v) || Math.abs(v) > 1e300) return problem(ctx, at(at(mp, r), c), `expected a finite number, got ${describe(row[c])}`);
        out.push(v);
      }
    }
    return out;
  };
  const re = part('re'), im = part('im');
  if (!re || !im || !ax) return undefined;
  let tr = 0;
  for (let i = 0; i < d; i++) tr += re[i * d + i];
  if (!(tr > 0)) return problem(ctx, at(p, 're'), `the trace of ρ (the sum of the diagonal of "re") is ${tr}; a state needs a positive trace`);
  for (let a = 0; a < d; a++) {
    if (Math.abs(im[a * d + a]) > DENSITY_TOLERANCE * tr) return problem(ctx, at(at(at(p, 'im'), a), a), `a diagonal element of ρ must be real: the imaginary part is ${im[a * d + a]}, not 0`);
    for (let b = a + 1; b < d; b++) {
      if (Math.abs(re[a * d + b] - re[b * d + a]) > DENSITY_TOLERANCE * tr || Math.abs(im[a * d + b] + im[b * d + a]) > DENSITY_TOLERANCE * tr) {
        return problem(ctx, at(at(at(p, 're'), a), b), `ρ is not Hermitian: element (${quote(basis[a])}, ${quote(basis[b])}) is ${re[a * d + b]} + ${im[a * d + b]}i but (${quote(basis[b])}, ${quote(basis[a])}) is ${re[b * d + a]} + ${im[b * d + a]}i (it must be the complex conjugate)`);
      }
    }
  }
  const m = cmatZeros(d, d);
  m.re.set(re);
  m.im.set(im);
  const least = eigh(m).values[0];
  if (least < -DENSITY_TOLERANCE * tr) return problem(ctx, p, `ρ is not positive semidefinite: its least eigenvalue is ${least.toPrecision(4)} (trace ${tr.toPrecision(4)}); a state has no negative probabilities`);
  if (Math.abs(tr - 1) > 1e-9) warn(ctx, at(p, 're'), `the trace of ρ is ${tr}; normalised to 1`);
  // the Hermitian part, normalised
  const nre: number[] = [], nim: number[] = [];
  for (let a = 0; a < d; a++) for (let b = 0; b < d; b++) {
    nre.push((a === b ? re[a * d + a] : 0.5 * (re[a * d + b] + re[b * d + a])) / tr);
    nim.push((a === b ? 0 : 0.5 * (im[a * d + b] - im[b * d + a])) / tr);
  }
  return { kind: 'density', axis: ax, basis: [...basis] as string[], re: nre, im: nim };
}


function readState(ctx: ReadCtx, o: Obj, path: string): OvenState | undefined {
  const s = object(ctx, o, 'state', path, true);
  if (!s) return undefined;
  const p = at(path, 'state');
  const kind = s.kind === undefined ? problem(ctx, at(p, 'kind'), `missing "kind": one of ${STATE_KINDS.join(', ')}`) : choice(ctx, s, 'kind', p, STATE_KINDS);
  if (!kind) return undefined;
  const labels = ctx.species ? stateLabels(ctx.species) : undefined;
  if (kind === 'unpolarized') {
    checkKeys(ctx, s, p, ['kind'], 'an unpolarized state');
    return { kind };
  }
  if (kind === 'pure') {
    checkKeys(ctx, s, p, ['kind', 'axis', 'm'], 'a pure state');
    const ax = axis(ctx, s, 'axis', p);
    const m = s.m;
    if (m === undefined) return problem(ctx, at(p, 'm'), `missing "m"${labels ? `: one of ${listText(labels)}` : ''}`);
    if (typeof m !== 'string') return problem(ctx, at(p, 'm'), `expected a state label such as ${labels ? JSON.stringify(labels[0]) : '"+1/2"'}, got ${describe(m)}`);
    if (labels && !labels.includes(m)) return problem(ctx, at(p, 'm'), `no state ${quote(m)} for this species; its states are ${listText(labels)}`);
    return ax ? { kind, axis: ax, m } : undefined;
  }
  if (kind === 'density') return readDensity(ctx, s, p, labels);
  checkKeys(ctx, s, p, ['kind', 'axis', 'p'], 'a populations state');
  const ax = axis(ctx, s, 'axis', p);
  const pv = object(ctx, s, 'p', p, true);
  if (!pv) return undefined;
  const pp = at(p, 'p');
  const pops: Record<string, number> = {};
  let ok = true;
  for (const [l, v] of Object.entries(pv)) {
    if (full(ctx)) return undefined;
    if (labels && !labels.includes(l)) {
      problem(ctx, at(pp, l), `no state ${quote(l)} for this species; its states are ${listText(labels)}`);
      ok = false;
      continue;
    }
    const r = parseQuantity(v, 'dimensionless', at(pp, l));
    if (isProblem(r)) {
      ctx.problems.push(r);
      ok = false;
    } else if (bounded(ctx, r, at(pp, l), 'a population', { nonNegative: true }, v) === undefined) ok = false;
    else setOwn(pops, l, r);
  }
  if (!ok || !ax) return undefined;
  const sum = Object.values(pops).reduce((a, b) => a + b, 0);
  if (!(sum > 0)) return problem(ctx, pp, 'the populations sum to 0: give at least one positive population');
  if (!Number.isFinite(sum)) return problem(ctx, pp, 'the populations sum to more than 1.8e308, beyond the range of a number: scale them down (only their ratios count)');
  if (Math.abs(sum - 1) > 1e-9) warn(ctx, pp, `the populations sum to ${sum}; normalised to 1`);
  for (const l of Object.keys(pops)) pops[l] /= sum;
  return { kind, axis: ax, p: pops };
}

function readFlux(ctx: ReadCtx, o: Obj, path: string): Flux | undefined {
  const p = at(path, 'flux');
  const v = o.flux;
  if (v === undefined) return problem(ctx, p, 'missing "flux": a rate such as "2e9 /s", or {"kind": "vapor", "temperature": "460 K"}');
  if (isObj(v)) {
    checkKeys(ctx, v, p, ['kind', 'temperature'], 'a vapor flux estimate');
    if (v.kind !== 'vapor') return problem(ctx, at(p, 'kind'), `a flux object is {"kind": "vapor", "temperature": …}, got kind ${describe(v.kind)}`);
    const t = quantity(ctx, v, 'temperature', 'temperature', p, { positive: true, range: LIMITS.temperature, what: 'the temperature' });
    plausible(ctx, at(p, 'temperature'), 'temperature', t, 'the reservoir temperature');
    return t === undefined ? undefined : { kind: 'vapor', temperature: t };
  }
  const f = quantity(ctx, o, 'flux', 'rate', path, { nonNegative: true, range: LIMITS.flux, what: 'the flux' });
  plausible(ctx, p, 'flux', f, 'the flux');
  return f === undefined ? undefined : { kind: 'given', value: f };
}

function readVelocity(ctx: ReadCtx, o: Obj, path: string): Velocity | undefined {
  const p = at(path, 'velocity');
  if (o.velocity === undefined) {
    return problem(ctx, p, `missing "velocity": one of {"kind": "fixed", "speed": "600 m/s"}, {"kind": "effusive", "temperature": "400 K"}, {"kind": "supersonic", "speed", "ratio"}, {"kind": "table", "points"}`);
  }
  const v = object(ctx, o, 'velocity', path, true);
  if (!v) return undefined;
  const kind = v.kind === undefined ? problem(ctx, at(p, 'kind'), `missing "kind": one of ${VELOCITY_KINDS.join(', ')}`) : choice(ctx, v, 'kind', p, VELOCITY_KINDS);
  if (!kind) return undefined;
  switch (kind) {
    case 'fixed': {
      checkKeys(ctx, v, p, ['kind', 'speed'], 'a fixed velocity');
      const speed = quantity(ctx, v, 'speed', 'speed', p, { positive: true, range: LIMITS.speed, what: 'the speed' });
      return speed === undefined ? undefined : { kind, speed };
    }
    case 'effusive': {
      checkKeys(ctx, v, p, ['kind', 'temperature'], 'an effusive velocity distribution');
      const temperature = quantity(ctx, v, 'temperature', 'temperature', p, { positive: true, range: LIMITS.temperature, what: 'the temperature' });
      plausible(ctx, at(p, 'temperature'), 'temperature', temperature, 'the oven temperature');
      return temperature === undefined ? undefined : { kind, temperature };
    }
    case 'supersonic': {
      checkKeys(ctx, v, p, ['kind', 'speed', 'ratio'], 'a supersonic velocity distribution');
      const speed = quantity(ctx, v, 'speed', 'speed', p, { positive: true, range: LIMITS.speed, what: 'the speed' });
      const ratio = quantity(ctx, v, 'ratio', 'dimensionless', p, { positive: true, range: LIMITS.ratio, what: 'the speed ratio' });
      return speed === undefined || ratio === undefined ? undefined : { kind, speed, ratio };
    }
    case 'table':
      checkKeys(ctx, v, p, ['kind', 'points'], 'a velocity table');
      return readTable(ctx, v, p);
  }
}

function readTable(ctx: ReadCtx, v: Obj, p: string): Velocity | undefined {
  const pp = at(p, 'points');
  const pts = v.points;
  if (pts === undefined) return problem(ctx, pp, 'missing "points": [[speed, weight], …]');
  if (!Array.isArray(pts)) return problem(ctx, pp, `expected a list of [speed, weight] pairs, got ${describe(pts)}`);
  if (pts.length === 0) return problem(ctx, pp, 'the velocity table is empty: give at least one [speed, weight] pair');
  const out: [number, number][] = [];
  let ok = true;
  for (let i = 0; i < pts.length; i++) {
    if (full(ctx)) return undefined;
    const pt: unknown = pts[i];
    const ip = at(pp, i);
    if (!Array.isArray(pt) || pt.length !== 2) {
      ok = false;
      problem(ctx, ip, `expected a [speed, weight] pair, got ${describe(pt)}`);
      continue;
    }
    const s = parseQuantity(pt[0], 'speed', at(ip, 0));
    const w = parseQuantity(pt[1], 'dimensionless', at(ip, 1));
    if (isProblem(s)) ctx.problems.push(s);
    else if (bounded(ctx, s, at(ip, 0), 'a speed', { positive: true, range: LIMITS.speed }, pt[0]) === undefined) ok = false;
    if (isProblem(w)) ctx.problems.push(w);
    else if (bounded(ctx, w, at(ip, 1), 'a weight', { nonNegative: true }, pt[1]) === undefined) ok = false;
    if (isProblem(s) || isProblem(w)) ok = false;
    else out.push([s, w]);
  }
  if (!ok) return undefined;
  for (let i = 1; i < out.length; i++) {
    if (!(out[i][0] > out[i - 1][0])) {
      return problem(ctx, at(pp, i), `the table is not sorted by speed: ${out[i][0]} m/s follows ${out[i - 1][0]} m/s (speeds must increase strictly)`);
    }
  }
  const sum = out.reduce((a, [, w]) => a + w, 0);
  if (!(sum > 0)) return problem(ctx, pp, 'the weights of the velocity table sum to 0');
  if (!Number.isFinite(sum)) return problem(ctx, pp, 'the weights of the velocity table sum to more than 1.8e308, beyond the range of a number: scale them down (only their ratios count)');
  return { kind: 'table', points: out.map(([s, w]) => [s, w / sum] as const) };
}

export function readOven(ctx: ReadCtx, v: unknown): Oven | undefined {
  const path = 'oven';
  if (v === undefined) return problem(ctx, path, 'missing "oven": the source (state, flux, velocity, to)');
  if (!isObj(v)) return problem(ctx, path, `expected an object, got ${describe(v)}`);
  checkKeys(ctx, v, path, OVEN_KEYS, 'the oven');
  const state = readState(ctx, v, path);
  const flux = readFlux(ctx, v, path);
  const velocity = readVelocity(ctx, v, path);
  const aperture = rect(ctx, v, 'aperture', path);
  const to = target(ctx, v, 'to', path, 'the oven');
  if (!state || !flux || !velocity || !to) return undefined;
  const oven: Oven = { state, flux, velocity, to, path: 'oven' };
  if (aperture) oven.aperture = aperture;
  return oven;
}
