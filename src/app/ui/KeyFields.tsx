// An element's fields in the inspector, as its kind's key table lists them (src/app/fields.ts): quantities, choices
// and switches through the inspector's own field list (`Plain`), and the keys that are a list or a map of port labels
// (a recombiner's open ports and their phases) with widgets of their own, each in the table's place.
import { useId, type ComponentType } from 'react';
import type { BeamlineDoc } from '../core-adapter.ts';
import type { AnglesField, FieldSpec, LabelsField, QuantityField } from '../fields.ts';
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

const stringList = (v: unknown): string[] => (Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string') : []);

export function KeyFields({ Plain, portLabels, ...p }: Props) {
  const parts: (FieldSpec[] | LabelsField | AnglesField)[] = [];
  for (const f of p.specs) {
    if (f.type === 'labels' || f.type === 'angles') parts.push(f);
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
        <span id={id} className="field-label">{f.label}</span>
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
