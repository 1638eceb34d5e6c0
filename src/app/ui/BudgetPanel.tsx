// The tolerance budget panel: the document's tolerances (a set-point, ± half-width with its unit, uniform or
// normal), each change an undoable edit of the document; the budget run in a planning worker (draws, seed) with
// progress and Cancel; per detector the signal, the first-order σ, the Monte Carlo mean ± σ and 5–95 %, the note
// where the two disagree, and the ranked table of which tolerance moves which detector most.
import { useId, useMemo, useRef, useState } from 'react';
import { displayUnit, MAX_BUDGET_DRAWS, type BeamlineDoc, type BudgetResult, type ParameterSlot, type ToleranceDoc } from '../core-adapter.ts';
import { usePlanClient } from './usePlanClient.ts';
import type { CostQuestion } from '../cost-ask.ts';
import type { WorkerLike } from '../engine-client.ts';
import { fmt } from '../format.ts';
import { ROUND_OFF_DERIVATIVE_NOTE } from '../../beamline/numbers.ts';
import { budgetCells, setPointColumn } from '../plan-view.ts';
import { QuantityInput } from './QuantityInput.tsx';

export interface BudgetPanelProps {
  hidden: boolean;
  doc: BeamlineDoc;
  text: string;
  params: readonly ParameterSlot[];
  makeWorker(): WorkerLike;
  /** Workers a long budget is shared out over (1: one worker). */
  poolSize?: number;
  /** Asks whether to run work the engine refused by its cost estimate ("Run anyway" / "Don't run"). */
  onCost?(q: CostQuestion): void;
  /** A tolerance edit; resolves to the message when the document refuses it. */
  onAdd(t: ToleranceDoc): string | undefined;
  onSet(index: number, t: ToleranceDoc): string | undefined;
  onRemove(index: number): string | undefined;
  onClose(): void;
}


export function BudgetPanel(p: BudgetPanelProps) {
  const headId = useId();
  const tols = p.doc.tolerances ?? [];
  const free = p.params.filter((s) => !tols.some((t) => t.parameter === s.name));
  const [newName, setNewName] = useState('');
  const [newHalf, setNewHalf] = useState('');
  const [newDist, setNewDist] = useState<'uniform' | 'normal'>('uniform');
  const [editError, setEditError] = useState<{ row: number | 'new'; message: string; text: string } | undefined>();
  const [draws, setDraws] = useState('1000');
  const [seed, setSeed] = useState('1');
  const [answer, setAnswer] = useState<{ error?: string; cancelled?: boolean } | undefined>();
  const [shown, setShown] = useState<{ seq: number; result: BudgetResult; ms: number; text: string; workers: number } | undefined>();
  const sentText = useRef('');
  const { client, status } = usePlanClient(p.makeWorker, (a) => {
    if ('result' in a && a.kind === 'budget') {
      setShown({ seq: a.seq, result: a.result, ms: a.ms, text: sentText.current, workers: a.workers });
      setAnswer(undefined);
    } else if ('error' in a) setAnswer({ error: a.error });
    else if ('cancelled' in a) setAnswer({ cancelled: true });
  }, { poolSize: p.poolSize, onCost: p.onCost });

  const pick = newName && free.some((s) => s.name === newName) ? newName : (free[0]?.name ?? '');
  const pickSlot = p.params.find((s) => s.name === pick);
  const pickUnit = pickSlot ? displayUnit(pickSlot.dimension).unit : '';
  const nDraws = /^\s*\d+\s*$/.test(draws) ? Number(draws) : NaN;
  const nSeed = /^\s*\d+\s*$/.test(seed) ? Number(seed) : NaN;
  const drawsOk = Number.isInteger(nDraws) && nDraws >= 0 && nDraws <= MAX_BUDGET_DRAWS;
  const seedOk = Number.isInteger(nSeed) && nSeed >= 0 && nSeed <= 0xffffffff;
  const quantity = (text: string, slot: ParameterSlot | undefined): string | number => {
    const t = text.trim();
    return slot?.dimension === 'dimensionless' && /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(t) ? Number(t) : t;
  };
  const tell = (row: number | 'new', message: string | undefined, text = '') => setEditError(message ? { row, message, text } : undefined);

  const r = shown?.result;
  const stale = shown !== undefined && shown.text !== p.text;
  const ranking = useMemo(() => (r ? r.ranking.filter((x) => x.effect > 0) : []), [r]);
  // the tables' numbers by the one rule per column (plan-view.ts)
  const cells = useMemo(() => (r ? budgetCells(r) : undefined), [r]);
  const setPoints = setPointColumn(tols.map((t) => {
    const slot = p.params.find((s) => s.name === t.parameter);
    if (!slot) return undefined;
    const u = displayUnit(slot.dimension);
    return { value: slot.value, factor: u.factor, unit: u.unit };
  }));

  return (
    <section className="plan-panel budget-panel" aria-labelledby={headId} hidden={p.hidden} data-panel="budget">
      <div className="plan-head">
        <h2 id={headId} tabIndex={-1}>Tolerance budget</h2>
        <span className="note">how far each detector&apos;s signal moves when the set-points are off by their tolerances</span>
        <button type="button" className="plan-close" onClick={p.onClose} aria-label="Close the tolerance budget panel">×</button>
      </div>
      <table className="plan-table tolerances" aria-label="Tolerances">
        <thead>
          <tr><th scope="col">set-point</th><th scope="col">value</th><th scope="col">± half-width</th><th scope="col">distribution</th><th scope="col"><span className="sr-only">remove</span></th></tr>
        </thead>
        <tbody>
          {tols.map((t, i) => {
            const slot = p.params.find((s) => s.name === t.parameter);
            const u = slot ? displayUnit(slot.dimension) : undefined;
            return (
              <tr key={`${i}-${t.parameter}`} data-tolerance={t.parameter}>
                <td className="mono">{t.parameter}</td>
                <td className="num">{slot && u ? `${setPoints[i]}${u.unit ? ` ${u.unit}` : ''}` : '—'}</td>
                <td>
                  <QuantityInput label={`± half-width of ${t.parameter}`} name={`tolerance-${i}-half`} value={String(t.halfWidth)}
                    error={editError?.row === i ? { text: editError.text, message: editError.message } : undefined}
                    onCommit={(text) => tell(i, p.onSet(i, { ...t, halfWidth: quantity(text, slot) }), text)} />
                </td>
                <td>
                  <select aria-label={`distribution of ${t.parameter}`} value={t.distribution ?? 'uniform'}
                    onChange={(e) => tell(i, p.onSet(i, { ...t, distribution: e.target.value as 'uniform' | 'normal' }))}>
                    <option value="uniform">uniform (σ = h/√3)</option>
                    <option value="normal">normal (σ = h)</option>
                  </select>
                </td>
                <td><button type="button" onClick={() => tell(i, p.onRemove(i))} aria-label={`Remove the tolerance of ${t.parameter}`}>Remove</button></td>
              </tr>
            );
          })}
          {tols.length === 0 && <tr><td colSpan={5} className="note">The document keeps no tolerances yet: add one below.</td></tr>}
        </tbody>
        <tfoot>
          <tr className="add-tolerance">
            <td colSpan={2}>
              <select aria-label="set-point of the new tolerance" name="tolerance-new-param" value={pick} onChange={(e) => setNewName(e.target.value)} disabled={free.length === 0}>
                {free.map((s) => <option key={s.name} value={s.name}>{s.name}{s.unit ? ` (${s.unit})` : ''}</option>)}
              </select>
            </td>
            <td>
              <input type="text" name="tolerance-new-half" aria-label="± half-width of the new tolerance" value={newHalf} placeholder={pickUnit ? `e.g. 0.5 ${pickUnit}` : 'e.g. 0.02'}
                onChange={(e) => setNewHalf(e.target.value)} className="mono" />
            </td>
            <td>
              <select aria-label="distribution of the new tolerance" value={newDist} onChange={(e) => setNewDist(e.target.value as 'uniform' | 'normal')}>
                <option value="uniform">uniform (σ = h/√3)</option>
                <option value="normal">normal (σ = h)</option>
              </select>
            </td>
            <td>
              <button type="button" disabled={!pick || newHalf.trim() === ''} onClick={() => {
                const msg = p.onAdd({ parameter: pick, halfWidth: quantity(newHalf, pickSlot), distribution: newDist });
                tell('new', msg);
                if (!msg) setNewHalf('');
              }}>Add</button>
            </td>
          </tr>
          {editError?.row === 'new' && <tr><td colSpan={5} className="field-error" role="alert">{editError.message}</td></tr>}
        </tfoot>
      </table>
      <div className="plan-actions">
        <label>Monte Carlo draws <input type="text" inputMode="numeric" name="budget-draws" value={draws} size={8} onChange={(e) => setDraws(e.target.value)} aria-invalid={!drawsOk} /></label>
        <label>seed <input type="text" inputMode="numeric" name="budget-seed" value={seed} size={8} onChange={(e) => setSeed(e.target.value)} aria-invalid={!seedOk} /></label>
        <button type="button" className="primary" disabled={!drawsOk || !seedOk || tols.length === 0 || status.running} onClick={() => {
          sentText.current = p.text;
          setAnswer(undefined);
          client.start({ kind: 'budget', text: p.text, draws: nDraws, seed: nSeed });
        }}>Run budget</button>
        {!drawsOk && <span className="field-error" role="alert">draws: a whole number from 0 to {MAX_BUDGET_DRAWS}</span>}
        {!seedOk && <span className="field-error" role="alert">seed: a whole number from 0 to 4294967295</span>}
      </div>
      <div className="plan-status" aria-live="polite">
        {status.running && (
          <span className="run-progress">
            <progress max={1} value={status.progress} aria-label="Budget progress" />
            <span>{Math.round(status.progress * 100)} %</span>
            <button type="button" onClick={() => client.cancel()}>Cancel</button>
          </span>
        )}
        {!status.running && answer?.cancelled && <span className="run-note" data-budget-cancelled>cancelled{shown ? ': the tables show the last budget that finished' : ''}</span>}
        {!status.running && answer?.error && <span className="run-error" role="alert">The budget did not run: {answer.error}</span>}
        {shown && !status.running && !answer && <span className="note" data-budget-workers={shown.workers}>{r!.monteCarlo.draws} draws (seed {r!.monteCarlo.seed}) in {fmt(shown.ms / 1000, 3)} s{shown.workers > 1 ? ` on ${shown.workers} workers` : ''}</span>}
      </div>
      {r && (
        <div className="budget-result" data-budget-seq={shown!.seq}>
          {stale && <p className="note">The document changed since this budget ran; run it again for the present line.</p>}
          <table className="plan-table budget-detectors" aria-label="Budget per detector">
            <thead>
              <tr><th scope="col">detector</th><th scope="col">signal (/s)</th><th scope="col">first-order σ (/s)</th>
                <th scope="col">Monte Carlo mean ± σ (/s)</th><th scope="col">5 % … 95 % (/s)</th></tr>
            </thead>
            <tbody>
              {r.detectors.map((d, i) => {
                const c = cells!.detectors[i];
                return (
                  <tr key={d.id} data-detector={d.id} data-linear-sigma={d.linearSigma}>
                    <td>{d.id}{d.nonlinear && <span className="warn-mark" title={d.nonlinear}> ⚠ not linear</span>}</td>
                    <td className="num">{c.nominal}</td>
                    <td className="num">{c.linear}{c.linearPercent !== undefined ? ` (${c.linearPercent} %)` : ''}</td>
                    <td className="num">{c.mean !== undefined ? `${c.mean} ± ${c.sigma}` : '—'}</td>
                    <td className="num">{c.q05 !== undefined ? `${c.q05} … ${c.q95}` : '—'}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {r.detectors.some((d) => d.nonlinear) && (
            <div className="warnings" role="note" aria-label="Not linear">
              <ul>{r.detectors.filter((d) => d.nonlinear).map((d) => <li key={d.id}>{d.nonlinear}</li>)}</ul>
            </div>
          )}
          <h3>Which tolerance moves which detector most</h3>
          <table className="plan-table budget-ranking" aria-label="Ranked effects">
            <thead>
              <tr><th scope="col">detector</th><th scope="col">tolerance</th><th scope="col">∂S/∂p ± error</th><th scope="col">σ of S (/s)</th>
                <th scope="col">of S</th><th scope="col">share of σ²</th></tr>
            </thead>
            <tbody>
              {ranking.map((x, i) => {
                const c = cells!.ranking[i];
                return (
                  <tr key={i} data-rank={i} data-detector={x.detector} data-tolerance={x.tolerance}>
                    <td>{x.detector}</td><td className="mono">{x.tolerance}</td>
                    <td className="num">{c.derivative !== undefined ? `${c.derivative} ± ${c.error} ${c.per}` : '—'}</td>
                    <td className="num">{c.effect}</td><td className="num">{c.relative} %</td><td className="num">{c.share} %</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {r.ranking.length > ranking.length && <p className="note">{r.ranking.length - ranking.length} pairs where the tolerance does not move the detector&apos;s signal are left out.</p>}
          {cells!.ranking.some((c) => c.error === '0') && <p className="note">{ROUND_OFF_DERIVATIVE_NOTE}</p>}
          {r.warnings.filter((w) => !r.detectors.some((d) => d.nonlinear === w)).length > 0 && (
            <div className="warnings" role="note"><ul>{r.warnings.filter((w) => !r.detectors.some((d) => d.nonlinear === w)).map((w, i) => <li key={i}>{w}</li>)}</ul></div>
          )}
          <p className="note">Signal S: counts/s without background. Method: {r.method}. Set-points: {r.tolerances.map((t) => `${t.name} ±${fmt(t.halfWidth / t.factor, 4)}${t.unit ? ` ${t.unit}` : ''} ${t.distribution} (σ ${fmt(t.sigma / t.factor, 3)}${t.unit ? ` ${t.unit}` : ''}${t.method && t.method !== 'central' ? `, ${t.method} differences` : ''})`).join('; ')}.</p>
        </div>
      )}
    </section>
  );
}
