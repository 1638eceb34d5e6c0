// A control that Tab reaches but the eye sees only while it has the focus: "skip the results, go to the
// inspector", so the keyboard does not walk through every table and chart control to reach the set-points.
import { useState, type CSSProperties } from 'react';

const HIDDEN: CSSProperties = {
  position: 'absolute', width: 1, height: 1, padding: 0, margin: -1, overflow: 'hidden', clipPath: 'inset(50%)', whiteSpace: 'nowrap', border: 0,
};
const SHOWN: CSSProperties = { position: 'relative', zIndex: 5, alignSelf: 'flex-start', margin: '4px 0' };

export function SkipLink({ label, onActivate }: { label: string; onActivate(): void }) {
  const [focused, setFocused] = useState(false);
  return (
    <button type="button" className="skip-link" style={focused ? SHOWN : HIDDEN} onFocus={() => setFocused(true)} onBlur={() => setFocused(false)}
      onClick={onActivate}>
      {label}
    </button>
  );
}
