// A text field holding a quantity string. Enter or leaving the field commits; an entry the document
// layer refuses keeps its text here with the message beside it, while the document keeps the last valid value.
// Escape takes back the typing: the field shows again what it showed when the editing began, and nothing
// is committed.
import { useEffect, useId, useRef, useState } from 'react';

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
  /** What the field showed when this editing began (focus, or the last commit): Escape goes back to it. */
  const start = useRef(text);
  useEffect(() => {
    if (!focused) setText(error?.text ?? value);
  }, [value, error, focused]);
  const commit = () => {
    // nothing typed since the editing began: nothing to send (a refused entry stays refused until changed,
    // and a value the document took meanwhile, by an undo say, is not overwritten)
    if (text === start.current) return;
    start.current = text;
    onCommit(text);
  };
  return (
    <div className={`field${error ? ' invalid' : ''}`}>
      <label htmlFor={id}>{label}</label>
      <input id={id} name={name} type="text" value={text} placeholder={placeholder} spellCheck={false} autoComplete="off"
        aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-err` : hint ? `${id}-hint` : undefined}
        onChange={(e) => setText(e.target.value)}
        onFocus={() => {
          start.current = text;
          setFocused(true);
        }}
        onBlur={() => {
          setFocused(false);
          commit();
        }}
        onKeyDown={(e) => {
          if (e.key === 'Enter') {
            e.preventDefault();
            commit();
          } else if (e.key === 'Escape' && text !== start.current) {
            e.preventDefault();
            e.stopPropagation(); // the field takes this Escape (a dialog around it stays open)
            setText(start.current);
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
