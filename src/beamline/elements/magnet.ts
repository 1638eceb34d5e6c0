/**
 * magnet: a Stern–Gerlach gradient magnet analysing along `axis`; each port (an eigenstate or group of
 * eigenstates, docs/design.md "Port labels") is routed in `ports`, "*" routes every port not named.
 * Keys: axis, field (size at the beam, ≥ 0), gradient (signed, along the axis), length (≥ 0),
 * aperture {width, height} of the pole gap, group, entry (hyperfine species only), ports.
 */
import type { Magnet } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { listText, quote } from '../messages.ts';
import { type Obj, type ReadCtx, at, axis, describe, full, isObj, problem, quantity, rect, setOwn, warn } from '../read.ts';
import type { KindModule } from './kind.ts';
import { readSorting } from './sorting.ts';
import { plausible } from '../plausible.ts';

export const magnet: KindModule<Magnet> = {
  kind: 'magnet',
  keys: ['axis', 'field', 'gradient', 'length', 'aperture', 'group', 'entry'],
  output: 'ports',
  length: (e) => e.length ?? 0,
  hyperfineOnly: ['group', 'entry'],
  read(o: Obj, path: string, ctx: ReadCtx) {
    const ax = axis(ctx, o, 'axis', path);
    const field = quantity(ctx, o, 'field', 'field', path, { required: false, nonNegative: true, range: LIMITS.fieldSize, what: 'the field size' });
    const gradient = quantity(ctx, o, 'gradient', 'gradient', path, { required: false, range: LIMITS.gradient, what: 'the gradient' });
    const length = quantity(ctx, o, 'length', 'length', path, { required: false, nonNegative: true, range: LIMITS.distance, what: 'the length' });
    plausible(ctx, at(path, 'field'), 'field', field, 'the field size');
    plausible(ctx, at(path, 'gradient'), 'gradient', gradient, 'the gradient');
    const aperture = rect(ctx, o, 'aperture', path);
    const sort = readSorting(ctx, o, path);
    const ports = readPorts(ctx, o, path, sort.labels);
    if (!ax || !ports) return undefined;
    const out: Omit<Magnet, 'id' | 'kind' | 'gap' | 'path'> = { axis: ax, ports };
    if (field !== undefined) out.field = field;
    if (gradient !== undefined) out.gradient = gradient;
    if (length !== undefined) out.length = length;
    if (aperture) out.aperture = aperture;
    if (sort.group) out.group = sort.group;
    if (sort.entry) out.entry = sort.entry;
    return out;
  },
  defaults: () => ({ axis: { roll: '0 deg' } }),
};

/**
 * The `ports` object: every key a port label of the species (for this group) or "*", every value a
 * target; every label routed by name or by "*".
 */
function readPorts(ctx: ReadCtx, o: Obj, path: string, labels: string[] | undefined): Record<string, string> | undefined {
  const p = at(path, 'ports');
  const v = o.ports;
  if (v === undefined) return problem(ctx, p, `missing "ports": a magnet routes each port${labels ? ` (${listText(labels)})` : ''} to an element id or "stop"`);
  if (!isObj(v)) return problem(ctx, p, `expected an object {port label: target}, got ${describe(v)}`);
  const ports: Record<string, string> = {};
  let ok = true;
  for (const [label, t] of Object.entries(v)) {
    if (full(ctx)) return undefined;
    const lp = at(p, label);
    if (labels && label !== '*' && !labels.includes(label)) {
      problem(ctx, lp, `no port ${quote(label)} for this species and group; its ports are ${listText(labels)}`);
      ok = false;
    }
    if (typeof t !== 'string' || t === '') {
      problem(ctx, lp, `a target is an element id or "stop", got ${describe(t)}`);
      ok = false;
    } else setOwn(ports, label, t);
  }
  if (labels) {
    if (!Object.hasOwn(v, '*')) {
      const missing = labels.filter((l) => !Object.hasOwn(v, l));
      if (missing.length) {
        problem(ctx, p, `unrouted port${missing.length > 1 ? 's' : ''} ${listText(missing)}: route every port by name or with "*"`);
        ok = false;
      }
    } else if (labels.every((l) => Object.hasOwn(v, l))) warn(ctx, at(p, '*'), '"*" routes no port: every port is named');
  }
  return ok ? ports : undefined;
}
