// The planning panels' edits of the document: keep a scan in its `scans` list, drop one, and add, change or
// remove a tolerance in its `tolerances` list (docs/design.md, "Scans" and "Tolerances"), and write a fit's values
// into the document (all of them, one edit). Each gives the new
// document and the label Undo shows; the document layer validates it when the editor takes it (a half-width in
// the wrong unit is refused there, naming its path). Pure: the document given is not changed.
import { fittedDocument, type BeamlineDoc, type FitDoc, type FitResult, type ScanDoc, type SimulationDoc, type ToleranceDoc } from './core-adapter.ts';

export type PlanEdit =
  | { kind: 'keepScan'; scan: ScanDoc }
  | { kind: 'dropScan'; index: number }
  | { kind: 'addTolerance'; tolerance: ToleranceDoc }
  | { kind: 'setTolerance'; index: number; tolerance: ToleranceDoc }
  | { kind: 'removeTolerance'; index: number }
  | { kind: 'applyFit'; fit: FitResult }
  | { kind: 'keepFit'; fit: FitDoc }
  | { kind: 'keepSimulation'; simulation: SimulationDoc };

export type PlanEditResult = { ok: true; doc: BeamlineDoc; label: string } | { ok: false; message: string };

function scanName(s: ScanDoc): string {
  return s.title || s.parameters.map((p) => p.parameter).join(' × ');
}

/** What Undo calls a fit's edit. */
export function fitLabel(f: FitResult): string {
  const names = [...f.parameters.map((p) => p.name), ...(f.state ? ['oven.state'] : [])];
  return `apply fitted ${names.join(', ')}`;
}

export function applyPlanEdit(doc: BeamlineDoc, e: PlanEdit): PlanEditResult {
  const scans = doc.scans ?? [];
  const tols = doc.tolerances ?? [];
  const without = <T>(list: readonly T[], i: number) => list.filter((_, k) => k !== i);
  const withList = (key: 'scans' | 'tolerances' | 'fits' | 'simulations', list: readonly unknown[]): BeamlineDoc => {
    const next: Record<string, unknown> = { ...doc };
    if (list.length === 0) delete next[key];
    else next[key] = list;
    return next as unknown as BeamlineDoc;
  };
  switch (e.kind) {
    case 'keepScan':
      return { ok: true, doc: withList('scans', [...scans, e.scan]), label: `keep scan ${scanName(e.scan)}` };
    case 'dropScan':
      if (!scans[e.index]) return { ok: false, message: `the document keeps no scan ${e.index + 1}` };
      return { ok: true, doc: withList('scans', without(scans, e.index)), label: `remove scan ${scanName(scans[e.index])}` };
    case 'addTolerance':
      if (tols.some((t) => t.parameter === e.tolerance.parameter)) return { ok: false, message: `${e.tolerance.parameter} has a tolerance already: change that one` };
      return { ok: true, doc: withList('tolerances', [...tols, e.tolerance]), label: `add tolerance ${e.tolerance.parameter} ±${e.tolerance.halfWidth}` };
    case 'setTolerance': {
      if (!tols[e.index]) return { ok: false, message: `the document keeps no tolerance ${e.index + 1}` };
      if (tols.some((t, k) => k !== e.index && t.parameter === e.tolerance.parameter)) return { ok: false, message: `${e.tolerance.parameter} has a tolerance already` };
      const list = tols.map((t, k) => (k === e.index ? e.tolerance : t));
      return { ok: true, doc: withList('tolerances', list), label: `tolerance ${e.tolerance.parameter} ±${e.tolerance.halfWidth} ${e.tolerance.distribution ?? 'uniform'}` };
    }
    case 'removeTolerance':
      if (!tols[e.index]) return { ok: false, message: `the document keeps no tolerance ${e.index + 1}` };
      return { ok: true, doc: withList('tolerances', without(tols, e.index)), label: `remove tolerance ${tols[e.index].parameter}` };
    case 'keepFit':
      return { ok: true, doc: withList('fits', [...(doc.fits ?? []), e.fit]), label: `keep fit ${e.fit.title || (e.fit.free ?? []).map((f) => f.parameter).concat(e.fit.state ? ['oven.state'] : []).join(', ')}` };
    case 'keepSimulation':
      return { ok: true, doc: withList('simulations', [...(doc.simulations ?? []), e.simulation]), label: `keep simulated run ${e.simulation.title || `of ${e.simulation.atoms ?? 100_000} atoms, seed ${e.simulation.seed ?? 1}`}` };
    case 'applyFit': {
      if (!e.fit.parameters.length && !e.fit.state) return { ok: false, message: 'the fit has no values to apply' };
      const r = fittedDocument(doc, e.fit); // src/engine/fitted.ts, as the command line's fit -o writes it
      return r.ok ? { ok: true, doc: r.doc, label: fitLabel(e.fit) } : r;
    }
  }
}
