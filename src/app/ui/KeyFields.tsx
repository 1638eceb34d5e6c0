// An element's fields in the inspector, as its kind's key table lists them (src/app/fields.ts): quantities, choices
// and switches through the inspector's own field list (`Plain`), and with widgets of their own, each in the table's
// place, the keys that are a list or a map of port labels (a recombiner's open ports and their phases) and the form
// an axis is written in (a roll, or θ and φ).
import { useId, type ComponentType } from 'react';
import type { BeamlineDoc } from '../core-adapter.ts';
import { axisAs, axisForm, type AnglesField, type AxisFormField, type BoolField, type FieldSpec, type LabelsField, type QuantityField } from '../fields.ts';
import { getAt, joinPath } from '../doc-path.ts';
import { QuantityInput } from './QuantityInput.tsx';
import type { InspectorActions } from './Inspector.tsx';

type Errors = Readonly<Record<string, { text: string; message: string }>>;

export interface PlainFieldsProps {
  base: string;
  specs: FieldSpec[];
  doc: BeamlineDoc;
  errors: Errors;
  actions: InspectorActions;
}

interface Props extends PlainFieldsProps {
  /** The inspector's list of plain fields (quantities, choices, switches). */
  Plain: ComponentType<PlainFieldsProps>;
  /** The port labels of the line's species, offered in a list of labels. */
  portLabels: readonly string[];
}

/** The path of a label's entry in a map at `base` ("elements[1].phases[\"-1/2\"]"), as the document layer writes it. */
export function labelPath(base: string, label: string): string {
  return /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(label) ? `${base}.${label}` : `${base}[${JSON.stringify(label)}]`;
}

/** The look of the inspector's field labels (styles.css, ".field label") for a group's name. */
const LABEL_STYLE = { color: 'var(--ink-soft)', fontSize: '12px' } as const;

const stringList = (v: unknown): string[] => (Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string') : []);

export function KeyFields({ Plain, portLabels, ...p }: Props) {
  const parts: (FieldSpec[] | LabelsField | AnglesField | AxisFormField | BoolField)[] = [];
  for (const f of p.specs) {
    // a switch with a default shows the default where the key is left out (the inspector's plain switch shows it off)
    if (f.type === 'labels' || f.type === 'angles' || f.type === 'axisForm' || (f.type === 'bool' && f.fallback !== undefined)) parts.push(f);
    else {
      const last = parts[parts.length - 1];
      if (Array.isArray(last)) last.push(f);
      else parts.push([f]);
    }
  }
  return (
    <>
      {parts.map((part, i) => {
        if (Array.isArray(part)) return <Plain key={`plain-${i}`} {...p} specs={part} />;
        if (part.type === 'labels') return <LabelList key={part.key} f={part} portLabels={portLabels} {...p} />;
        if (part.type === 'axisForm') return <AxisForm key={`${part.key}-form`} f={part} {...p} />;
        if (part.type === 'bool') return <Switch key={part.key} f={part} {...p} />;
        return <AngleMap key={part.key} f={part} {...p} />;
      })}
    </>
  );
}

/** A list of port labels: one switch per label of the species (and any label the document lists that it lacks). */
function LabelList({ f, base, doc, errors, actions, portLabels }: PlainFieldsProps & { f: LabelsField; portLabels: readonly string[] }) {
  const id = useId();
  const path = joinPath(base, f.key);
  const listed = stringList(getAt(doc, path));
  const options = [...portLabels, ...listed.filter((l) => !portLabels.includes(l))];
  const mapped = f.mappedBy ? getAt(doc, joinPath(base, f.mappedBy)) : undefined;
  const hasValue = (l: string) => typeof mapped === 'object' && mapped !== null && Object.hasOwn(mapped, l);
  const error = errors[path]?.message ?? listed.map((_, i) => errors[`${path}[${i}]`]?.message).find((m) => m !== undefined);
  const toggle = (l: string, on: boolean) => {
    const next = on ? options.filter((o) => o === l || listed.includes(o)) : listed.filter((o) => o !== l);
    actions.setValue(path, next);
  };
  return (
    <div className="fields">
      <div className={`field${error ? ' invalid' : ''}`} role="group" aria-labelledby={id}>
        <span id={id} style={LABEL_STYLE}>{f.label}</span>
        <span>
          {options.map((l) => {
            const on = listed.includes(l);
            // a label with a value in the map stays listed until that value is cleared (the reader refuses a phase of a closed port)
            const locked = on && hasValue(l);
            return (
              <label key={l} title={locked ? `clear the ${f.mappedBy} entry of ${l} first` : undefined}>
                <input type="checkbox" checked={on} disabled={locked} data-label={l} onChange={(e) => toggle(l, e.target.checked)} /> {l}{' '}
              </label>
            );
          })}
        </span>
        {error && <span className="field-error" role="alert">{error}</span>}
      </div>
    </div>
  );
}

/** A map label → angle: one entry per label listed at `f.of`; an empty entry removes the label (its default applies). */
function AngleMap({ f, base, doc, errors, actions }: PlainFieldsProps & { f: AnglesField }) {
  const mapPath = joinPath(base, f.key);
  const labels = stringList(getAt(doc, joinPath(base, f.of)));
  const mapped = getAt(doc, mapPath);
  const extra = typeof mapped === 'object' && mapped !== null && !Array.isArray(mapped) ? Object.keys(mapped).filter((l) => !labels.includes(l)) : [];
  return (
    <div className="fields">
      {[...labels, ...extra].map((l) => {
        const path = labelPath(mapPath, l);
        const v = getAt(doc, path);
        const spec: QuantityField = { type: 'quantity', key: labelPath(f.key, l), label: `${f.label} ${l}`, dim: 'angle', optional: true, placeholder: f.placeholder };
        return (
          <QuantityInput key={path} name={path} label={spec.label} value={v === undefined || v === null ? '' : String(v)} placeholder={f.placeholder ?? 'default'}
            error={errors[path]} onCommit={(t) => actions.commitQuantity(path, t, spec)} />
        );
      })}
    </div>
  );
}

/** The form an axis is written in (`axisAs`): the roll form is offered disabled where θ and φ have no roll. */
function AxisForm({ f, base, doc, errors, actions }: PlainFieldsProps & { f: AxisFormField }) {
  const id = useId();
  const path = joinPath(base, f.key);
  const axis = getAt(doc, path);
  const angles = axisForm(axis) === 'angles';
  const asRoll = angles ? axisAs(axis, 'roll') : axis;
  const onChange = (form: string) => {
    const next = axisAs(axis, form === 'roll' ? 'roll' : 'angles');
    if (next && next !== axis) actions.setValue(path, next);
  };
  const error = errors[path]?.message;
  return (
    <div className="fields">
      <div className={`field${error ? ' invalid' : ''}`}>
        <label htmlFor={id}>{f.label} as</label>
        <select id={id} name={`${path}:form`} value={angles ? 'angles' : 'roll'} onChange={(e) => onChange(e.target.value)}>
          <option value="roll" disabled={asRoll === undefined}>a roll about the beam</option>
          <option value="angles">θ and φ</option>
        </select>
        {error && <span className="field-error" role="alert">{error}</span>}
      </div>
    </div>
  );
}

/** true/false with the reader's default shown where the key is left out. */
function Switch({ f, base, doc, actions }: PlainFieldsProps & { f: BoolField }) {
  const path = joinPath(base, f.key);
  const v = getAt(doc, path);
  const on = typeof v === 'boolean' ? v : f.fallback === true;
  return (
    <div className="fields">
      <div className="field">
        <label>
          <input type="checkbox" name={path} checked={on} onChange={(e) => actions.setValue(path, e.target.checked)} /> {f.label}
          {v === undefined ? ' (default)' : ''}
        </label>
      </div>
    </div>
  );
}
