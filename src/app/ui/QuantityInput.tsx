// A text field holding a quantity string. Enter or leaving the field commits; an entry the document
// layer refuses keeps its text here with the message beside it, while the document keeps the last valid value.
import { useEffect, useId, useState } from 'react';

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
  const [text, setText] = useState(error?.text ?? value);
  const [focused, setFocused] = useState(false);
  useEffect(() => {
    if (!focused) setText(error?.text ?? value);
  }, [value, error, focused]);
  const commit = () => {
    if (text === value && !error) return;
    onCommit(text);
  };
  return (
    <div className={`field${error ? ' invalid' : ''}`}>
      <label htmlFor={id}>{label}</label>
      <input id={id} name={name} type="text" value={text} placeholder={placeholder} spellCheck={false} autoComplete="off"
        aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : hint ? `${id}-hint` : undefined}
        onChange={(e) => setText(e.target.value)}
        onFocus={() => setFocused(true)}
        onBlur={() => {
          setFocused(false);
          commit();
        }}
        onKeyDown={(e) => {
          if (e.key === 'Enter') {
            e.preventDefault();
            commit();
          } else if (e.key === 'Escape') {
            setText(value);
            if (error) onCommit(value);
          }
        }} />
      {error ? (
        <span id={`${id}-err`} className="field-error" role="alert">{error.message}</span>
      ) : hint ? (
        <span id={`${id}-hint`} className="field-hint">{hint}</span>
      ) : null}
    </div>
  );
}
