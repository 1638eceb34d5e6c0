/**
 * Each kind's key table against its reader: an element that writes every key of the table reads with each of them
 * kept, every key the table marks optional may be left out (and a default it names is the value read), every other
 * key is required, and a key the table lacks (any other kind's, or one of no kind) is refused as unknown. So the
 * table covers exactly the keys the reader accepts. And each table says what the format's contract says
 * (docs/design.md, "Keys by element kind"): the keys in its order, the output, the hyperfine-only keys and the keys
 * with a default or marked optional.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { KINDS, KIND_NAMES } from '../../../src/beamline/elements/registry.ts';
import { isOptional, isOutputKey } from '../../../src/beamline/elements/keys.ts';
import { parseQuantity, isProblem } from '../../../src/beamline/units.ts';
import type { ElementKind } from '../../../src/beamline/types.ts';
import { check, rbLine } from '../helpers.ts';

/** One element of each kind writing every key of its table, for Rb-87 (so the hyperfine-only keys apply); all route to "stop". */
const FULL: Readonly<Record<ElementKind, Record<string, unknown>>> = {
  magnet: { axis: { roll: '0 deg' }, field: '0.5 T', gradient: '100 T/m', length: '5 cm', aperture: { width: '1 mm', height: '3 mm' },
    group: 'mJ', entry: 'adiabatic', ports: { '*': 'stop' } },
  rotator: { axis: { theta: '90 deg', phi: '0 deg' }, angle: '90 deg', to: 'stop' },
  field: { field: { x: '1 uT', y: '0 T', z: '0 T' }, length: '2 cm', to: 'stop' },
  twist: { field: '0.2 mT', start: { roll: '0 deg' }, end: { roll: '90 deg' }, length: '4 cm', to: 'stop' },
  rf: { static: { x: '0 T', y: '0 T', z: '1 mT' }, amplitude: '10 uT', frequency: '7 MHz', axis: { roll: '90 deg' }, length: '2 cm', phase: '0 rad', to: 'stop' },
  recombiner: { axis: { roll: '0 deg' }, open: ['mJ=+1/2', 'mJ=-1/2'], phases: { 'mJ=-1/2': '60 deg' }, coherent: false, field: '0.1 T',
    group: 'mJ', entry: 'sudden', to: 'stop' },
  slit: { width: '1 mm', height: '3 mm', x: '0.1 mm', z: '0 mm', to: 'stop' },
  detector: { efficiency: 0.5, background: '2 /s', dwell: '3 s', window: { width: '1 mm', height: '3 mm', x: '0 mm', z: '0 mm' } },
};

/** The Rb-87 line of the tests with one more element (routed nowhere: the oven does not reach it, a warning only). */
function withElement(kind: ElementKind, body: Record<string, unknown>) {
  const d = rbLine();
  const index = d.elements.length as number;
  d.elements.push({ id: 'X1', kind, gap: '1 cm', ...body });
  return { doc: d, at: `elements[${index}]` };
}

const tableKeys = (k: ElementKind) => KINDS[k].table.map((s) => s.key);

describe('every kind\'s key table covers exactly the keys its reader accepts', () => {
  it('the fixture writes every key of each table', () => {
    for (const k of KIND_NAMES) expect(Object.keys(FULL[k]).sort(), k).toEqual([...tableKeys(k)].sort());
  });

  it('an element writing every key of its table reads, each key kept', () => {
    for (const k of KIND_NAMES) {
      const { doc } = withElement(k, FULL[k]);
      const r = check(doc);
      expect(r.ok ? [] : r.problems, k).toEqual([]);
      if (!r.ok) continue;
      const el = r.line.elements.find((e) => e.id === 'X1') as unknown as Record<string, unknown>;
      expect(Object.keys(el).filter((x) => !['id', 'kind', 'gap', 'path'].includes(x)).sort(), k).toEqual([...tableKeys(k)].sort());
    }
  });

  it('a key left out reads where the table marks it optional (its default the value read) and is missing otherwise', () => {
    for (const k of KIND_NAMES) {
      for (const s of KINDS[k].table) {
        const body = { ...FULL[k] };
        delete body[s.key];
        const { doc, at } = withElement(k, body);
        const r = check(doc);
        if (isOptional(s)) {
          expect(r.ok ? [] : r.problems, `${k}.${s.key}`).toEqual([]);
          const sh = s.shape;
          if (r.ok && (sh.type === 'quantity' || sh.type === 'bool') && sh.fallback !== undefined) {
            const el = r.line.elements.find((e) => e.id === 'X1') as unknown as Record<string, unknown>;
            expect(el[s.key], `${k}.${s.key}`).toBe(sh.fallback);
          }
        } else {
          expect(r.ok, `${k}.${s.key}`).toBe(false);
          if (!r.ok) expect(r.problems.map((p) => p.path), `${k}.${s.key}`).toContain(`${at}.${s.key}`);
        }
      }
    }
  });

  it('a key its table lacks is refused as unknown, another kind\'s keys included', () => {
    const everyKey = new Set(KIND_NAMES.flatMap(tableKeys));
    for (const k of KIND_NAMES) {
      const own = new Set(tableKeys(k));
      // "to" and "ports" are each refused with the routing rule's own reason
      const foreign = [...everyKey].filter((x) => !own.has(x) && x !== 'to' && x !== 'ports');
      for (const key of [...foreign, 'colour']) {
        const { doc, at } = withElement(k, { ...FULL[k], [key]: '1' });
        const r = check(doc);
        expect(r.ok, `${k} + ${key}`).toBe(false);
        if (!r.ok) expect(r.problems.find((p) => p.path === `${at}.${key}`)?.message, `${k} + ${key}`).toMatch(new RegExp(`^unknown key "${key}" in a ${k}`));
      }
    }
  });

  it('the output key routes as the kind\'s routing rule says, and is the last row of its table', () => {
    for (const k of KIND_NAMES) {
      const outs = KINDS[k].table.filter(isOutputKey);
      expect(outs.length, k).toBe(KINDS[k].output === 'none' ? 0 : 1);
      if (outs.length) {
        expect(outs[0].key, k).toBe(KINDS[k].output);
        expect(KINDS[k].table.at(-1), k).toBe(outs[0]);
      }
      expect(KINDS[k].keys, k).toEqual(tableKeys(k).filter((x) => x !== 'to' && x !== 'ports'));
    }
  });

  it('a default written for people is the default the reader uses', () => {
    let checked = 0;
    for (const k of KIND_NAMES) {
      for (const s of KINDS[k].table) {
        const sh = s.shape;
        if (sh.type !== 'quantity' || sh.fallback === undefined) continue;
        expect(s.defaultText, `${k}.${s.key}`).toBeDefined();
        const v = parseQuantity(s.defaultText, sh.dim, s.key);
        expect(isProblem(v) ? v.message : v, `${k}.${s.key}`).toBe(sh.fallback);
        checked++;
      }
    }
    expect(checked).toBe(5);
  });

  it('hyperfine-only keys are refused on a bare spin, each with its reason', () => {
    for (const k of KIND_NAMES) {
      for (const key of KINDS[k].hyperfineOnly) {
        const d = rbLine();
        d.species = { spin: '1/2', g: 2.00231930436, mass: '106.905 u' };
        const body: Record<string, unknown> = { ...FULL[k] };
        if (k === 'recombiner') {
          body.open = ['+1/2'];
          body.phases = {};
        }
        d.elements = [{ id: 'X1', kind: k, ...body }];
        d.oven.to = 'X1';
        const r = check(d);
        expect(r.ok, `${k}.${key}`).toBe(false);
        if (!r.ok) {
          expect(r.problems.find((p) => p.path === `elements[0].${key}`)?.message, `${k}.${key}`)
            .toBe(`"${key}" does not apply here: ${key} applies to hyperfine species only (this line's species has no nuclear spin)`);
        }
      }
    }
  });
});

/** The rows of docs/design.md's "Keys by element kind" table: each kind's keys (in order), output, hyperfine-only and optional keys. */
function designRows(): Map<string, { keys: string[]; output: string; hyperfineOnly: string[]; defaulted: string[] }> {
  const text = readFileSync(new URL('../../../docs/design.md', import.meta.url), 'utf8');
  const section = text.slice(text.indexOf('#### Keys by element kind'));
  const rows = new Map<string, { keys: string[]; output: string; hyperfineOnly: string[]; defaulted: string[] }>();
  const names = (t: string) => [...t.matchAll(/`([a-z]+)`/g)].map((m) => m[1]);
  for (const line of section.split('\n')) {
    const m = /^\| `([a-z]+)` \| (.*) \| (.*) \|$/.exec(line);
    if (!m) {
      if (rows.size > 0) break;
      continue;
    }
    const parts = m[2].split('; ');
    rows.set(m[1], {
      keys: names(m[2]),
      output: names(m[3])[0] ?? 'none',
      hyperfineOnly: parts.filter((x) => x.includes('hyperfine species only')).flatMap(names),
      defaulted: parts.filter((x) => /default|optional|missing ones/.test(x)).flatMap(names),
    });
  }
  return rows;
}

describe('every kind\'s key table says what docs/design.md says', () => {
  it('the same kinds, keys in the same order, output, hyperfine-only keys and keys with a default', () => {
    const rows = designRows();
    expect([...rows.keys()].sort()).toEqual([...KIND_NAMES].sort());
    for (const k of KIND_NAMES) {
      const row = rows.get(k)!;
      const mod = KINDS[k];
      expect(mod.keys, k).toEqual(row.keys);
      expect(mod.output, k).toBe(row.output);
      expect(mod.hyperfineOnly, k).toEqual(row.hyperfineOnly);
      // a default the reader fills in, or one the table states for people (what a left-out entry means)
      const defaulted = mod.table.filter((s) => {
        const sh = s.shape;
        return ((sh.type === 'quantity' || sh.type === 'bool') && sh.fallback !== undefined) || s.defaultText !== undefined || s.emptyText !== undefined;
      }).map((s) => s.key);
      expect(defaulted, k).toEqual(row.defaulted);
    }
  });
});
