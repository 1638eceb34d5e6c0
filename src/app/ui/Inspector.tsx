// The inspector of the selected element (or the oven and species): unit-aware fields, routing, ports.
import { type BeamlineDoc, type Beamline, type ElementKind, type OvenStateDoc, type QuantityDoc, KINDS, documentOutputs, speciesPortLabels } from '../core-adapter.ts';
import { elementFields, velocityFields, VELOCITY_KINDS, NEW_ELEMENT_KINDS, type FieldSpec } from '../fields.ts';
import { getAt, joinPath } from '../doc-path.ts';
import { QuantityInput } from './QuantityInput.tsx';
import { KeyFields } from './KeyFields.tsx';
import { OvenState } from './OvenState.tsx';
import { VelocityTable } from './VelocityTable.tsx';
import { LevelsPanel } from './LevelsPanel.tsx';
import { fmt, fmtLength } from '../format.ts';
import type { Placed } from '../layout.ts';
import { useId, useState } from 'react';

const isElementKind = (k: string): k is ElementKind => Object.hasOwn(KINDS, k);

/** What the inspector's controls do. The editor runs each as the command `inspector.edit` (an
 *  InspectorEdit of src/app/inspector-edit.ts); a refused entry comes back in `errors`. */
export interface InspectorActions {
  /** Commit a quantity entry at a document path. */
  commitQuantity(path: string, text: string, spec: FieldSpec): void;
  setValue(path: string, value: unknown): void;
  reroute(fromId: string, port: string | null, target: string): void;
  addOnPort(fromId: string, port: string | null, kind: string): void;
  rename(oldId: string, newId: string): void;
  setSpecies(value: string): void;
  /** The oven's initial state as a whole; `what` says what changed, for Undo. */
  setOvenState(state: OvenStateDoc, what: string): void;
  /** The oven's velocity distribution a table of these points, read from the file `source`. */
  setVelocityTable(points: [string, number][], source: string): void;
  velocityRows(op: { insert: number } | { remove: number }): void;
  /** Element `id` placed at `text` from the oven aperture, behind `upstreamName`, which ends at `upstreamExit` (m). */
  setPosition(id: string, text: string, upstreamExit: number, upstreamName: string): void;
}

interface Props {
  doc: BeamlineDoc;
  line: Beamline;
  selected?: string;
  errors: Readonly<Record<string, { text: string; message: string }>>;
  warnings: readonly string[];
  placed?: Placed;
  portLabels: readonly string[];
  /** The port labels of a magnet sorting by `group` (the line's species); `portLabels` where absent. */
  portLabelsOf?(group?: 'mJ' | 'each'): readonly string[];
  hyperfine: boolean;
  /** The charts' colours, and the result the levels chart belongs to. */
  dark?: boolean;
  seq?: number;
  speciesNames: readonly string[];
  actions: InspectorActions;
}

const KIND_TITLE: Record<string, string> = {
  magnet: 'Magnet', detector: 'Detector', slit: 'Slit', rotator: 'Rotator', field: 'Field region', twist: 'Field twist', rf: 'RF flipper', recombiner: 'Recombiner',
};

function str(v: unknown): string {
  return v === undefined || v === null ? '' : typeof v === 'string' ? v : String(v);
}

function Fields({ base, specs, doc, errors, actions }: { base: string; specs: FieldSpec[]; doc: BeamlineDoc; errors: Props['errors']; actions: InspectorActions }) {
  return (
    <div className="fields">
      {specs.map((f) => {
        const path = joinPath(base, f.key);
        const v = getAt(doc, path);
        if (f.type === 'quantity') {
          return <QuantityInput key={path} name={path} label={f.label} value={str(v)} placeholder={f.placeholder ?? (f.optional ? 'default' : '')}
            error={errors[path]} onCommit={(t) => actions.commitQuantity(path, t, f)} />;
        }
        if (f.type === 'choice') {
          return <Choice key={path} label={f.label} value={str(v)} options={f.options} error={errors[path]?.message}
            onChange={(val) => actions.setValue(path, val === '' ? undefined : val)} />;
        }
        return (
          <div className="field" key={path}>
            <label>
              <input type="checkbox" checked={v === true} onChange={(e) => actions.setValue(path, e.target.checked)} /> {f.label}
            </label>
          </div>
        );
      })}
    </div>
  );
}

function Choice({ label, value, options, onChange, error }: { label: string; value: string; options: readonly string[]; onChange(v: string): void; error?: string }) {
  const id = useId();
  return (
    <div className={`field${error ? ' invalid' : ''}`}>
      <label htmlFor={id}>{label}</label>
      <select id={id} value={value} onChange={(e) => onChange(e.target.value)}>
        {options.map((o) => (
          <option key={o} value={o}>{o === '' ? '(default)' : o}</option>
        ))}
      </select>
      {error && <span className="field-error" role="alert">{error}</span>}
    </div>
  );
}

function Route({ fromId, port, target, ids, actions }: { fromId: string; port: string | null; target: string; ids: readonly string[]; actions: InspectorActions }) {
  const id = useId();
  const [kind, setKind] = useState<string>('detector');
  const label = port === null ? 'output' : port === '*' ? 'other ports' : port;
  return (
    <tr>
      <th scope="row"><label htmlFor={id}>{label}</label></th>
      <td>
        <select id={id} value={target} onChange={(e) => actions.reroute(fromId, port, e.target.value)} data-port={port ?? ''}>
          {['stop', ...ids.filter((x) => x !== fromId)].map((t) => (
            <option key={t} value={t}>{t}</option>
          ))}
          {target !== 'stop' && !ids.includes(target) && <option value={target}>{target}</option>}
        </select>
      </td>
      <td className="add-on-port">
        <select aria-label={`Kind to add on ${label}`} value={kind} onChange={(e) => setKind(e.target.value)}>
          {NEW_ELEMENT_KINDS.map((k) => (
            <option key={k} value={k}>{k}</option>
          ))}
        </select>
        <button type="button" onClick={() => actions.addOnPort(fromId, port, kind)} aria-label={`Add a ${kind} on ${label}`}>add</button>
      </td>
    </tr>
  );
}

export function Inspector(p: Props) {
  const { doc, line, selected, errors, actions } = p;
  const ids = doc.elements.map((e) => e.id);
  if (selected === 'oven') {
    const vel = (doc.oven as { velocity: Record<string, unknown> }).velocity;
    const sp = doc.species;
    return (
      <section className="inspector" aria-label="Inspector">
        <h2>Oven and species</h2>
        <div className="fields">
          <Choice label="species" value={typeof sp === 'string' ? sp : 'bare spin'} options={['bare spin', ...p.speciesNames]}
            error={errors.species?.message} onChange={(v) => actions.setSpecies(v)} />
        </div>
        {typeof sp !== 'string' && (
          <Fields base="" doc={doc} errors={errors} actions={actions} specs={[
            { type: 'quantity', key: 'species.spin', label: 'spin j', dim: 'dimensionless' },
            { type: 'quantity', key: 'species.g', label: 'g factor', dim: 'dimensionless' },
            { type: 'quantity', key: 'species.mass', label: 'mass', dim: 'mass' },
          ]} />
        )}
        <Fields base="" doc={doc} errors={errors} actions={actions} specs={[{ type: 'quantity', key: 'oven.flux', label: 'flux', dim: 'rate' }]} />
        <div className="fields">
          <Choice label="velocity distribution" value={str(vel.kind)} options={VELOCITY_KINDS} error={errors['oven.velocity']?.message}
            onChange={(v) => actions.setValue('oven.velocity', v)} />
        </div>
        <Fields base="" doc={doc} errors={errors} actions={actions} specs={velocityFields(str(vel.kind))} />
        <VelocityTable points={vel.kind === 'table' ? (vel.points as [QuantityDoc, QuantityDoc][]) : undefined} errors={errors}
          commitQuantity={actions.commitQuantity} onRows={actions.velocityRows} onImport={actions.setVelocityTable} />
        <Fields base="" doc={doc} errors={errors} actions={actions} specs={[
          { type: 'quantity', key: 'oven.aperture.width', label: 'aperture width', dim: 'length', optional: true },
          { type: 'quantity', key: 'oven.aperture.height', label: 'aperture height', dim: 'length', optional: true },
        ]} />
        <OvenState state={doc.oven.state} labels={speciesPortLabels(doc.species, 'each') ?? []} error={errors['oven.state']} onChange={actions.setOvenState} />
        <table className="routes"><tbody>
          <Route fromId="oven" port={null} target={doc.oven.to} ids={ids} actions={actions} />
        </tbody></table>
        <Warnings list={p.warnings} />
        {p.hyperfine && <LevelsPanel line={line} dark={p.dark ?? false} seq={p.seq ?? 0} />}
      </section>
    );
  }
  const index = ids.indexOf(selected ?? '');
  if (index < 0) {
    return (
      <section className="inspector" aria-label="Inspector">
        <h2>Inspector</h2>
        <p className="note">Select an element in the tree or the drawing (Alt+↓ / Alt+↑ step through the line).</p>
      </section>
    );
  }
  const el = doc.elements[index] as unknown as Record<string, unknown> & { id: string; kind: string };
  const base = `elements[${index}]`;
  // what the kind routes (its kind module: ports, one output, or none for a leaf)
  const output = isElementKind(el.kind) ? KINDS[el.kind].output : 'to';
  const ports = output === 'ports' ? (el.ports as Record<string, string>) : undefined;
  // the ports this magnet sorts into: by its own group (m_J, or each eigenstate) for a hyperfine species
  const group = el.kind === 'magnet' && (el.group === 'mJ' || el.group === 'each') ? el.group : undefined;
  const offered = p.portLabelsOf ? p.portLabelsOf(group) : p.portLabels;
  const unlisted = ports ? offered.filter((l) => !(l in ports)) : [];
  const lineEl = line.elements.find((e) => e.id === el.id);
  return (
    <section className="inspector" aria-label="Inspector">
      <h2>
        {KIND_TITLE[el.kind] ?? el.kind} <span className="insp-id">{el.id}</span>
      </h2>
      {p.placed && lineEl && (
        <Position id={el.id} base={base} y0={p.placed.y0} y1={p.placed.y1} gap={lineEl.gap} doc={doc} errors={errors} actions={actions} />
      )}
      {lineEl && 'axis' in lineEl && <p className="note">axis {(lineEl as { axis: { text: string } }).axis.text}</p>}
      <div className="fields">
        <QuantityInput name={`${base}.id`} label="id" value={el.id} error={errors[`${base}.id`]} onCommit={(t) => actions.rename(el.id, t.trim())} />
      </div>
      <KeyFields Plain={Fields} portLabels={p.portLabels} base={base} specs={elementFields(el, p.hyperfine)} doc={doc} errors={errors} actions={actions} />
      {output !== 'none' && (
        <>
          <h3>Routing</h3>
          <table className="routes">
            <tbody>
              {ports
                ? Object.entries(ports).map(([port, target]) => <Route key={port} fromId={el.id} port={port} target={target} ids={ids} actions={actions} />)
                : <Route fromId={el.id} port={null} target={str(el.to)} ids={ids} actions={actions} />}
            </tbody>
          </table>
          {unlisted.length > 0 && ports && (
            <p className="note">
              Ports not listed by name{'*' in ports ? ` go where "other ports" goes` : ''}: {unlisted.join(', ')}.{' '}
              {unlisted.map((l) => (
                <button type="button" key={l} onClick={() => actions.reroute(el.id, l, 'stop')}>list {l}</button>
              ))}
            </p>
          )}
        </>
      )}
      <Warnings list={p.warnings} />
      {p.hyperfine && el.kind === 'magnet' && <LevelsPanel line={line} only={el.id} dark={p.dark ?? false} seq={p.seq ?? 0} />}
    </section>
  );
}

/**
 * Where an element starts, typed as a distance from the oven aperture: the document keeps its gap, set to the
 * distance less where the element before it ends (`y0 − gap`). The exit is shown for elements with a length.
 */
function Position({ id, base, y0, y1, gap, doc, errors, actions }: { id: string; base: string; y0: number; y1: number; gap: number; doc: BeamlineDoc; errors: Props['errors']; actions: InspectorActions }) {
  const upstream = documentOutputs(doc).find((o) => o.target === id)?.fromId ?? 'oven';
  const upstreamName = upstream === 'oven' ? 'the oven aperture' : upstream;
  const exit = Math.max(0, y0 - gap);
  const path = `${base}.position`;
  return (
    <div className="fields">
      <QuantityInput name={path} label="from the oven" value={y0 < 1 ? `${fmt(y0 * 100, 6)} cm` : `${fmt(y0, 7)} m`} error={errors[path]}
        hint={`behind ${upstreamName}${upstream === 'oven' ? '' : ` (ends at ${fmtLength(exit)})`}${y1 > y0 ? `; exit at ${fmtLength(y1)}` : ''}; the file keeps the gap`}
        onCommit={(t) => actions.setPosition(id, t, exit, upstreamName)} />
    </div>
  );
}

function Warnings({ list }: { list: readonly string[] }) {
  if (list.length === 0) return null;
  return (
    <div className="el-warnings" role="note" aria-label="Engine warnings for this element">
      <h3>Engine warnings</h3>
      <ul>
        {list.map((w, i) => (
          <li key={i}>{w}</li>
        ))}
      </ul>
    </div>
  );
}
