/**
 * Document migrations: named, consecutive steps from one format version to the next. Each step is a pure
 * function of a JSON document that does not mutate its input and returns a result instead of throwing.
 * Version 1 is the first version, so the registry is empty today; a file newer than CURRENT_VERSION is
 * refused and left untouched.
 */
import { describe } from './read.ts';

/** The newest document version this reader understands. */
export const CURRENT_VERSION = 1;

export type StepResult = { ok: true; doc: Record<string, unknown> } | { ok: false; message: string };

export interface Migration {
  /** Stable name, e.g. "spinyard.beamline/2:species-by-name". */
  readonly id: string;
  /** The version the step reads; it writes fromVersion + 1. */
  readonly fromVersion: number;
  /** Pure: must not mutate `doc`. */
  readonly up: (doc: Readonly<Record<string, unknown>>) => StepResult;
}

export interface MigrationRegistry {
  readonly current: number;
  /** Consecutive steps, sorted by fromVersion. */
  readonly steps: readonly Migration[];
}

export const beamlineMigrations: MigrationRegistry = { current: CURRENT_VERSION, steps: [] };

export type MigrateResult =
  | { ok: true; doc: Record<string, unknown>; applied: string[] }
  | { ok: false; reason: 'newer' | 'unsupported' | 'failed'; message: string };

/** Check that a registry's steps are consecutive and end at its current version. */
export function checkRegistry(reg: MigrationRegistry): string | undefined {
  for (let i = 1; i < reg.steps.length; i++) {
    if (reg.steps[i].fromVersion !== reg.steps[i - 1].fromVersion + 1) return `migrations ${reg.steps[i - 1].id} and ${reg.steps[i].id} are not consecutive`;
  }
  const last = reg.steps[reg.steps.length - 1];
  if (last && last.fromVersion + 1 !== reg.current) return `the last migration ${last.id} does not reach version ${reg.current}`;
  return undefined;
}

/** Bring a document of version `doc.version` up to `reg.current`, step by step, in order. */
export function migrateDoc(doc: Readonly<Record<string, unknown>>, reg: MigrationRegistry = beamlineMigrations): MigrateResult {
  const bad = checkRegistry(reg);
  if (bad) return { ok: false, reason: 'failed', message: bad };
  const v = doc.version;
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 0) {
    return { ok: false, reason: 'unsupported', message: `"version" must be a whole number, got ${typeof v === 'number' ? String(v) : describe(v)}` };
  }
  if (v > reg.current) {
    return { ok: false, reason: 'newer', message: `this file is version ${v}, this Spinyard reads up to ${reg.current}: open it with a newer Spinyard (the file is not changed)` };
  }
  const first = reg.steps.length ? reg.steps[0].fromVersion : reg.current;
  if (v < first) return { ok: false, reason: 'unsupported', message: `version ${v} is older than any this Spinyard reads (${first} to ${reg.current})` };
  let cur: Record<string, unknown> = doc as Record<string, unknown>;
  const applied: string[] = [];
  for (const step of reg.steps) {
    if (step.fromVersion < v) continue;
    let r: StepResult;
    try {
      r = step.up(cur);
    } catch (e) {
      r = { ok: false, message: (e as Error).message };
    }
    if (!r.ok) return { ok: false, reason: 'failed', message: `migration ${step.id} failed: ${r.message}` };
    cur = { ...r.doc, version: step.fromVersion + 1 };
    applied.push(step.id);
  }
  return { ok: true, doc: cur, applied };
}
