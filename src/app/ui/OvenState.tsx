// The oven's initial spin state in the inspector (docs/design.md, `oven.state`): unpolarised, a pure state along
// an axis, or populations of the zero-field states along an axis. Every entry is a unit-aware field; each change
// is one undoable edit of the whole state (ovenStateOfKind carries the state over when its kind changes).
import { useId, useState } from 'react';
import { ovenStateOfKind, checkQuantity, type OvenStateDoc, type QuantityDoc } from '../core-adapter.ts';
import { QuantityInput } from './QuantityInput.tsx';

export type StateKind = 'unpolarized' | 'pure' | 'populations';
const KINDS: readonly { kind: StateKind; label: string }[] = [
  { kind: 'unpolarized', label: 'unpolarised' },
  { kind: 'pure', label: 'pure state (axis)' },
  { kind: 'populations', label: 'populations (axis)' },
];

type Axis = { theta: QuantityDoc; phi: QuantityDoc } | { roll: QuantityDoc };

interface Props {
  state: OvenStateDoc;
  /** The species' zero-field state labels ("+1/2", "F=2,mF=-2"); empty when the species is not known. */
  labels: readonly string[];
  /** A refusal at oven.state (or under it): the entry and its message. */
  error?: { text: string; message: string };
  onChange(state: OvenStateDoc, what: string): void;
}

function text(v: unknown): string {
  return v === undefined || v === null ? '' : String(v);
}

/** A field's own check before the state is sent: the message for an entry that is not of its dimension. */
function entryProblem(value: string, dim: 'angle' | 'dimensionless', where: string): string | undefined {
  const q = checkQuantity(/^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(value.trim()) && dim === 'dimensionless' ? Number(value) : value.trim(), dim, where);
  return q.ok ? undefined : q.message;
}

export function OvenState({ state, labels, error, onChange }: Props) {
  const kindId = useId();
  const pureId = useId();
  const kind = state.kind as string;
  const known = KINDS.some((k) => k.kind === kind);
  const axis = (state as { axis?: Axis }).axis;
  // an entry that is not of its field's dimension stays in its field with the message; the document is not asked
  const [entryErrors, setEntryErrors] = useState<Record<string, { text: string; message: string }>>({});
  const err = (path: string) => entryErrors[path];
  /** Checks an entry at `path`; true when it may be sent (its message cleared), false when it stays refused here. */
  const accept = (path: string, t: string, dim: 'angle' | 'dimensionless'): boolean => {
    const p = t.trim() === '' && dim === 'dimensionless' ? undefined : entryProblem(t, dim, `oven.state.${path}`);
    setEntryErrors((e) => {
      const { [path]: _, ...rest } = e;
      return p ? { ...rest, [path]: { text: t, message: p } } : rest;
    });
    return p === undefined;
  };
  const setAxis = (next: Axis, what: string) => onChange({ ...(state as Extract<OvenStateDoc, { axis: Axis }>), axis: next }, what);
  return (
    <fieldset className="oven-state" aria-label="Initial state" style={{ minWidth: 0, margin: '6px 0', padding: '4px 6px', border: '1px solid var(--rule)' }}>
      <legend style={{ fontWeight: 600 }}>Initial state</legend>
      <div className="field">
        <label htmlFor={kindId}>state</label>
        <select id={kindId} name="oven.state.kind" value={known ? kind : ''} style={{ minWidth: 0, maxWidth: '100%' }}
          onChange={(e) => onChange(ovenStateOfKind(state, e.target.value as StateKind, labels), e.target.value)}>
          {!known && <option value="">{kind} (as written in the file)</option>}
          {KINDS.map((k) => <option key={k.kind} value={k.kind}>{k.label}</option>)}
        </select>
      </div>
      {!known && <p className="note">A {kind} state is kept as the file writes it; choosing another kind replaces it (Undo brings it back).</p>}
      {axis && (
        'roll' in axis ? (
          <QuantityInput name="oven.state.axis.roll" label="axis roll" value={text(axis.roll)} error={err('axis.roll')}
            hint="about the beam, from the vertical" onCommit={(t) => {
              if (accept('axis.roll', t, 'angle')) setAxis({ roll: t.trim() }, `axis roll ${t.trim()}`);
            }} />
        ) : (
          <>
            <QuantityInput name="oven.state.axis.theta" label="axis θ" value={text(axis.theta)} error={err('axis.theta')} onCommit={(t) => {
              if (accept('axis.theta', t, 'angle')) setAxis({ theta: t.trim(), phi: axis.phi }, `axis θ ${t.trim()}`);
            }} />
            <QuantityInput name="oven.state.axis.phi" label="axis φ" value={text(axis.phi)} error={err('axis.phi')} onCommit={(t) => {
              if (accept('axis.phi', t, 'angle')) setAxis({ theta: axis.theta, phi: t.trim() }, `axis φ ${t.trim()}`);
            }} />
          </>
        )
      )}
      {state.kind === 'pure' && (
        <div className="field">
          <label htmlFor={pureId}>state m</label>
          <select id={pureId} name="oven.state.m" value={state.m} style={{ minWidth: 0, maxWidth: '100%' }} onChange={(e) => onChange({ ...state, m: e.target.value }, `pure ${e.target.value}`)}>
            {!labels.includes(state.m) && <option value={state.m}>{state.m}</option>}
            {labels.map((l) => <option key={l} value={l}>{l}</option>)}
          </select>
        </div>
      )}
      {state.kind === 'populations' && (
        <div className="populations" role="group" aria-label="Populations (normalised by their sum; an empty field is 0)">
          {[...labels, ...Object.keys(state.p).filter((l) => !labels.includes(l))].map((l) => (
            <QuantityInput key={l} name={`oven.state.p["${l}"]`} label={l} value={text(state.p[l])} placeholder="0" error={err(`p.${l}`)}
              onCommit={(t) => {
                if (!accept(`p.${l}`, t, 'dimensionless')) return;
                const p = { ...state.p };
                const v = t.trim();
                if (v === '') delete p[l];
                else p[l] = /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(v) ? Number(v) : v;
                onChange({ ...state, p }, `${l} population ${v === '' ? '0' : v}`);
              }} />
          ))}
        </div>
      )}
      {error && <span className="field-error" role="alert">{error.message}</span>}
    </fieldset>
  );
}
