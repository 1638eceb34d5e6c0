/**
 * Work out of proportion is refused with the element and what to change (src/engine/spectral.ts MAX_SPEC_TERMS): a
 * Cs-133 line whose spin state would multiply its frequency terms past the bound at an RF flipper (it once ran for
 * minutes and gigabytes) is refused within seconds, naming the flipper.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runDocumentText } from '../../src/engine/index.ts';
import { MAX_SPEC_TERMS } from '../../src/engine/spectral.ts';

const benchJ = JSON.parse(readFileSync(resolve(import.meta.dirname, '..', '..', 'samples', 'bench-j-cs-precession-coil.spinyard'), 'utf8'));

/** Bench J with an RF flipper (the editor's new-element values, static field as given) on M2's m_J = −1/2 port. */
function withFlipper(staticField: Record<string, string>): string {
  const d = structuredClone(benchJ);
  const m2 = d.elements.findIndex((e: { id: string }) => e.id === 'M2');
  d.elements[m2].ports['mJ=-1/2'] = 'RF1';
  d.elements.push({ id: 'RF1', kind: 'rf', gap: '5 cm', static: staticField, amplitude: '10 uT', frequency: '28 MHz', axis: { roll: '90 deg' }, length: '2 cm', to: 'D2' });
  d.elements.find((e: { id: string }) => e.id === 'D2').gap = '40 cm';
  return JSON.stringify(d);
}

describe('the bound on frequency terms', () => {
  it(`refuses a flipper whose frames would take the Cs state past ${MAX_SPEC_TERMS} terms, naming it and what to change`, () => {
    const r = runDocumentText(withFlipper({ x: '0 T', y: '0 T', z: '1 mT' }));
    expect(r.ok).toBe(false);
    if (!r.ok) {
      const i = benchJ.elements.length;
      expect(r.problems[0]).toMatch(new RegExp(`^elements\\[${i}\\]: the spin state arriving here carries [\\d,]+ frequency terms over 16 states`));
      expect(r.problems[0]).toMatch(/one field axis/);
    }
  });
});
