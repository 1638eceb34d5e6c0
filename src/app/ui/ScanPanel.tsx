// The scan panel: one set-point of the line, or a grid of two, from/to as quantities with units, a number of
// points, linear or by equal ratios; run on a pool of planning workers (a block of the points each, plan-client.ts)
// with progress and Cancel; curves per detector (yield or counts) or a map per detector with the set-point marked;
// CSV (through the host), PNG and SVG; "Keep in document" stores the scan in the document's `scans` list (an
// undoable edit), whose scans are offered to run again.
import { useEffect, useId, useMemo, useRef, useState } from 'react';
import {
  checkQuantity, displayUnit, scanCsv, type Beamline, type BeamlineDoc, type ParameterSlot, type ScanDoc, type ScanResult,
} from '../core-adapter.ts';
import type { ScanAxisRequest } from '../engine-protocol.ts';
import { usePlanClient } from './usePlanClient.ts';
import type { CostQuestion } from '../cost-ask.ts';
import type { WorkerLike } from '../engine-client.ts';
import { refusedLines, refusedPoints, scanCurves, scanMaps, type ScanQuantity } from '../plan-view.ts';
import { fmt } from '../format.ts';
import { QuantityInput } from './QuantityInput.tsx';
import { Plot } from './Plot.tsx';
import { plotTheme } from './Results.tsx';

export interface ScanPanelProps {
  hidden: boolean;
  doc: BeamlineDoc;
  line: Beamline;
  /** The document's file text, as the worker compiles it. */
  text: string;
  params: readonly ParameterSlot[];
  dark: boolean;
  fileBase: string;
  makeWorker(): WorkerLike;
  /** Asks whether to run work the engine refused by its cost estimate ("Run anyway" / "Don't run"). */
  onCost?(q: CostQuestion): void;
  /** Workers a scan is spread over (1: one worker). */
  poolSize?: number;
  onKeep(scan: ScanDoc): void;
  onDrop(index: number): void;
  onCsv(name: string, text: string): void;
  onClose(): void;
}

interface AxisForm {
  name: string;
  from: string;
  to: string;
  points: string;
  spacing: 'linear' | 'log';
}

/** What a quantity looks like in its shown unit ("30 deg", "0.9"). */
function written(si: number, unit: string, factor: number): string {
  const v = fmt(si / factor, 6).replace(/\.?0+e/, 'e');
  return unit ? `${v} ${unit}` : v;
}

/** A first range for a parameter: 0 to 180° for an angle, else half to one and a half times its value (±1 unit at 0). */
function defaultAxis(slot: ParameterSlot, points = 21): AxisForm {
  const { unit, factor } = displayUnit(slot.dimension);
  if (slot.dimension === 'angle') return { name: slot.name, from: '0 deg', to: '180 deg', points: '37', spacing: 'linear' };
  const v = slot.value;
  const [a, b] = v === 0 ? [-factor, factor] : [v * 0.5, v * 1.5];
  return { name: slot.name, from: written(Math.min(a, b), unit, factor), to: written(Math.max(a, b), unit, factor), points: String(points), spacing: 'linear' };
}

/** The form of a kept scan's parameter. */
function formOf(a: ScanDoc['parameters'][number]): AxisForm {
  return { name: a.parameter, from: String(a.from), to: String(a.to), points: String(a.points), spacing: a.spacing ?? 'linear' };
}

type Checked = { ok: true; axis: ScanAxisRequest } | { ok: false; errors: Partial<Record<'from' | 'to' | 'points' | 'name', string>> };

function checkAxis(f: AxisForm, params: readonly ParameterSlot[]): Checked {
  const slot = params.find((p) => p.name === f.name);
  if (!slot) return { ok: false, errors: { name: `the line has no parameter ${f.name}` } };
  const errors: Partial<Record<'from' | 'to' | 'points', string>> = {};
  const from = checkQuantity(f.from, slot.dimension, 'from');
  const to = checkQuantity(f.to, slot.dimension, 'to');
  if (!from.ok) errors.from = from.message;
  if (!to.ok) errors.to = to.message;
  const n = Number(f.points.trim());
  if (!/^\s*\d+\s*$/.test(f.points) || !Number.isInteger(n) || n < 1) errors.points = 'a whole number of points, 1 or more';
  if (from.ok && to.ok && f.spacing === 'log' && !(from.si * to.si > 0)) errors.to = 'equal ratios need both ends non-zero and of one sign';
  if (!from.ok || !to.ok || Object.keys(errors).length) return { ok: false, errors };
  return { ok: true, axis: { name: slot.name, from: from.si, to: to.si, points: n, spacing: f.spacing } };
}

/** A quantity for the document: a plain number for a dimensionless parameter, else the text as typed. */
function docQuantity(text: string, slot: ParameterSlot | undefined): string | number {
  const t = text.trim();
  return slot?.dimension === 'dimensionless' && /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(t) ? Number(t) : t;
}

export function ScanPanel(p: ScanPanelProps) {
  const { params } = p;
  const headId = useId();
  const firstParam = params.find((s) => s.dimension === 'angle') ?? params[0];
  const [axes, setAxes] = useState<AxisForm[]>(() => {
    const kept = p.doc.scans?.[0];
    if (kept && kept.parameters.every((a) => params.some((s) => s.name === a.parameter))) return kept.parameters.map(formOf);
    return firstParam ? [defaultAxis(firstParam)] : [];
  });
  const [title, setTitle] = useState('');
  const [quantity, setQuantity] = useState<ScanQuantity>('yield');
  const [answer, setAnswer] = useState<{ seq: number; result?: ScanResult; ms?: number; error?: string; cancelled?: boolean; text?: string } | undefined>();
  const [shownResult, setShownResult] = useState<{ seq: number; result: ScanResult; ms: number; text: string; workers: number } | undefined>();
  const sentText = useRef('');
  const { client, status } = usePlanClient(p.makeWorker, (a) => {
    if ('result' in a && a.kind === 'scan') {
      setShownResult({ seq: a.seq, result: a.result, ms: a.ms, text: sentText.current, workers: a.workers });
      setAnswer({ seq: a.seq, result: a.result, ms: a.ms });
    } else if ('error' in a) setAnswer({ seq: a.seq, error: a.error });
    else if ('cancelled' in a) setAnswer({ seq: a.seq, cancelled: true });
  }, { poolSize: p.poolSize, onCost: p.onCost });

  // a parameter that left the line (an element renamed or deleted) falls back to the first one
  useEffect(() => {
    if (!params.length) return;
    setAxes((as) => {
      const ok = as.every((a) => params.some((s) => s.name === a.name));
      return ok && as.length ? as : [defaultAxis(firstParam!)];
    });
  }, [params, firstParam]);

  const checked = axes.map((a) => checkAxis(a, params));
  const valid = checked.length > 0 && checked.every((c) => c.ok) && (axes.length < 2 || axes[0].name !== axes[1].name);
  const total = checked.reduce((n, c) => n * (c.ok ? c.axis.points : 0), 1);
  const setAxis = (i: number, f: Partial<AxisForm>) => setAxes((as) => as.map((a, k) => (k === i ? { ...a, ...f } : a)));
  const autoTitle = axes.map((a) => `${a.name} ${a.from} to ${a.to}`).join(' × ');

  const run = (ax: ScanAxisRequest[], t: string) => {
    sentText.current = p.text;
    client.start({ kind: 'scan', text: p.text, axes: ax, title: t });
  };
  const runForm = () => {
    if (!valid) return;
    run(checked.map((c) => (c as { axis: ScanAxisRequest }).axis), title.trim() || autoTitle);
  };
  const stored = p.doc.scans ?? [];
  const storedLine = p.line.scans ?? [];
  const runStored = (i: number) => {
    const s = storedLine[i];
    if (!s) return;
    run(s.axes.map((a) => ({ name: a.name, from: a.from, to: a.to, points: a.points, spacing: a.spacing })), s.title || stored[i]?.parameters.map((x) => x.parameter).join(' × ') || `scan ${i + 1}`);
  };
  const loadStored = (i: number) => {
    const s = stored[i];
    if (!s) return;
    setAxes(s.parameters.map(formOf));
    setTitle(s.title ?? '');
  };
  const keep = () => {
    if (!valid) return;
    p.onKeep({
      title: title.trim() || autoTitle,
      parameters: axes.map((a) => {
        const slot = params.find((s) => s.name === a.name);
        return { parameter: a.name, from: docQuantity(a.from, slot), to: docQuantity(a.to, slot), points: Number(a.points), ...(a.spacing === 'log' ? { spacing: 'log' as const } : {}) };
      }),
    });
  };

  const theme = useMemo(() => plotTheme(p.dark), [p.dark]);
  const r = shownResult?.result;
  const figures = useMemo(() => {
    if (!r) return undefined;
    return r.parameters.length === 1 ? { curves: scanCurves(r, quantity, theme) } : { maps: scanMaps(r, quantity, theme, p.dark) };
  }, [r, quantity, theme, p.dark]);
  const refused = useMemo(() => (r ? refusedPoints(r) : []), [r]);
  const stale = shownResult !== undefined && shownResult.text !== p.text;
  const base = `${p.fileBase}-scan`;

  return (
    <section className="plan-panel scan-panel" aria-labelledby={headId} hidden={p.hidden} data-panel="scan">
      <div className="plan-head">
        <h2 id={headId} tabIndex={-1}>Scan</h2>
        <span className="note">the line&apos;s counts over one set-point or a grid of two</span>
        <button type="button" className="plan-close" onClick={p.onClose} aria-label="Close the scan panel">×</button>
      </div>
      {stored.length > 0 && (
        <div className="stored" aria-label="Scans kept in the document">
          <h3>Kept in the document</h3>
          <ul>
            {stored.map((s, i) => (
              <li key={i} data-stored-scan={i}>
                <span className="stored-title">{s.title || `scan ${i + 1}`}</span>
                <span className="note">{s.parameters.map((a) => `${a.parameter} ${a.from} → ${a.to}, ${a.points} points${a.spacing === 'log' ? ', equal ratios' : ''}`).join(' × ')}</span>
                <button type="button" onClick={() => runStored(i)} disabled={!storedLine[i]}>Run</button>
                <button type="button" onClick={() => loadStored(i)}>Edit</button>
                <button type="button" onClick={() => p.onDrop(i)} aria-label={`Remove the kept scan ${s.title || i + 1}`}>Remove</button>
              </li>
            ))}
          </ul>
        </div>
      )}
      {params.length === 0 ? <p className="note">This line has no parameters to scan (or it cannot be read now).</p> : (
        <div className="scan-form">
          {axes.map((a, i) => {
            const slot = params.find((s) => s.name === a.name);
            const c = checked[i];
            const errs = c.ok ? {} : c.errors;
            const unit = slot ? displayUnit(slot.dimension).unit : '';
            return (
              <fieldset key={i} className={`scan-axis${axes.length > 1 ? '' : ' plain'}`} data-axis={i}>
                {axes.length > 1 ? <legend>{i === 0 ? 'First parameter (rows)' : 'Second parameter (columns)'}</legend> : <legend className="sr-only">Parameter</legend>}
                <div className="axis-fields">
                  <div className="field">
                    <label htmlFor={`${headId}-p${i}`}>set-point</label>
                    <select id={`${headId}-p${i}`} name={`scan-param-${i}`} value={a.name} onChange={(e) => {
                      const s = params.find((x) => x.name === e.target.value);
                      if (s) setAxis(i, defaultAxis(s, Number(a.points) || 21));
                    }}>
                      {params.map((s) => <option key={s.name} value={s.name}>{s.name} = {written(s.value, s.unit, displayUnit(s.dimension).factor)}</option>)}
                    </select>
                    {errs.name && <span className="field-error" role="alert">{errs.name}</span>}
                  </div>
                  <QuantityInput label={`from${unit ? ` (e.g. ${unit})` : ''}`} name={`scan-from-${i}`} value={a.from} onCommit={(t) => setAxis(i, { from: t })}
                    error={errs.from ? { text: a.from, message: errs.from } : undefined} />
                  <QuantityInput label="to" name={`scan-to-${i}`} value={a.to} onCommit={(t) => setAxis(i, { to: t })}
                    error={errs.to ? { text: a.to, message: errs.to } : undefined} />
                  <div className="field">
                    <label htmlFor={`${headId}-n${i}`}>points</label>
                    <input id={`${headId}-n${i}`} name={`scan-points-${i}`} type="text" inputMode="numeric" value={a.points} onChange={(e) => setAxis(i, { points: e.target.value })}
                      aria-invalid={errs.points ? true : undefined} />
                    {errs.points && <span className="field-error" role="alert">{errs.points}</span>}
                  </div>
                  <div className="field">
                    <label htmlFor={`${headId}-s${i}`}>spacing</label>
                    <select id={`${headId}-s${i}`} name={`scan-spacing-${i}`} value={a.spacing} onChange={(e) => setAxis(i, { spacing: e.target.value as 'linear' | 'log' })}>
                      <option value="linear">linear</option>
                      <option value="log">equal ratios (log)</option>
                    </select>
                  </div>
                </div>
                {axes.length > 1 && <button type="button" onClick={() => setAxes((as) => as.filter((_, k) => k !== i))}>Remove this parameter</button>}
              </fieldset>
            );
          })}
          {axes.length === 2 && axes[0].name === axes[1].name && <p className="field-error" role="alert">Choose two different set-points.</p>}
          <div className="plan-actions">
            {axes.length === 1 && (
              <button type="button" onClick={() => {
                const other = params.find((s) => s.name !== axes[0].name && s.dimension !== 'angle') ?? params.find((s) => s.name !== axes[0].name);
                if (other) setAxes((as) => [...as, defaultAxis(other, 11)]);
              }}>Add a second parameter</button>
            )}
            <label>title <input type="text" name="scan-title" value={title} placeholder={autoTitle} onChange={(e) => setTitle(e.target.value)} size={22} /></label>
            <button type="button" className="primary" onClick={runForm} disabled={!valid || status.running}>Run scan{valid ? ` (${total} points)` : ''}</button>
            <button type="button" onClick={keep} disabled={!valid}>Keep in document</button>
          </div>
        </div>
      )}
      <div className="plan-status" aria-live="polite">
        {status.running && (
          <span className="run-progress">
            <progress max={1} value={status.progress} aria-label="Scan progress" />
            <span>{Math.round(status.progress * 100)} %</span>
            <button type="button" onClick={() => client.cancel()} disabled={status.cancelling}>Cancel</button>
          </span>
        )}
        {!status.running && answer?.cancelled && <span className="run-note" data-scan-cancelled>cancelled{shownResult ? ': the chart shows the last scan that finished' : ''}</span>}
        {!status.running && answer?.error && <span className="run-error" role="alert">The scan did not run: {answer.error}</span>}
        {shownResult && !status.running && !answer?.error && !answer?.cancelled && (
          <span className="note" data-scan-ms={Math.round(shownResult.ms)} data-scan-workers={shownResult.workers}>
            {shownResult.result.points.length} points in {shownResult.ms < 1000 ? `${Math.max(1, Math.round(shownResult.ms))} ms` : `${fmt(shownResult.ms / 1000, 3)} s`}
            {shownResult.workers > 1 ? ` on ${shownResult.workers} workers` : ''}
          </span>
        )}
      </div>
      {r && figures && (
        <div className="scan-result" data-scan-seq={shownResult!.seq}>
          <div className="plan-actions">
            <strong className="scan-title">{r.title}</strong>
            <span role="radiogroup" aria-label="Plotted quantity" className="toggle">
              {(['yield', 'counts'] as const).map((q) => (
                <label key={q}><input type="radio" name={`${headId}-q`} value={q} checked={quantity === q} onChange={() => setQuantity(q)} /> {q === 'yield' ? 'yield' : 'counts in dwell'}</label>
              ))}
            </span>
            <button type="button" onClick={() => p.onCsv(`${base}.csv`, scanCsv(r))}>Export CSV</button>
          </div>
          {stale && <p className="note">The document changed since this scan ran; run it again for the present line.</p>}
          {figures.curves && (
            <Plot id="scan-curves" title={`${quantity === 'yield' ? 'Yield' : 'Counts'} per detector against ${r.parameters[0].name}; set-point dashed`}
              data={figures.curves.data} layout={figures.curves.layout} seq={shownResult!.seq} fileName={`${base}-${quantity}`} height={300} />
          )}
          {figures.maps && (
            <div className="plots">
              {figures.maps.map((m) => (
                <Plot key={m.id} id={`scan-map-${m.id}`} title={`${m.id}: ${quantity === 'yield' ? 'yield' : 'counts'} over ${r.parameters[0].name} × ${r.parameters[1].name}; set-point ×`}
                  data={m.figure.data} layout={m.figure.layout} seq={shownResult!.seq} fileName={`${base}-${m.id}-${quantity}`} height={300} />
              ))}
            </div>
          )}
          {refused.length > 0 && (
            <details className="refused" open={refused.length <= 4}>
              <summary>{refused.length} of {r.points.length} points not evaluated (gaps in the chart)</summary>
              <ul>{refusedLines(r, 50).map((f, i) => <li key={i}>{f.text}: {f.reason}</li>)}</ul>
              {refused.length > 50 && <p className="note">and {refused.length - 50} more (all in the CSV).</p>}
            </details>
          )}
          {r.warnings.length > 0 && (
            <div className="warnings" role="note"><h3>Warnings</h3><ul>{r.warnings.map((w, i) => <li key={i}>{w}</li>)}</ul></div>
          )}
        </div>
      )}
    </section>
  );
}
