// A modal dialog: focus moves into it and stays there (Tab and Shift+Tab cycle through its controls, and
// focus that lands outside is brought back), Escape closes it, focus returns where it was.
import { useEffect, useRef, type ReactNode } from 'react';

const TABBABLE = 'a[href], button:not([disabled]), input:not([disabled]), select:not([disabled]), textarea:not([disabled]), [tabindex]:not([tabindex="-1"])';

/** The controls of `root` that Tab reaches, in document order (hidden ones left out). */
export function tabbables(root: HTMLElement): HTMLElement[] {
  return [...root.querySelectorAll<HTMLElement>(TABBABLE)].filter((el) => el.tabIndex >= 0 && el.getClientRects().length > 0);
}

/**
 * Keeps Tab inside `root`: from the last control to the first, from the first (or `root` itself) back to
 * the last with Shift. Returns whether it moved the focus (the caller then prevents the default).
 */
export function cycleFocus(root: HTMLElement, shift: boolean): boolean {
  const list = tabbables(root);
  if (list.length === 0) {
    root.focus();
    return true;
  }
  const at = document.activeElement;
  const first = list[0];
  const last = list[list.length - 1];
  if (shift && (at === first || at === root || !root.contains(at))) {
    last.focus();
    return true;
  }
  if (!shift && (at === last || !root.contains(at))) {
    first.focus();
    return true;
  }
  return false;
}

export function Dialog({ title, children, onClose, actions, closeLabel = 'Close', alert = false }: {
  title: string; children: ReactNode; onClose(): void; actions?: ReactNode;
  /** The label of the button that closes the dialog (Escape does the same). */
  closeLabel?: string;
  /** A question that interrupts the work (role alertdialog). */
  alert?: boolean;
}) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const root = ref.current;
    const before = document.activeElement as HTMLElement | null;
    const first = root ? tabbables(root)[0] : undefined;
    (first ?? root)?.focus();
    // focus that leaves the dialog (a click on the page behind it, a script) comes back to it
    const onFocusIn = (e: FocusEvent) => {
      if (root && e.target instanceof Node && !root.contains(e.target)) (tabbables(root)[0] ?? root).focus();
    };
    document.addEventListener('focusin', onFocusIn);
    return () => {
      document.removeEventListener('focusin', onFocusIn);
      if (before?.isConnected) before.focus();
    };
  }, []);
  return (
    <div className="overlay" onMouseDown={onClose}>
      <div className="dialog" role={alert ? 'alertdialog' : 'dialog'} aria-modal="true" aria-labelledby="dialog-title" ref={ref} tabIndex={-1}
        onMouseDown={(e) => e.stopPropagation()}
        onKeyDown={(e) => {
          if (e.key === 'Escape') {
            e.preventDefault();
            e.stopPropagation();
            onClose();
          } else if (e.key === 'Tab' && ref.current && cycleFocus(ref.current, e.shiftKey)) {
            e.preventDefault();
          }
        }}>
        <h2 id="dialog-title">{title}</h2>
        <div className="dialog-body">{children}</div>
        <div className="dialog-actions">
          {actions}
          <button type="button" onClick={onClose}>{closeLabel}</button>
        </div>
      </div>
    </div>
  );
}
