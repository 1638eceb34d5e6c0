// The command palette (Ctrl+K): every registered command by name, and the choices of the commands that
// take an argument (the inspector's edits: "Set Species: Rb-87").
import { useEffect, useRef, useState } from 'react';
import { filterCommands, shortcutLabel, type PaletteEntry } from '../commands.ts';
import type { HostPlatform } from '../../host/contract.ts';

interface Props {
  entries: readonly PaletteEntry[];
  platform: HostPlatform;
  isEnabled(id: string): boolean;
  run(id: string, arg?: unknown): void;
  close(): void;
}

export function Palette({ entries, platform, isEnabled, run, close }: Props) {
  const [q, setQ] = useState('');
  const [i, setI] = useState(0);
  const input = useRef<HTMLInputElement>(null);
  useEffect(() => input.current?.focus(), []);
  const list = filterCommands(entries, q).filter((c) => isEnabled(c.id));
  const pick = (c: PaletteEntry | undefined) => {
    if (!c) return;
    close();
    run(c.id, c.arg);
  };
  const domId = (k: number) => `pal-${k}`;
  return (
    <div className="overlay" onMouseDown={close}>
      <div className="palette" role="dialog" aria-modal="true" aria-label="Command palette" onMouseDown={(e) => e.stopPropagation()}>
        <input ref={input} type="text" value={q} placeholder="Type a command…" aria-label="Command" aria-controls="palette-list"
          aria-activedescendant={list[i] ? domId(i) : undefined} role="combobox" aria-expanded="true"
          onChange={(e) => {
            setQ(e.target.value);
            setI(0);
          }}
          onKeyDown={(e) => {
            if (e.key === 'ArrowDown') {
              e.preventDefault();
              setI((x) => Math.min(x + 1, list.length - 1));
            } else if (e.key === 'ArrowUp') {
              e.preventDefault();
              setI((x) => Math.max(x - 1, 0));
            } else if (e.key === 'Enter') {
              e.preventDefault();
              pick(list[i]);
            } else if (e.key === 'Escape') {
              e.preventDefault();
              close();
            } else if (e.key === 'Tab') {
              e.preventDefault(); // a modal dialog: the focus stays in its one field
            }
          }} />
        <ul id="palette-list" role="listbox" aria-label="Commands">
          {list.map((c, k) => (
            <li key={c.key} id={domId(k)} role="option" aria-selected={k === i} className={k === i ? 'active' : ''}
              onMouseEnter={() => setI(k)} onClick={() => pick(c)}>
              <span className="pal-menu">{c.menu}</span> {c.label}
              {c.shortcut && <kbd>{shortcutLabel(c.shortcut, platform)}</kbd>}
            </li>
          ))}
          {list.length === 0 && <li className="note" role="option" aria-selected="false">No command matches.</li>}
        </ul>
      </div>
    </div>
  );
}
