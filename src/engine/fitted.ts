/**
 * A fit's values written into the document, as the command line's `fit -o` and the app's "apply the fitted values"
 * both write it: each parameter at its document path in the parameter's unit (10 significant digits), and the oven's
 * state where the fit had it: its density matrix over the zero-field states along the state's axis (10 digits,
 * positive to 1e-9), or its populations (8 digits).
 */
import { setAt } from '../beamline/edits.ts';
import type { BeamlineDoc } from '../beamline/types.ts';
import type { FitResult } from './fit.ts';

/** A fitted value as the document writes it: a quantity in the parameter's unit, or a plain number without one. */
export function fittedQuantity(value: number, unit: string, factor: number): string | number {
  const v = Number((value / factor).toPrecision(10));
  return unit ? `${v} ${unit}` : v;
}

export function fittedDocument(doc: BeamlineDoc, f: FitResult): { ok: true; doc: BeamlineDoc } | { ok: false; message: string } {
  let out = doc;
  for (const p of f.parameters) {
    if (!Number.isFinite(p.value)) return { ok: false, message: `the fitted ${p.name} is not a number` };
    const r = setAt(out, p.path, fittedQuantity(p.value, p.unit, p.factor));
    if (!r.ok) return { ok: false, message: `${p.name}: ${r.message}` };
    out = r.doc;
  }
  const st = doc.oven.state;
  const axis = st.kind === 'unpolarized' ? { theta: '0 deg', phi: '0 deg' } : st.axis;
  if (f.density) {
    const dm = f.density;
    if (![...dm.re.flat(), ...dm.im.flat()].every(Number.isFinite)) return { ok: false, message: 'the fitted density matrix has an entry that is not a number' };
    const r10 = (x: number) => (x === 0 ? 0 : Number(x.toPrecision(10)));
    out = { ...out, oven: { ...out.oven, state: { kind: 'density', axis, basis: [...dm.basis], re: dm.re.map((r) => r.map(r10)), im: dm.im.map((r) => r.map(r10)) } } } as BeamlineDoc;
  } else if (f.state) {
    const p: Record<string, number> = {};
    for (let i = 0; i < f.state.labels.length; i++) {
      const v = f.state.populations[i];
      if (!Number.isFinite(v)) return { ok: false, message: `the fitted population ${f.state.labels[i]} is not a number` };
      p[f.state.labels[i]] = Number(v.toPrecision(8));
    }
    out = { ...out, oven: { ...out.oven, state: { kind: 'populations', axis, p } } } as BeamlineDoc;
  }
  return { ok: true, doc: out };
}
