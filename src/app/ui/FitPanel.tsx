// The fit panel: a CSV of measured counts (one row per detector reading, docs/design.md "Fits") read from a file the
// user picks (a file input: the same in the browser and the desktop shell, nothing leaves the machine), the line's
// parameters to fit with optional bounds (quantities with units) and the oven's populations; the fit runs in a
// planning worker with Cancel (it cannot pause: Cancel ends the worker). Shown: the fitted values ± σ, the ΔD = 1
// profile intervals (marked where asymmetric), the correlations, the deviance with its p-value, and the Pearson
// residual of every reading by detector. "Apply the fitted values" writes them into the document as one undoable edit.
import { useId, useMemo, useRef, useState } from 'react';
import { checkQuantity, displayUnit, type FitDoc, type FitResult, type ParameterSlot } from '../core-adapter.ts';
import { usePlanClient } from './usePlanClient.ts';
import type { CostQuestion } from '../cost-ask.ts';
import type { WorkerLike } from '../engine-client.ts';
import type { FitData, FitParameterRequest } from '../engine-protocol.ts';
import { fitDensityCells, fitStateCells, fitValueCells, residualsFigure } from '../fit-view.ts';
import { setPointColumn } from '../plan-view.ts';
import { fmt } from '../format.ts';
import { Plot } from './Plot.tsx';
import { plotTheme } from './Results.tsx';

export interface FitPanelProps {
  hidden: boolean;
  text: string;
  params: readonly ParameterSlot[];
  /** The fits the document keeps (its `fits` list): their parameters, bounds and state fill the form. */
  kept: readonly FitDoc[];
  dark: boolean;
  fileBase: string;
  makeWorker(): WorkerLike;
  /** Asks whether to run work the engine refused by its cost estimate ("Run anyway" / "Don't run"). */
  onCost?(q: CostQuestion): void;
  /** Writes the fitted values into the document (one undoable edit); the message when the document refuses them. */
  onApply(f: FitResult): string | undefined;
  /** Keeps the form (the data file by its name, parameters, bounds, state) in the document's fits; the message when refused. */
  onKeep(k: FitDoc): string | undefined;
  onClose(): void;
}

/** The largest measurements file the panel reads (the engine reads at most 100,000 readings). */
const MAX_CSV_BYTES = 16 * 1024 * 1024;

interface FreeRow { name: string; lower: string; upper: string }

/** A kept fit's parameters as rows of the form, or undefined when one of them is not a parameter of the line. */
function rowsOf(k: FitDoc, params: readonly ParameterSlot[]): FreeRow[] | undefined {
  const rows = (k.free ?? []).map((f) => ({ name: f.parameter, lower: f.lower === undefined ? '' : String(f.lower), upper: f.upper === undefined ? '' : String(f.upper) }));
  return rows.every((r) => params.some((s) => s.name === r.name)) ? rows : undefined;
}

type BoundCheck = { ok: true; free: FitParameterRequest } | { ok: false; lower?: string; upper?: string };

function checkRow(row: FreeRow, slot: ParameterSlot | undefined): BoundCheck {
  if (!slot) return { ok: false, lower: `the line has no parameter ${row.name}` };
  const bound = (t: string, what: string) => (t.trim() === '' ? undefined : checkQuantity(t.trim(), slot.dimension, `${row.name} ${what} bound`));
  const lo = bound(row.lower, 'lower');
  const hi = bound(row.upper, 'upper');
  const errs: { lower?: string; upper?: string } = {};
  if (lo && !lo.ok) errs.lower = lo.message;
  if (hi && !hi.ok) errs.upper = hi.message;
  if (lo?.ok && hi?.ok && !(lo.si < hi.si)) errs.upper = 'the upper bound must be above the lower bound';
  if (errs.lower || errs.upper) return { ok: false, ...errs };
  return { ok: true, free: { name: slot.name, ...(lo?.ok ? { lower: lo.si } : {}), ...(hi?.ok ? { upper: hi.si } : {}) } };
}


export function FitPanel(p: FitPanelProps) {
  const headId = useId();
  const fileId = useId();
  const [data, setData] = useState<{ name: string; text: string; rows: number } | undefined>();
  const [fileError, setFileError] = useState<string | undefined>();
  const [rows, setRows] = useState<FreeRow[]>(() => (p.kept[0] && rowsOf(p.kept[0], p.params)) || []);
  const [newName, setNewName] = useState('');
  const [state, setState] = useState(() => p.kept[0]?.state === true && rowsOf(p.kept[0], p.params) !== undefined);
  const [loaded, setLoaded] = useState<string | undefined>(() => (p.kept[0] && rowsOf(p.kept[0], p.params) ? p.kept[0].data : undefined));
  const [answer, setAnswer] = useState<{ error?: string; cancelled?: boolean } | undefined>();
  const [shown, setShown] = useState<{ seq: number; result: FitResult; data: FitData; ms: number; text: string; file: string } | undefined>();
  const [applyError, setApplyError] = useState<string | undefined>();
  const [keepError, setKeepError] = useState<string | undefined>();
  const sent = useRef({ text: '', file: '' });
  const { client, status } = usePlanClient(p.makeWorker, (a) => {
    if ('result' in a && a.kind === 'fit') {
      setShown({ seq: a.seq, result: a.result, data: a.data, ms: a.ms, text: sent.current.text, file: sent.current.file });
      setAnswer(undefined);
      setApplyError(undefined);
    } else if ('error' in a) setAnswer({ error: a.error });
    else if ('cancelled' in a) setAnswer({ cancelled: true });
  }, { onCost: p.onCost });

  const free = p.params.filter((s) => !rows.some((r) => r.name === s.name));
  const pick = newName && free.some((s) => s.name === newName) ? newName : (free[0]?.name ?? '');
  const checks = rows.map((r) => checkRow(r, p.params.find((s) => s.name === r.name)));
  const ready = data !== undefined && (rows.length > 0 || state) && checks.every((c) => c.ok);

  const readFile = (file: File | undefined) => {
    setFileError(undefined);
    if (!file) return;
    if (file.size > MAX_CSV_BYTES) {
      setFileError(`${file.name} is ${fmt(file.size / 1048576, 3)} MB; a measurements file of at most ${MAX_CSV_BYTES / 1048576} MB is read`);
      return;
    }
    file.text().then(
      (text) => setData({ name: file.name, text, rows: text.split(/\r?\n/).filter((l) => l.trim() !== '' && !l.trimStart().startsWith('#')).length - 1 }),
      (e: unknown) => setFileError(`${file.name} could not be read: ${(e as Error).message ?? String(e)}`),
    );
  };

  const theme = useMemo(() => plotTheme(p.dark), [p.dark]);
  const f = shown?.result;
  const figure = useMemo(() => (f && shown ? residualsFigure(f, shown.data, theme) : undefined), [f, shown, theme]);
  const stale = shown !== undefined && shown.text !== p.text;
  const base = `${p.fileBase}-fit`;
  // the tables' numbers by the one rule per column (fit-view.ts)
  const valueCells = useMemo(() => (f ? fitValueCells(f) : []), [f]);
  const stateCells = useMemo(() => (f?.state ? fitStateCells(f.state) : undefined), [f]);
  const densityCells = useMemo(() => (f?.density ? fitDensityCells(f.density) : undefined), [f]);
  const documentValues = setPointColumn(rows.map((r) => {
    const slot = p.params.find((s) => s.name === r.name);
    if (!slot) return undefined;
    const u = displayUnit(slot.dimension);
    return { value: slot.value, factor: u.factor, unit: u.unit };
  }));

  return (
    <section className="plan-panel fit-panel" aria-labelledby={headId} hidden={p.hidden} data-panel="fit">
      <div className="plan-head">
        <h2 id={headId} tabIndex={-1}>Fit to measured counts</h2>
        <span className="note">Poisson maximum likelihood from the detectors&apos; readings</span>
        <button type="button" className="plan-close" onClick={p.onClose} aria-label="Close the fit panel">×</button>
      </div>
      {p.kept.length > 0 && (
        <div className="stored" aria-label="Fits kept in the document">
          <h3>Kept in the document</h3>
          <ul>
            {p.kept.map((k, i) => {
              const r = rowsOf(k, p.params);
              return (
                <li key={i} data-kept-fit={i}>
                  <span className="stored-title">{k.title || `fit ${i + 1}`}</span>
                  <span className="note">{(k.free ?? []).map((f) => `${f.parameter}${f.lower !== undefined || f.upper !== undefined ? ` (${f.lower ?? '…'} to ${f.upper ?? '…'})` : ''}`).concat(k.state ? ['oven state'] : []).join(', ')} to {k.data}</span>
                  <button type="button" disabled={!r} onClick={() => {
                    if (!r) return;
                    setRows(r);
                    setState(k.state === true);
                    setLoaded(k.data);
                  }}>Use</button>
                </li>
              );
            })}
          </ul>
        </div>
      )}
      <div className="plan-actions">
        <label htmlFor={fileId}>Measurements (CSV)</label>
        <input id={fileId} type="file" name="fit-data" className="file-pick" accept=".csv,text/csv,text/plain" onChange={(e) => readFile(e.target.files?.[0])} />
        {data && <span className="note" data-fit-file={data.name}>{data.name}: {data.rows} reading{data.rows === 1 ? '' : 's'}</span>}
        {fileError && <span className="field-error" role="alert">{fileError}</span>}
        {loaded && data?.name !== loaded && <span className="note" data-fit-wants={loaded}>the kept fit reads {loaded} (beside the document): pick it</span>}
      </div>
      <p className="note">One row per reading: <code>detector,counts,dwell [s],M2.axis.roll [deg]</code> — a column per set-point that differs between readings, its unit in brackets; lines starting with # are skipped.</p>
      <table className="plan-table fit-free" aria-label="Parameters to fit">
        <thead>
          <tr><th scope="col">parameter</th><th scope="col">document value</th><th scope="col">lower bound</th><th scope="col">upper bound</th><th scope="col"><span className="sr-only">remove</span></th></tr>
        </thead>
        <tbody>
          {rows.map((r, i) => {
            const slot = p.params.find((s) => s.name === r.name);
            const u = slot ? displayUnit(slot.dimension) : undefined;
            const c = checks[i];
            const set = (k: 'lower' | 'upper', v: string) => setRows((rs) => rs.map((x, j) => (j === i ? { ...x, [k]: v } : x)));
            return (
              <tr key={r.name} data-fit-param={r.name}>
                <td className="mono">{r.name}</td>
                <td className="num">{slot && u ? `${documentValues[i]}${u.unit ? ` ${u.unit}` : ''}` : '—'}</td>
                {(['lower', 'upper'] as const).map((k) => (
                  <td key={k}>
                    <input type="text" className="mono" name={`fit-${k}-${i}`} aria-label={`${k} bound of ${r.name}`} value={r[k]} placeholder={u?.unit ? `none (${u.unit})` : 'none'}
                      onChange={(e) => set(k, e.target.value)} aria-invalid={!c.ok && c[k] !== undefined} />
                    {!c.ok && c[k] && <span className="field-error" role="alert">{c[k]}</span>}
                  </td>
                ))}
                <td><button type="button" onClick={() => setRows((rs) => rs.filter((_, j) => j !== i))} aria-label={`Do not fit ${r.name}`}>Remove</button></td>
              </tr>
            );
          })}
          {rows.length === 0 && <tr><td colSpan={5} className="note">No parameter chosen yet: add one below{state ? '' : ', or fit the oven state'}.</td></tr>}
        </tbody>
        <tfoot>
          <tr>
            <td colSpan={4}>
              <select aria-label="parameter to fit" name="fit-new-param" value={pick} onChange={(e) => setNewName(e.target.value)} disabled={free.length === 0}>
                {free.map((s) => <option key={s.name} value={s.name}>{s.name}{s.unit ? ` (${s.unit})` : ''}</option>)}
              </select>
            </td>
            <td><button type="button" disabled={!pick} onClick={() => setRows((rs) => [...rs, { name: pick, lower: '', upper: '' }])}>Add</button></td>
          </tr>
        </tfoot>
      </table>
      <div className="plan-actions">
        <label><input type="checkbox" name="fit-state" checked={state} onChange={(e) => setState(e.target.checked)} /> oven state (a bare spin's density matrix; a hyperfine species' populations of its zero-field states)</label>
        <button type="button" className="primary" disabled={!ready || status.running} onClick={() => {
          if (!data) return;
          sent.current = { text: p.text, file: data.name };
          setAnswer(undefined);
          client.start({ kind: 'fit', text: p.text, csv: data.text, fileName: data.name, free: checks.flatMap((c) => (c.ok ? [c.free] : [])), state });
        }}>Run fit</button>
        <button type="button" disabled={!ready} onClick={() => {
          if (!data) return;
          setKeepError(p.onKeep({ data: data.name, free: rows.map((r) => ({ parameter: r.name, ...(r.lower.trim() ? { lower: r.lower.trim() } : {}), ...(r.upper.trim() ? { upper: r.upper.trim() } : {}) })), ...(state ? { state: true } : {}) }));
        }}>Keep in document</button>
        {!data && <span className="note">Pick the measurements file first.</span>}
        {keepError && <span className="field-error" role="alert">The fit was not kept: {keepError}</span>}
      </div>
      <div className="plan-status" aria-live="polite">
        {status.running && (
          <span className="run-progress">
            <progress aria-label="Fit running" />
            <span>fitting…</span>
            <button type="button" onClick={() => client.cancel()}>Cancel</button>
          </span>
        )}
        {!status.running && answer?.cancelled && <span className="run-note" data-fit-cancelled>cancelled{shown ? ': the tables show the last fit that finished' : ''}</span>}
        {!status.running && answer?.error && <span className="run-error" role="alert">The fit did not run: {answer.error}</span>}
        {shown && !status.running && !answer && <span className="note">{f!.readings} readings of {shown.file}, {f!.iterations} iterations in {fmt(shown.ms / 1000, 3)} s</span>}
      </div>
      {f && shown && (
        <div className="fit-result" data-fit-seq={shown.seq} data-fit-ms={Math.round(shown.ms)}>
          {stale && <p className="note">The document changed since this fit ran (or the fitted values were applied); run it again for the present line.</p>}
          {!f.converged && <p className="run-error" role="alert">The fit did not converge in {f.iterations} iterations: the values below are where it stopped.</p>}
          {f.parameters.length > 0 && (
            <table className="plan-table fit-values" aria-label="Fitted values">
              <thead>
                <tr><th scope="col">parameter</th><th scope="col">fitted</th><th scope="col">± σ</th><th scope="col">profile interval (ΔD = 1)</th><th scope="col">document</th></tr>
              </thead>
              <tbody>
                {f.parameters.map((q, i) => {
                  const c = valueCells[i];
                  return (
                    <tr key={q.name} data-fitted={q.name} data-value={q.value} data-sigma={q.sigma ?? ''}>
                      <td className="mono">{q.name}</td>
                      <td className="num">{c.value}</td>
                      <td className="num">{c.sigma}</td>
                      <td className="num">{c.profile ? <>{c.profile.text}{c.profile.asymmetric && <span className="warn-mark" data-asymmetric> asymmetric</span>}</> : '—'}</td>
                      <td className="num">{c.start}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          )}
          {densityCells && f.density && (
            <>
              <table className="plan-table fit-density" aria-label="Fitted density matrix">
                <caption>Oven state: ρ over the zero-field states along {f.density.axis} (kept positive: ρ = T T†/Tr)</caption>
                <thead><tr><th scope="col">ρ</th>{f.density.basis.map((b) => <th scope="col" key={b} className="mono">{b}</th>)}</tr></thead>
                <tbody>
                  {f.density.basis.map((b, a) => (
                    <tr key={b}><th scope="row" className="mono">{b}</th>{densityCells.cells[a].map((c, k) => <td key={k} className="num">{c}</td>)}</tr>
                  ))}
                </tbody>
              </table>
              <p className="note">{densityCells.summary}</p>
            </>
          )}
          {f.state && !f.density && (
            <table className="plan-table fit-state" aria-label="Fitted oven state">
              <thead><tr><th scope="col">oven state (along {f.state.axis})</th><th scope="col">population</th><th scope="col">± σ</th></tr></thead>
              <tbody>
                {f.state.labels.map((l, i) => (
                  <tr key={l}><td className="mono">{l}</td><td className="num">{stateCells![i].population}</td><td className="num">{stateCells![i].sigma}</td></tr>
                ))}
              </tbody>
            </table>
          )}
          <div className="fit-summary">
            <p data-deviance={f.deviance} data-pvalue={f.pValue ?? ''}>
              Goodness of fit: deviance <strong>{fmt(f.deviance, 5)}</strong> on {f.degreesOfFreedom} degree{f.degreesOfFreedom === 1 ? '' : 's'} of freedom
              {f.pValue !== undefined ? <>, p = <strong>{fmt(f.pValue, 3)}</strong></> : ' (no degrees of freedom: no p-value)'}
              {f.pValue !== undefined && f.pValue < 0.01 && <span className="warn-mark"> — the model does not describe these data well</span>}
            </p>
            <button type="button" className="primary" disabled={stale || status.running} onClick={() => setApplyError(p.onApply(f))}>Apply the fitted values</button>
            {applyError && <span className="field-error" role="alert">The values were not applied: {applyError}</span>}
          </div>
          {f.coordinates.length > 1 && (
            <table className="plan-table fit-correlation" aria-label="Correlations">
              <thead><tr><th scope="col">correlation</th>{f.coordinates.map((c, i) => <th key={i} scope="col" className="mono">{c}</th>)}</tr></thead>
              <tbody>
                {f.correlation.map((row, i) => (
                  <tr key={i}><th scope="row" className="mono">{f.coordinates[i]}</th>{row.map((c, j) => <td key={j} className="num">{c === null || !Number.isFinite(c) ? '—' : c.toFixed(3)}</td>)}</tr>
                ))}
              </tbody>
            </table>
          )}
          {figure && (
            <Plot id="fit-residuals" title={`Pearson residual of each reading, by detector${shown.data.columns.length ? ` against ${shown.data.columns[0].name}` : ''}; ±2 dotted`}
              data={figure.data} layout={figure.layout} seq={shown.seq} fileName={`${base}-residuals`} height={280} />
          )}
          {f.warnings.length > 0 && <div className="warnings" role="note"><h3>Warnings</h3><ul>{f.warnings.map((w, i) => <li key={i}>{w}</li>)}</ul></div>}
          <p className="note">Method: {f.method}.</p>
        </div>
      )}
    </section>
  );
}
