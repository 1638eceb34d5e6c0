// Lines the engine's cost estimate refuses (src/engine/cost.ts), as its own test builds them
// (test/engine/cost-estimate.test.ts): bench J with a field twist behind a sort (minutes: above the ask limit, below
// the hard one) and a row of Rb-87 magnets routing both ports (2^n paths; 20 of them are beyond the hard limit).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

const SAMPLES = join(import.meta.dirname, '..', '..', 'samples');

/** Bench J with a field twist (0.2 mT turned by 90°) on M2's m_J = −1/2 port: speed by speed over the whole effusive beam;
 *  with a tolerance on D1's efficiency, for a budget. */
export function twistText(): string {
  const d = JSON.parse(readFileSync(join(SAMPLES, 'bench-j-cs-precession-coil.spinyard'), 'utf8'));
  d.title = 'Bench J with a field twist on M2\'s lower port';
  d.elements.find((e: { id: string }) => e.id === 'M2').ports['mJ=-1/2'] = 'T1';
  d.elements.push({ id: 'T1', kind: 'twist', gap: '5 cm', field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm', to: 'D2' });
  d.elements.find((e: { id: string }) => e.id === 'D2').gap = '40 cm';
  d.tolerances = [{ parameter: 'D1.efficiency', halfWidth: 0.02, distribution: 'uniform' }];
  return `${JSON.stringify(d, null, 2)}\n`;
}

/** A Rb-87 line of n magnets in a row, each routing both m_J ports to the next (2^n paths). */
export function bothPortsText(n: number): string {
  const elements: object[] = [];
  for (let i = 1; i <= n; i++) {
    const next = i === n ? 'D1' : `M${i + 1}`;
    elements.push({ id: `M${i}`, kind: 'magnet', gap: '2 cm', axis: { roll: `${(i * 37) % 180} deg` }, field: '0.5 T', gradient: '100 T/m', length: '3 cm',
      group: 'mJ', ports: { 'mJ=+1/2': next, 'mJ=-1/2': next } });
  }
  elements.push({ id: 'D1', kind: 'detector', gap: '20 cm', efficiency: 0.9, background: '1 /s', dwell: '10 s', window: { width: '20 mm', height: '30 mm' } });
  return JSON.stringify({ format: 'spinyard.beamline', version: 1, title: `both ports, ${n} magnets`, species: 'Rb-87',
    oven: { state: { kind: 'unpolarized' }, flux: '1e9 /s', velocity: { kind: 'effusive', temperature: '420 K' }, aperture: { width: '1 mm', height: '0.1 mm' }, to: 'M1' }, elements }, null, 2);
}
