// A text entry that commits on Enter or on leaving it, keeps a refused entry (with its text) until changed, and takes
// back the typing on Escape: the field shows again what it showed when the editing began, and nothing is committed.
// Shared by the inspector's quantity fields (QuantityInput) and the velocity table's cells (VelocityTable).
import { useEffect, useRef, useState, type ChangeEvent, type KeyboardEvent } from 'react';

export function useCommitText(value: string, error: { text: string } | undefined, onCommit: (text: string) => void) {
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
  return {
    value: text,
    onChange: (e: ChangeEvent<HTMLInputElement>) => setText(e.target.value),
    onFocus: () => {
      start.current = text;
      setFocused(true);
    },
    onBlur: () => {
      setFocused(false);
      commit();
    },
    onKeyDown: (e: KeyboardEvent<HTMLInputElement>) => {
      if (e.key === 'Enter') {
        e.preventDefault();
        commit();
      } else if (e.key === 'Escape' && text !== start.current) {
        e.preventDefault();
        e.stopPropagation(); // the field takes this Escape (a dialog around it stays open)
        setText(start.current);
      }
    },
  };
}
