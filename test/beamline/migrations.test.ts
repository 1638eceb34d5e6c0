import { describe, expect, it } from 'vitest';
import { CURRENT_VERSION, type MigrationRegistry, beamlineMigrations, checkRegistry, migrateDoc } from '../../src/beamline/migrations.ts';
import { checkBeamline } from '../../src/beamline/check.ts';
import { bareLine } from './examples.ts';
import { fakeSpecies } from './fakeSpecies.ts';

function deepFreeze<T>(o: T): T {
  if (o && typeof o === 'object') {
    Object.values(o).forEach(deepFreeze);
    Object.freeze(o);
  }
  return o;
}

/** A test registry: a fake v0 whose bare spin was written {"j": …}; v0 → v1 renames it to "spin". */
const v0to1 = {
  id: 'test/1:spin-key',
  fromVersion: 0,
  up: (doc: Readonly<Record<string, unknown>>) => {
    const sp = doc.species as Record<string, unknown>;
    if (!sp || typeof sp !== 'object') return { ok: false as const, message: 'no species' };
    const { j, ...rest } = sp;
    return { ok: true as const, doc: { ...doc, species: { spin: j, ...rest } } };
  },
};
const testRegistry: MigrationRegistry = { current: 1, steps: [v0to1] };

describe('migrateDoc', () => {
  it('reads up to version 1, and v1 is the first version', () => {
    expect(CURRENT_VERSION).toBe(1);
    expect(beamlineMigrations.steps).toEqual([]);
    expect(checkRegistry(beamlineMigrations)).toBeUndefined();
  });
  it('passes a v1 document through unchanged and does not mutate it', () => {
    const doc = deepFreeze(bareLine());
    const copy = JSON.parse(JSON.stringify(doc));
    const r = migrateDoc(doc);
    expect(r.ok && r.doc).toEqual(copy);
    expect(r.ok && r.applied).toEqual([]);
  });
  it('runs the chain in order and does not mutate its input', () => {
    const v0 = bareLine();
    v0.version = 0;
    v0.species = { j: '1/2', g: 2.00231930436, mass: '106.905 u' };
    deepFreeze(v0);
    const r = migrateDoc(v0, testRegistry);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.applied).toEqual(['test/1:spin-key']);
    expect(r.doc.version).toBe(1);
    expect(r.doc.species).toEqual({ spin: '1/2', g: 2.00231930436, mass: '106.905 u' });
    expect((v0.species as { j: string }).j).toBe('1/2');
    expect(checkBeamline(r.doc, fakeSpecies, testRegistry).ok).toBe(true);
  });
  it('runs several steps in order', () => {
    const seen: string[] = [];
    const step = (from: number) => ({ id: `s${from}`, fromVersion: from, up: (d: Readonly<Record<string, unknown>>) => {
      seen.push(`s${from}@${d.version}`);
      return { ok: true as const, doc: { ...d } };
    } });
    const reg: MigrationRegistry = { current: 3, steps: [step(0), step(1), step(2)] };
    const r = migrateDoc({ version: 1 }, reg);
    expect(r.ok && r.applied).toEqual(['s1', 's2']);
    expect(seen).toEqual(['s1@1', 's2@2']);
    expect(r.ok && r.doc.version).toBe(3);
  });
  it('rejects a newer version', () => {
    const r = migrateDoc({ ...bareLine(), version: 2 });
    expect(r).toEqual({ ok: false, reason: 'newer', message: 'this file is version 2, this Spinyard reads up to 1: open it with a newer Spinyard (the file is not changed)' });
  });
  it('returns a failing step as a result, not a throw', () => {
    const bad = { ...bareLine(), version: 0, species: 'Rb-87' };
    const r = migrateDoc(bad, { current: 1, steps: [{ ...v0to1, up: () => { throw new Error('boom'); } }] });
    expect(r).toEqual({ ok: false, reason: 'failed', message: 'migration test/1:spin-key failed: boom' });
  });
  it('refuses a registry whose steps are not consecutive', () => {
    const reg: MigrationRegistry = { current: 3, steps: [{ ...v0to1, fromVersion: 0 }, { ...v0to1, id: 'x', fromVersion: 2 }] };
    expect(checkRegistry(reg)).toMatch(/not consecutive/);
  });
});
