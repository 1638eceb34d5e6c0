// The simulated-run panel: atoms drawn one by one from the oven and followed through the line (docs/design.md,
// "Simulated runs"), in a planning worker with Cancel (a run cannot pause: Cancel ends the worker). Per detector:
// the atoms in its window, the sampled signal ± σ beside the engine's signal and their difference in σ, the counts
// of one run of its dwell, and its hit map over its window. The same atoms and seed give the same numbers.
import { useId, useMemo, useRef, useState } from 'react';
import { MAX_ATOMS, type SimulationDoc, type SimulationResult } from '../core-adapter.ts';
import { usePlanClient } from './usePlanClient.ts';
import type { CostQuestion } from '../cost-ask.ts';
import type { WorkerLike } from '../engine-client.ts';
import type { EngineSignal } from '../engine-protocol.ts';
import { hitMapFigure, profileComparison, simulatedCells, simulatedRows } from '../fit-view.ts';
import { fmt } from '../format.ts';
import { Plot } from './Plot.tsx';
import { plotTheme } from './Results.tsx';

export interface SimulatePanelProps {
  hidden: boolean;
  text: string;
  /** The simulated runs the document keeps (its `simulations` list: atoms and seed). */
  kept: readonly SimulationDoc[];
  dark: boolean;
  fileBase: string;
  makeWorker(): WorkerLike;
  /** Asks whether to run work the engine refused by its cost estimate ("Run anyway" / "Don't run"). */
  onCost?(q: CostQuestion): void;
  /** Keeps atoms and seed in the document's simulated runs; the message when refused. */
  onKeep(k: SimulationDoc): string | undefined;
  onClose(): void;
}

/** A whole number from the field, or undefined ("1e6" and "1 000 000" are taken). */
function wholeNumber(text: string, max: number): number | undefined {
  const t = text.replace(/[\s_,]/g, '');
  if (!/^(\d+|\d+(\.\d+)?e\d+)$/i.test(t)) return undefined;
  const n = Number(t);
  return Number.isSafeInteger(n) && n <= max ? n : undefined;
}

export function SimulatePanel(p: SimulatePanelProps) {
  const headId = useId();
  const [atoms, setAtoms] = useState(() => String(p.kept[0]?.atoms ?? 100_000));
  const [seed, setSeed] = useState(() => String(p.kept[0]?.seed ?? 1));
  const [keepError, setKeepError] = useState<string | undefined>();
  const [answer, setAnswer] = useState<{ error?: string; cancelled?: boolean } | undefined>();
  const [shown, setShown] = useState<{ seq: number; result: SimulationResult; engine: EngineSignal[]; ms: number; text: string } | undefined>();
  const sentText = useRef('');
  const { client, status } = usePlanClient(p.makeWorker, (a) => {
    if ('result' in a && a.kind === 'simulate') {
      setShown({ seq: a.seq, result: a.result, engine: a.engine, ms: a.ms, text: sentText.current });
      setAnswer(undefined);
    } else if ('error' in a) setAnswer({ error: a.error });
    else if ('cancelled' in a) setAnswer({ cancelled: true });
  }, { onCost: p.onCost });

  const nAtoms = wholeNumber(atoms, MAX_ATOMS);
  const nSeed = wholeNumber(seed, 0xffffffff);
  const atomsOk = nAtoms !== undefined && nAtoms >= 1;
  const seedOk = nSeed !== undefined;

  const theme = useMemo(() => plotTheme(p.dark), [p.dark]);
  const s = shown?.result;
  const rows = useMemo(() => (s && shown ? simulatedRows(s, shown.engine) : []), [s, shown]);
  // the table's numbers by the one rule per column (fit-view.ts): a signal no finer than its σ
  const cells = useMemo(() => simulatedCells(rows), [rows]);
  const maps = useMemo(() => (s && shown ? s.detectors.map((d) => ({
    id: d.id, figure: hitMapFigure(d, theme, p.dark), profile: profileComparison(d, shown.engine.find((e) => e.id === d.id), theme),
  })) : []), [s, shown, theme, p.dark]);
  const stale = shown !== undefined && shown.text !== p.text;
  const base = `${p.fileBase}-simulated`;
  const start = (a: number, s: number) => {
    sentText.current = p.text;
    setAnswer(undefined);
    client.start({ kind: 'simulate', text: p.text, atoms: a, seed: s });
  };

  return (
    <section className="plan-panel simulate-panel" aria-labelledby={headId} hidden={p.hidden} data-panel="simulate">
      <div className="plan-head">
        <h2 id={headId} tabIndex={-1}>Simulated run</h2>
        <span className="note">atoms drawn from the oven, one path each by the Born rule, deflected and clipped</span>
        <button type="button" className="plan-close" onClick={p.onClose} aria-label="Close the simulated-run panel">×</button>
      </div>
      {p.kept.length > 0 && (
        <div className="stored" aria-label="Simulated runs kept in the document">
          <h3>Kept in the document</h3>
          <ul>
            {p.kept.map((k, i) => (
              <li key={i} data-kept-simulation={i}>
                <span className="stored-title">{k.title || `run ${i + 1}`}</span>
                <span className="note">{(k.atoms ?? 100_000).toLocaleString('en')} atoms, seed {k.seed ?? 1}</span>
                <button type="button" disabled={status.running} onClick={() => {
                  setAtoms(String(k.atoms ?? 100_000));
                  setSeed(String(k.seed ?? 1));
                  start(k.atoms ?? 100_000, k.seed ?? 1);
                }}>Run</button>
              </li>
            ))}
          </ul>
        </div>
      )}
      <div className="plan-actions">
        <label>atoms <input type="text" inputMode="numeric" name="simulate-atoms" value={atoms} size={10} onChange={(e) => setAtoms(e.target.value)} aria-invalid={!atomsOk} /></label>
        <label>seed <input type="text" inputMode="numeric" name="simulate-seed" value={seed} size={8} onChange={(e) => setSeed(e.target.value)} aria-invalid={!seedOk} /></label>
        <button type="button" className="primary" disabled={!atomsOk || !seedOk || status.running} onClick={() => start(nAtoms!, nSeed!)}>Run simulation</button>
        <button type="button" disabled={!atomsOk || !seedOk} onClick={() => setKeepError(p.onKeep({ atoms: nAtoms!, seed: nSeed! }))}>Keep in document</button>
        {keepError && <span className="field-error" role="alert">The run was not kept: {keepError}</span>}
        {!atomsOk && <span className="field-error" role="alert">atoms: a whole number from 1 to {MAX_ATOMS.toExponential(0).replace('e+', 'e')}</span>}
        {!seedOk && <span className="field-error" role="alert">seed: a whole number from 0 to 4294967295</span>}
      </div>
      <div className="plan-status" aria-live="polite">
        {status.running && (
          <span className="run-progress">
            <progress aria-label="Simulation running" />
            <span>drawing atoms…</span>
            <button type="button" onClick={() => client.cancel()}>Cancel</button>
          </span>
        )}
        {!status.running && answer?.cancelled && <span className="run-note" data-simulate-cancelled>cancelled{shown ? ': the tables show the last run that finished' : ''}</span>}
        {!status.running && answer?.error && <span className="run-error" role="alert">The simulation did not run: {answer.error}</span>}
        {shown && !status.running && !answer && <span className="note">{s!.atoms.toLocaleString('en')} atoms (seed {s!.seed}) in {fmt(shown.ms / 1000, 3)} s</span>}
      </div>
      {s && shown && (
        <div className="simulate-result" data-simulate-seq={shown.seq} data-simulate-ms={Math.round(shown.ms)}>
          {stale && <p className="note">The document changed since this run; run it again for the present line.</p>}
          <table className="plan-table simulate-detectors" aria-label="Simulated run per detector">
            <thead>
              <tr><th scope="col">detector</th><th scope="col">atoms in window</th><th scope="col">simulated signal (/s)</th><th scope="col">engine (/s)</th>
                <th scope="col">difference</th><th scope="col">counts of one run</th></tr>
            </thead>
            <tbody>
              {rows.map((r, i) => (
                <tr key={r.id} data-detector={r.id} data-signal={r.signal} data-sigma={r.sigma} data-engine={r.engine ?? ''}>
                  <td>{r.id}</td>
                  <td className="num">{r.hits.toLocaleString('en')}</td>
                  <td className="num">{cells[i].signal} ± {cells[i].sigma}</td>
                  <td className="num">{cells[i].engine}</td>
                  <td className="num">{r.difference !== undefined ? <span className={Math.abs(r.difference) > 3 ? 'warn-mark' : undefined}>{cells[i].difference} σ</span> : '—'}</td>
                  <td className="num">{r.counts.toLocaleString('en')} in {cells[i].dwell} s</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="note">
            σ: the sampling&apos;s standard error. Difference: (simulated − engine)/σ; beyond about 3 it is worth a look. Counts: one run of each
            detector&apos;s dwell, Poisson about (signal + background) × dwell. Lost: {s.lost.spin.toLocaleString('en')} atoms in the spin operations,
            {' '}{s.lost.clipped.toLocaleString('en')} clipped by slits, pole gaps and windows.
          </p>
          <div className="plots hit-maps">
            {maps.flatMap((m) => [
              m.figure ? (
                <Plot key={`${m.id}-map`} id={`hit-map-${m.id}`} title={`${m.id}: hits over its window (x, z in mm)`}
                  data={m.figure.data} layout={m.figure.layout} seq={shown.seq} fileName={`${base}-${m.id}-hits`} height={260} />
              ) : <p key={`${m.id}-map`} className="note" data-no-hits={m.id}>{m.id}: no atom reached its window; no hit map.</p>,
              m.profile && (
                <Plot key={`${m.id}-profile`} id={`hit-profile-${m.id}`} title={`${m.id}: the hits' profile beside the engine's, each normalised over the window`}
                  data={m.profile.data} layout={m.profile.layout} seq={shown.seq} fileName={`${base}-${m.id}-profile`} height={260} />
              ),
            ])}
          </div>
          {s.warnings.length > 0 && <div className="warnings" role="note"><h3>Warnings</h3><ul>{s.warnings.map((w, i) => <li key={i}>{w}</li>)}</ul></div>}
          <p className="note">Method: {s.method}.</p>
        </div>
      )}
    </section>
  );
}
