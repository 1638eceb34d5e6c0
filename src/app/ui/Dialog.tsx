// A modal dialog: focus moves into it, Escape closes it, focus returns where it was.
import { useEffect, useRef, type ReactNode } from 'react';

export function Dialog({ title, children, onClose, actions }: { title: string; children: ReactNode; onClose(): void; actions?: ReactNode }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const before = document.activeElement as HTMLElement | null;
    const first = ref.current?.querySelector<HTMLElement>('select, input, button, [tabindex]');
    first?.focus();
    return () => before?.focus?.();
  }, []);
  return (
    <div className="overlay" onMouseDown={onClose}>
      <div className="dialog" role="dialog" aria-modal="true" aria-labelledby="dialog-title" ref={ref}
        onMouseDown={(e) => e.stopPropagation()}
        onKeyDown={(e) => {
          if (e.key === 'Escape') {
            e.preventDefault();
            e.stopPropagation();
            onClose();
          }
        }}>
        <h2 id="dialog-title">{title}</h2>
        <div className="dialog-body">{children}</div>
        <div className="dialog-actions">
          {actions}
          <button type="button" onClick={onClose}>Close</button>
        </div>
      </div>
    </div>
  );
}
