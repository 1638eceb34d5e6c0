/**
 * Writing a document: pretty-printed JSON (2 spaces), keys in a stable order so a diff reads well
 * (format, version, title, species, ambient, oven, elements; in an element id, kind, gap, then its
 * kind's keys in its key table's order, which is docs/design.md's, then to/ports; axes, vectors and rectangles inside
 * in their own order, as the table's shapes say), short lists of plain values such as a velocity
 * table's [speed, weight] pairs on one line each, and a newline at the end. Keys the order does not
 * know keep their place after the known ones; labels in ports, phases and populations keep the order
 * the user wrote.
 */
import { KINDS, isKind } from './elements/registry.ts';
import type { KeyShape, KeySpec } from './elements/kind.ts';
import { TOP_KEYS } from './check.ts';
import { OVEN_KEYS } from './oven.ts';
import type { BeamlineDoc } from './types.ts';

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

const AXIS = ['theta', 'phi', 'roll'];
const VEC = ['x', 'y', 'z'];
const RECT = ['x', 'z', 'width', 'height'];
const SPECIES = ['spin', 'g', 'mass'];
const STATE = ['kind', 'axis', 'm', 'p', 'basis', 're', 'im'];
const VELOCITY = ['kind', 'speed', 'temperature', 'ratio', 'points'];
const FLUX = ['kind', 'temperature'];

/** How the children of a key are ordered: a key list for objects, or 'keep' (labels as written). */
type Plan = { keys: readonly string[]; child?: (k: string) => Plan } | 'keep' | 'elements' | undefined;

const axisPlan: Plan = { keys: AXIS };
const vecPlan: Plan = { keys: VEC };
const rectPlan: Plan = { keys: RECT };

/** How a value of each key shape is ordered (a quantity, a choice, a list of labels, a target: as it is). */
const SHAPE_PLANS: Readonly<Partial<Record<KeyShape['type'], Plan>>> = { axis: axisPlan, vector: vecPlan, rect: rectPlan, ports: 'keep', angles: 'keep' };

/** The plan of key `k` in its kind's table; a key its kind does not have takes the plan its shape has in every kind that has it (where they agree). */
function keyPlan(table: readonly KeySpec[] | undefined, k: string): Plan {
  const own = table?.find((s) => s.key === k);
  if (own) return SHAPE_PLANS[own.shape.type];
  const plans = new Set<Plan>();
  for (const m of Object.values(KINDS)) for (const s of m.table) if (s.key === k) plans.add(SHAPE_PLANS[s.shape.type]);
  return plans.size === 1 ? [...plans][0] : undefined;
}

/** An element's order from its kind's key table: id, kind, gap, the table's keys, then to and ports. */
function elementPlan(kind: unknown): Plan {
  const mod = isKind(kind) ? KINDS[kind] : undefined;
  const keys = ['id', 'kind', 'gap', ...(mod?.keys ?? []), 'to', 'ports'];
  return { keys, child: (k) => keyPlan(mod?.table, k) };
}

const topPlan: Plan = {
  keys: TOP_KEYS,
  child: (k) => {
    if (k === 'species') return { keys: SPECIES };
    if (k === 'ambient') return vecPlan;
    if (k === 'oven') {
      return {
        keys: OVEN_KEYS,
        child: (o) => {
          if (o === 'state') return { keys: STATE, child: (s) => (s === 'axis' ? axisPlan : s === 'p' ? 'keep' : undefined) };
          if (o === 'velocity') return { keys: VELOCITY };
          if (o === 'flux') return { keys: FLUX };
          if (o === 'aperture') return rectPlan;
          return undefined;
        },
      };
    }
    if (k === 'elements') return 'elements';
    return undefined;
  },
};

function ordered(v: unknown, plan: Plan): Json {
  if (Array.isArray(v)) {
    return v.map((x) => ordered(x, plan === 'elements' && x && typeof x === 'object' ? elementPlan((x as { kind?: unknown }).kind) : undefined));
  }
  if (v === null || typeof v !== 'object') return v as Json;
  const o = v as Record<string, unknown>;
  const keys = Object.keys(o);
  let order = keys;
  if (typeof plan === 'object') {
    const rank = (k: string) => {
      const i = plan.keys.indexOf(k);
      return i < 0 ? plan.keys.length + keys.indexOf(k) : i;
    };
    order = [...keys].sort((a, b) => rank(a) - rank(b));
  }
  const out: { [k: string]: Json } = {};
  for (const k of order) {
    if (o[k] === undefined) continue;
    const cp = typeof plan === 'object' ? plan.child?.(k) : undefined;
    out[k] = ordered(o[k], cp);
  }
  return out;
}

const INLINE_MAX = 80;

function write(v: Json, indent: string): string {
  if (v === null || typeof v !== 'object') return JSON.stringify(v);
  const inner = `${indent}  `;
  if (Array.isArray(v)) {
    if (v.length === 0) return '[]';
    if (v.every((x) => x === null || typeof x !== 'object')) {
      const one = `[${v.map((x) => JSON.stringify(x)).join(', ')}]`;
      if (one.length <= INLINE_MAX) return one;
    }
    return `[\n${v.map((x) => inner + write(x, inner)).join(',\n')}\n${indent}]`;
  }
  const keys = Object.keys(v);
  if (keys.length === 0) return '{}';
  return `{\n${keys.map((k) => `${inner}${JSON.stringify(k)}: ${write(v[k], inner)}`).join(',\n')}\n${indent}}`;
}

/** The document as file text (UTF-8 JSON, stable key order, 2-space indent, final newline). */
export function serializeDoc(doc: Readonly<BeamlineDoc> | Readonly<Record<string, unknown>>): string {
  return `${write(ordered(doc, topPlan), '')}\n`;
}
