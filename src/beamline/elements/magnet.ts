/**
 * magnet: a Stern–Gerlach gradient magnet analysing along `axis`; each port (an eigenstate or group of
 * eigenstates, docs/design.md "Port labels") is routed in `ports`, "*" routes every port not named.
 * Keys: axis, field (size at the beam, ≥ 0), gradient (signed, along the axis), length (≥ 0),
 * aperture {width, height} of the pole gap, group, entry (hyperfine species only), ports.
 */
import type { Magnet } from '../types.ts';
import { LIMITS } from '../limits.ts';
import { listText, quote } from '../messages.ts';
import { type KeyRead } from './kind.ts';
import { at, describe, full, isObj, problem, setOwn, warn } from '../read.ts';
import { defineKind } from './keys.ts';
import { SORTING_KEYS, sortedLabels } from './sorting.ts';

export const magnet = defineKind<Magnet>({
  kind: 'magnet',
  idPrefix: 'M',
  table: [
    { key: 'axis', shape: { type: 'axis' }, label: 'axis' },
    { key: 'field', shape: { type: 'quantity', dim: 'field', nonNegative: true, range: LIMITS.fieldSize, what: 'the field size', plausible: 'field' },
      label: 'field at the beam', optional: true },
    { key: 'gradient', shape: { type: 'quantity', dim: 'gradient', range: LIMITS.gradient, what: 'the gradient', plausible: 'gradient' }, label: 'gradient', optional: true },
    { key: 'length', shape: { type: 'quantity', dim: 'length', nonNegative: true, range: LIMITS.distance, what: 'the length' }, label: 'length', optional: true },
    { key: 'aperture', shape: { type: 'rect' }, label: 'pole gap', optional: true },
    ...SORTING_KEYS,
    { key: 'ports', shape: { type: 'ports' }, label: 'ports', read: readPorts },
  ],
  length: (e) => e.length ?? 0,
  defaults: () => ({ axis: { roll: '0 deg' } }),
});

/**
 * The `ports` object: every key a port label of the species (for this group) or "*", every value a
 * target; every label routed by name or by "*".
 */
function readPorts(r: KeyRead): Record<string, string> | undefined {
  const { ctx, o, path } = r;
  const labels = sortedLabels(r);
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
