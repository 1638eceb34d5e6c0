// A text field holding a quantity string. Enter or leaving the field commits; an entry the document
// layer refuses keeps its text here with the message beside it, while the document keeps the last valid value.
// Escape takes back the typing: the field shows again what it showed when the editing began, and nothing
// is committed.
import { useId } from 'react';
import { useCommitText } from './useCommitText.ts';

interface Props {
  label: string;
  value: string;
  placeholder?: string;
  error?: { text: string; message: string };
  /** The entry to take; a refusal comes back as `error`. */
  onCommit(text: string): void;
  name: string;
  hint?: string;
}

export function QuantityInput({ label, value, placeholder, error, onCommit, name, hint }: Props) {
  const id = useId();
  const entry = useCommitText(value, error, onCommit);
  return (
    <div className={`field${error ? ' invalid' : ''}`}>
      <label htmlFor={id}>{label}</label>
      <input id={id} name={name} type="text" placeholder={placeholder} spellCheck={false} autoComplete="off"
        aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : hint ? `${id}-hint` : undefined}
        {...entry} />
      {error ? (
        <span id={`${id}-err`} className="field-error" role="alert">{error.message}</span>
      ) : hint ? (
        <span id={`${id}-hint`} className="field-hint">{hint}</span>
      ) : null}
    </div>
  );
}
