/**
 * A part read again with new values takes the document's other quantities of that part as the numbers they were read
 * as, instead of parsing their text again (src/beamline/parameters.ts withKnown): the line is the one the reader
 * gives when it parses everything (check.ts rereadBeamline with the new values only), for every parameter of every
 * sample, and a refused value gives the same problems.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compile } from '../../src/engine/index.ts';
import { lineWithValues, lineWithValuesFrom } from '../../src/beamline/parameters.ts';
import { rereadBeamline } from '../../src/beamline/check.ts';

const SAMPLES = new URL('../../samples/', import.meta.url);
const samples = readdirSync(SAMPLES).filter((f) => f.endsWith('.spinyard')).sort();

describe('reading a part again with the numbers of its other quantities', () => {
  for (const f of samples) {
    it(`${f}: every parameter moved (and one refused) reads as the reader parsing it all`, () => {
      const c = compile(readFileSync(new URL(f, SAMPLES), 'utf8'));
      if (!c.ok) throw new Error(c.problems.join('\n'));
      const src = c.plan.source;
      for (const slot of src.slots) {
        for (const v of [slot.value === 0 ? 1e-3 : slot.value * 1.01, -Math.abs(slot.value) - 1]) {
          const parsed = rereadBeamline(src.doc, src.line, src.species, new Map([[slot.path, v]]));
          const known = lineWithValues(src, { [slot.name]: v });
          if (!parsed.ok) {
            expect(known.ok, slot.name).toBe(false);
            if (!known.ok) expect(known.problems).toEqual(parsed.problems);
            continue;
          }
          expect(known.ok, slot.name).toBe(true);
          if (known.ok) expect(known.line, `${slot.name} = ${v}`).toEqual(parsed.line);
          // the keyed reading of a session (from the line as written, then one part moved)
          const from = lineWithValuesFrom(src, undefined, {}, new Map());
          if (!from.ok) throw new Error('no line');
          const next = lineWithValuesFrom(src, from.value, { [slot.name]: v }, new Map());
          expect(next.ok && next.value.line, slot.name).toEqual(parsed.line);
        }
      }
    });
  }
});
