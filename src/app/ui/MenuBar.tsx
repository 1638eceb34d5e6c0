// The in-window menu bar, built from the command registry (the Electron shell adds its native menus,
// which dispatch the same ids).
import { useEffect, useRef, useState } from 'react';
import { commandLabel, shortcutLabel, type Command, type MenuName } from '../commands.ts';
import type { HostPlatform } from '../../host/contract.ts';

const MENUS: readonly MenuName[] = ['File', 'Edit', 'Element', 'View', 'Samples', 'Help'];

interface Props<C> {
  commands: readonly Command<C>[];
  ctx: C;
  platform: HostPlatform;
  run(id: string): void;
  isEnabled(id: string): boolean;
}

export function MenuBar<C>({ commands, ctx, platform, run, isEnabled }: Props<C>) {
  const [open, setOpen] = useState<MenuName | undefined>();
  const bar = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (!open) return;
    const first = bar.current?.querySelector<HTMLButtonElement>(`[data-menu="${open}"] [role="menuitem"]:not([disabled])`);
    first?.focus();
    const close = (e: MouseEvent) => {
      if (!bar.current?.contains(e.target as Node)) setOpen(undefined);
    };
    window.addEventListener('mousedown', close);
    return () => window.removeEventListener('mousedown', close);
  }, [open]);
  const onMenuKey = (e: React.KeyboardEvent, name: MenuName) => {
    const items = [...(e.currentTarget.querySelectorAll<HTMLButtonElement>('[role="menuitem"]:not([disabled])'))];
    const i = items.indexOf(document.activeElement as HTMLButtonElement);
    if (e.key === 'ArrowDown') {
      e.preventDefault();
      items[(i + 1) % items.length]?.focus();
    } else if (e.key === 'ArrowUp') {
      e.preventDefault();
      items[(i - 1 + items.length) % items.length]?.focus();
    } else if (e.key === 'Escape') {
      e.preventDefault();
      setOpen(undefined);
      bar.current?.querySelector<HTMLButtonElement>(`[data-menu-button="${name}"]`)?.focus();
    } else if (e.key === 'ArrowRight' || e.key === 'ArrowLeft') {
      e.preventDefault();
      const k = MENUS.indexOf(name) + (e.key === 'ArrowRight' ? 1 : -1);
      setOpen(MENUS[(k + MENUS.length) % MENUS.length]);
    }
  };
  return (
    <div className="menubar" ref={bar} role="menubar" aria-label="Main menu">
      {MENUS.map((name) => {
        const items = commands.filter((c) => c.menu === name && !c.takesArg); // a command with an argument runs from its own control
        if (items.length === 0) return null;
        return (
          <div key={name} className="menu" data-menu={name}>
            <button type="button" role="menuitem" aria-haspopup="menu" aria-expanded={open === name} data-menu-button={name}
              onClick={() => setOpen(open === name ? undefined : name)}
              onKeyDown={(e) => {
                if (e.key === 'ArrowDown') {
                  e.preventDefault();
                  setOpen(name);
                }
              }}>
              {name}
            </button>
            {open === name && (
              <div role="menu" aria-label={name} className="menu-list" onKeyDown={(e) => onMenuKey(e, name)}>
                {items.map((c) => (
                  <button type="button" role="menuitem" key={c.id} data-command={c.id} disabled={!isEnabled(c.id)}
                    onClick={() => {
                      setOpen(undefined);
                      run(c.id);
                    }}>
                    <span>{commandLabel(c, ctx)}</span>
                    {c.shortcut && <kbd>{shortcutLabel(c.shortcut, platform)}</kbd>}
                  </button>
                ))}
              </div>
            )}
          </div>
        );
      })}
    </div>
  );
}
