/**
 * `npm run bench -- cost [--long]`: the cost estimate made before a run (src/engine/cost.ts) beside the run's measured
 * time, for the samples and for long lines (Rb-87 analyser chains, magnets routing both ports, bench J with a field
 * twist at one speed). With --long also bench J with the twist over its effusive beam, which takes minutes.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { parseBeamlineText } from '../src/beamline/index.ts';
import type { Beamline } from '../src/beamline/types.ts';
import { estimateLine, runLine } from '../src/engine/index.ts';

function lineOf(text: string): Beamline {
  const r = parseBeamlineText(text);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('; '));
  return r.line;
}

/** Rb-87 analysers: n magnets each passing m_J = +1/2 through a 40° rotator to the next, m_J = −1/2 to its collector. */
function chain(n: number): Beamline {
  const elements: object[] = [{ id: 'S1', kind: 'slit', gap: '30 cm', width: '1 mm', height: '0.05 mm', to: 'M1' }];
  for (let i = 1; i <= n; i++) {
    elements.push({ id: `M${i}`, kind: 'magnet', gap: i === 1 ? '5 cm' : '2 cm', axis: { roll: '0 deg' }, field: '0.5 T', gradient: '200 T/m', length: '5 cm',
      aperture: { width: '2 mm', height: '6 mm' }, group: 'mJ', ports: { 'mJ=+1/2': i === n ? 'D1' : `R${i}`, 'mJ=-1/2': i === 1 ? 'stop' : `X${i}` } });
    if (i > 1) elements.push({ id: `X${i}`, kind: 'detector', gap: '5 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '20 mm' } });
    if (i < n) elements.push({ id: `R${i}`, kind: 'rotator', gap: '2 cm', axis: { roll: '90 deg' }, angle: '40 deg', to: `M${i + 1}` });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '30 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '2 mm', height: '30 mm' } });
  return lineOf(JSON.stringify({ format: 'spinyard.beamline', version: 1, title: `analyser chain of ${n}`, species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '5e8 /s', velocity: { kind: 'effusive', temperature: '420 K' }, aperture: { width: '1 mm', height: '0.05 mm' }, to: 'S1' }, elements }));
}

/** Rb-87, n magnets each routing both m_J ports to the next (2^n paths), a 20 mm × 30 mm window. */
function bothPorts(n: number): Beamline {
  const elements: object[] = [];
  for (let i = 1; i <= n; i++) {
    const next = i === n ? 'D1' : `M${i + 1}`;
    elements.push({ id: `M${i}`, kind: 'magnet', gap: '2 cm', axis: { roll: `${(i * 37) % 180} deg` }, field: '0.5 T', gradient: '100 T/m', length: '3 cm',
      group: 'mJ', ports: { 'mJ=+1/2': next, 'mJ=-1/2': next } });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '20 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '20 mm', height: '30 mm' } });
  return lineOf(JSON.stringify({ format: 'spinyard.beamline', version: 1, title: `both ports, ${n} magnets`, species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: '420 K' }, aperture: { width: '1 mm', height: '0.1 mm' }, to: 'M1' }, elements }));
}

/** Bench J with a field twist (0.2 mT turned by 90°) on M2's m_J = −1/2 port. */
function benchJTwist(root: string, velocity?: object): Beamline {
  const d = JSON.parse(readFileSync(join(root, 'samples', 'bench-j-cs-precession-coil.spinyard'), 'utf8'));
  if (velocity) d.oven.velocity = velocity;
  d.elements.find((e: { id: string }) => e.id === 'M2').ports['mJ=-1/2'] = 'T1';
  d.elements.push({ id: 'T1', kind: 'twist', gap: '5 cm', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm', to: 'D2' });
  d.elements.find((e: { id: string }) => e.id === 'D2').gap = '40 cm';
  return lineOf(JSON.stringify(d));
}

/** CPU seconds of one run (after one warm-up run where `warm`), or the walk's refusal. */
function cpuSeconds(line: Beamline, warm: boolean): number | string {
  try {
    if (warm) runLine(line, { acceptCost: true });
    const c0 = process.cpuUsage();
    runLine(line, { acceptCost: true });
    const c = process.cpuUsage(c0);
    return (c.user + c.system) / 1e6;
  } catch (err) {
    return `refused by the walk: ${(err as Error).message.slice(0, 60)}…`;
  }
}

export function benchCost(root: string, long: boolean): string {
  const rows: [string, Beamline, boolean][] = [];
  for (const f of readdirSync(join(root, 'samples')).filter((x) => x.endsWith('.spinyard')).sort()) {
    rows.push([f.replace('.spinyard', ''), lineOf(readFileSync(join(root, 'samples', f), 'utf8')), true]);
  }
  for (const n of [6, 12, 20, 50]) rows.push([`analyser chain, ${n} magnets`, chain(n), true]);
  for (const n of [4, 5, 6]) rows.push([`both ports routed, ${n} magnets`, bothPorts(n), true]);
  rows.push(['bench J + twist, one speed (250 m/s)', benchJTwist(root, { kind: 'fixed', speed: '250 m/s' }), true]);
  rows.push(['bench J + twist, effusive', benchJTwist(root), long]);
  const out = ['| line | estimate | measured (CPU) | measured / estimate | paths | largest share |', '|---|---:|---:|---:|---:|---|'];
  for (const [name, line, run] of rows) {
    const e = estimateLine(line);
    const t = run ? cpuSeconds(line, !name.includes('effusive')) : 'not run (--long)';
    const shown = typeof t === 'number' ? `${t.toPrecision(2)} s` : t;
    out.push(`| ${name} | ${e.seconds.toPrecision(2)} s | ${shown} | ${typeof t === 'number' ? (t / e.seconds).toPrecision(2) : '—'} | ${e.paths} | ${e.element} (${Math.round(e.share * 100)} %) |`);
  }
  return out.join('\n');
}
