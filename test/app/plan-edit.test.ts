import { describe, expect, it } from 'vitest';
import { applyPlanEdit } from '../../src/app/plan-edit.ts';
import { checkDocument, type BeamlineDoc } from '../../src/app/core-adapter.ts';
import { newDocument } from '../../src/app/default-doc.ts';

const roll = { parameter: 'M2.axis.roll', from: '0 deg', to: '180 deg', points: 37 };

describe('applyPlanEdit', () => {
  it('keeps a scan at the end of the list and drops it again, the list gone when empty; the document given is unchanged', () => {
    const doc = newDocument();
    const kept = applyPlanEdit(doc, { kind: 'keepScan', scan: { title: 'roll', parameters: [roll] } });
    if (!kept.ok) throw new Error(kept.message);
    expect(kept.doc.scans).toEqual([{ title: 'roll', parameters: [roll] }]);
    expect(kept.label).toBe('keep scan roll');
    expect(doc.scans).toBeUndefined();
    expect(checkDocument(kept.doc).ok).toBe(true);
    const dropped = applyPlanEdit(kept.doc, { kind: 'dropScan', index: 0 });
    expect(dropped.ok && 'scans' in dropped.doc).toBe(false);
    expect(applyPlanEdit(doc, { kind: 'dropScan', index: 0 })).toMatchObject({ ok: false });
  });

  it('adds, changes and removes tolerances; one per parameter; the reader refuses a half-width in the wrong unit', () => {
    const doc: BeamlineDoc = newDocument();
    const a = applyPlanEdit(doc, { kind: 'addTolerance', tolerance: { parameter: 'M2.axis.roll', halfWidth: '0.5 deg', distribution: 'uniform' } });
    if (!a.ok) throw new Error(a.message);
    expect(a.label).toBe('add tolerance M2.axis.roll ±0.5 deg');
    expect(applyPlanEdit(a.doc, { kind: 'addTolerance', tolerance: { parameter: 'M2.axis.roll', halfWidth: '1 deg' } })).toMatchObject({ ok: false });
    const b = applyPlanEdit(a.doc, { kind: 'setTolerance', index: 0, tolerance: { parameter: 'M2.axis.roll', halfWidth: '2 mm' } });
    if (!b.ok) throw new Error(b.message);
    const r = checkDocument(b.doc);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.map((p) => p.path).join(' ')).toMatch(/tolerances\[0\]/);
    const c = applyPlanEdit(a.doc, { kind: 'removeTolerance', index: 0 });
    expect(c.ok && c.doc.tolerances).toBeUndefined();
  });
});
