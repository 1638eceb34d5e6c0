/**
 * `npm run bench -- cost [--long]`: the cost estimate made before a run (src/engine/cost.ts) beside the run's measured
 * time, for the samples and for long lines (Rb-87 analyser chains, magnets routing both ports, bench J with a field
 * twist at one speed; the lines of test/fixtures/cost-lines.ts). With --long also bench J with the twist over its
 * effusive beam, which takes minutes.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { parseBeamlineText } from '../src/beamline/index.ts';
import type { Beamline } from '../src/beamline/types.ts';
import { estimateLine, runLine } from '../src/engine/index.ts';
import { bothPortsText, chainText, twistText } from '../test/fixtures/cost-lines.ts';

function lineOf(text: string): Beamline {
  const r = parseBeamlineText(text);
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.message}`).join('; '));
  return r.line;
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
  for (const n of [6, 12, 20, 50]) rows.push([`analyser chain, ${n} magnets`, lineOf(chainText(n)), true]);
  for (const n of [4, 5, 6]) rows.push([`both ports routed, ${n} magnets`, lineOf(bothPortsText(n)), true]);
  rows.push(['bench J + twist, one speed (250 m/s)', lineOf(twistText({ kind: 'fixed', speed: '250 m/s' })), true]);
  rows.push(['bench J + twist, effusive', lineOf(twistText()), long]);
  const out = ['| line | estimate | measured (CPU) | measured / estimate | paths | largest share |', '|---|---:|---:|---:|---:|---|'];
  for (const [name, line, run] of rows) {
    const e = estimateLine(line);
    const t = run ? cpuSeconds(line, !name.includes('effusive')) : 'not run (--long)';
    const shown = typeof t === 'number' ? `${t.toPrecision(2)} s` : t;
    out.push(`| ${name} | ${e.seconds.toPrecision(2)} s | ${shown} | ${typeof t === 'number' ? (t / e.seconds).toPrecision(2) : '—'} | ${e.paths} | ${e.element} (${Math.round(e.share * 100)} %) |`);
  }
  return out.join('\n');
}
