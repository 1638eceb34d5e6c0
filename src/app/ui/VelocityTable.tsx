// The oven's velocity table in the inspector: every row a speed (with its unit) and a flux weight, rows added
// and removed, and a measured table imported from CSV (speed and weight columns, the unit in the header;
// readVelocityCsv of src/beamline/velocity-csv.ts). Each change is one undoable edit; a file the reader
// refuses leaves the document as it was and says what and where.
import { useId, useState } from 'react';
import { useCommitText } from './useCommitText.ts';
import { readVelocityCsv, type QuantityDoc } from '../core-adapter.ts';
import type { FieldSpec } from '../fields.ts';

/** Rows shown at once: a table of thousands of measured speeds is paged, never cut. */
export const ROWS_PER_PAGE = 50;

interface Props {
  /** The table's points as written, or undefined when the distribution is not a table (import only). */
  points?: readonly (readonly [QuantityDoc, QuantityDoc])[];
  errors: Readonly<Record<string, { text: string; message: string }>>;
  commitQuantity(path: string, text: string, spec: FieldSpec): void;
  onRows(op: { insert: number } | { remove: number }): void;
  onImport(points: [string, number][], source: string): void;
}

const SPEED: FieldSpec = { type: 'quantity', key: '0', label: 'speed', dim: 'speed' };
const WEIGHT: FieldSpec = { type: 'quantity', key: '1', label: 'weight', dim: 'dimensionless' };

/**
 * One cell of the table: a compact text entry that commits on Enter or leaving it, takes back the typing on
 * Escape, and keeps a refused entry with its message (as the inspector's quantity fields do).
 */
function Cell({ name, label, value, error, onCommit, width }: { name: string; label: string; value: string; error?: { text: string; message: string }; onCommit(t: string): void; width: string }) {
  const id = useId();
  const entry = useCommitText(value, error, onCommit);
  return (
    <>
      <input id={id} name={name} type="text" aria-label={label} spellCheck={false} autoComplete="off" style={{ width, boxSizing: 'border-box' }}
        aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : undefined}
        {...entry} />
      {error && <span id={`${id}-err`} className="field-error" role="alert" style={{ display: 'block' }}>{error.message}</span>}
    </>
  );
}

export function VelocityTable({ points, errors, commitQuantity, onRows, onImport }: Props) {
  const fileId = useId();
  const [page, setPage] = useState(0);
  const [problem, setProblem] = useState<string | undefined>();
  const [notes, setNotes] = useState<string | undefined>();
  const read = (file: File | undefined) => {
    if (!file) return;
    setProblem(undefined);
    setNotes(undefined);
    file.text().then(
      (text) => {
        const r = readVelocityCsv(text);
        if (!r.ok) return setProblem(`${file.name}: ${r.message}`);
        if (r.notes.length > 0) setNotes(`${file.name}: ${r.notes.join('; ')}.`);
        setPage(0);
        onImport(r.points, file.name);
      },
      (e: unknown) => setProblem(`${file.name} cannot be read: ${(e as Error).message ?? String(e)}`),
    );
  };
  const n = points?.length ?? 0;
  const pages = Math.max(1, Math.ceil(n / ROWS_PER_PAGE));
  const at = Math.min(page, pages - 1);
  const first = at * ROWS_PER_PAGE;
  const shown = points ? points.slice(first, first + ROWS_PER_PAGE) : [];
  const tableError = errors['oven.velocity'];
  return (
    <div className="velocity-table">
      {points && (
        <>
          <table aria-label="Velocity table" style={{ borderCollapse: 'collapse', width: '100%', fontSize: 12 }}>
            <caption style={{ textAlign: 'left' }}>{n} tabulated speed{n === 1 ? '' : 's'} with their flux weights (normalised by their sum)</caption>
            <thead><tr><th scope="col">#</th><th scope="col">speed</th><th scope="col">weight</th><th scope="col"><span className="sr-only">rows</span></th></tr></thead>
            <tbody>
              {shown.map(([s, w], k) => {
                const i = first + k;
                const sp = `oven.velocity.points[${i}][0]`;
                const wp = `oven.velocity.points[${i}][1]`;
                return (
                  <tr key={i} data-row={i}>
                    <th scope="row">{i + 1}</th>
                    <td><Cell name={sp} label={`speed ${i + 1}`} value={String(s)} error={errors[sp]} width="7.5em" onCommit={(t) => commitQuantity(sp, t, SPEED)} /></td>
                    <td><Cell name={wp} label={`weight ${i + 1}`} value={String(w)} error={errors[wp]} width="5em" onCommit={(t) => commitQuantity(wp, t, WEIGHT)} /></td>
                    <td className="row-actions" style={{ whiteSpace: 'nowrap' }}>
                      <button type="button" onClick={() => onRows({ insert: i })} aria-label={`Add a row after row ${i + 1}`}>+</button>
                      <button type="button" onClick={() => onRows({ remove: i })} disabled={n <= 1} aria-label={`Remove row ${i + 1}`}>−</button>
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
          {pages > 1 && (
            <p className="pager">
              <button type="button" onClick={() => setPage(at - 1)} disabled={at === 0}>previous rows</button>
              {' '}rows {first + 1}–{Math.min(n, first + ROWS_PER_PAGE)} of {n}{' '}
              <button type="button" onClick={() => setPage(at + 1)} disabled={at >= pages - 1}>next rows</button>
            </p>
          )}
          {tableError && <span className="field-error" role="alert">{tableError.message}</span>}
        </>
      )}
      <div className="field">
        <label htmlFor={fileId}>{points ? 'replace from CSV' : 'velocity table from CSV'}</label>
        <input id={fileId} type="file" name="velocity-csv" className="file-pick" accept=".csv,.tsv,.txt,text/csv,text/plain" onChange={(e) => {
          read(e.target.files?.[0]);
          e.target.value = '';
        }} />
        <span className="field-hint">a header row naming a speed column with its unit and a weight column, e.g. "speed (m/s),weight"</span>
      </div>
      {problem && <p className="field-error" role="alert">{problem}</p>}
      {notes && <p className="note">{notes}</p>}
    </div>
  );
}
