// One registry of editor commands shared by the menu bar, keyboard shortcuts, the command palette,
// the host's menus (onMenuCommand dispatches ids here), the inspector and tests. A command is plain data
// plus functions of the editor context: `enabled` and `perform`. A command that takes an argument (an
// inspector edit) runs only with one; the palette lists the arguments its `choices` offer.

import { acceleratorMatches, type KeyLike } from '../host/accelerator.ts';
import type { HostPlatform } from '../host/contract.ts';

export type MenuName = 'File' | 'Edit' | 'Element' | 'View' | 'Samples' | 'Help';

export interface Command<C> {
  /** Stable id; host menu ids (HOST_COMMANDS) are used as they are ("file.save"). */
  readonly id: string;
  readonly label: string;
  readonly menu: MenuName;
  /** Accelerator in Electron's syntax ("CmdOrCtrl+Shift+S"), matched by acceleratorMatches. */
  readonly shortcut?: string;
  /** Further keys for the same command (not shown). */
  readonly alternates?: readonly string[];
  /** Keys that work even while a text field has the focus (undo/redo are handled by the field itself). */
  readonly global?: boolean;
  /** The label as it reads now (the undo command names the edit it undoes); `label` when absent or undefined. */
  describe?(ctx: C): string | undefined;
  /** The command acts on an argument (an inspector edit): `run(id, ctx, arg)` runs it only with one, the
   *  menus and shortcuts do not list it, and the palette lists the arguments `choices` offers now. */
  readonly takesArg?: boolean;
  choices?(ctx: C): readonly CommandChoice[];
  enabled?(ctx: C): boolean;
  perform(ctx: C, arg?: unknown): void | Promise<void>;
}

/** One argument a command offers in the palette, with the label shown for it. */
export interface CommandChoice {
  readonly label: string;
  readonly arg: unknown;
}

/** One line of the palette: a command, or a command with one of the arguments it offers. */
export interface PaletteEntry {
  /** Unique among the entries (the command id, then "#n" for its n-th choice). */
  readonly key: string;
  readonly id: string;
  readonly label: string;
  readonly menu: MenuName;
  readonly shortcut?: string;
  readonly arg?: unknown;
}

export interface Registry<C> {
  register(cmd: Command<C>): void;
  /** Removes every command whose id starts with `prefix` (dynamic lists such as samples). */
  unregisterPrefix(prefix: string): void;
  get(id: string): Command<C> | undefined;
  list(): readonly Command<C>[];
  isEnabled(id: string, ctx: C): boolean;
  /** Performs `id` when it exists and is enabled (with `arg` for a command that takes one, which it
   *  needs); returns whether it ran. */
  run(id: string, ctx: C, arg?: unknown): boolean;
  /** What the palette lists now: each command without an argument, and each choice of those with one. */
  entries(ctx: C): PaletteEntry[];
  /** The command a key event presses, or undefined. */
  forKey(event: KeyLike, platform: HostPlatform): Command<C> | undefined;
}

export function createRegistry<C>(onError?: (id: string, e: unknown) => void): Registry<C> {
  const cmds = new Map<string, Command<C>>();
  const reg: Registry<C> = {
    register(cmd) {
      if (cmds.has(cmd.id)) throw new Error(`command "${cmd.id}" is registered twice`);
      cmds.set(cmd.id, cmd);
    },
    unregisterPrefix(prefix) {
      for (const id of [...cmds.keys()]) if (id.startsWith(prefix)) cmds.delete(id);
    },
    get: (id) => cmds.get(id),
    list: () => [...cmds.values()],
    isEnabled(id, ctx) {
      const c = cmds.get(id);
      return c !== undefined && (c.enabled ? c.enabled(ctx) : true);
    },
    run(id, ctx, arg) {
      const c = cmds.get(id);
      if (!c || !reg.isEnabled(id, ctx)) return false;
      if (c.takesArg && arg === undefined) return false;
      try {
        const r = c.takesArg ? c.perform(ctx, arg) : c.perform(ctx);
        if (r && typeof (r as Promise<void>).catch === 'function') (r as Promise<void>).catch((e) => onError?.(id, e));
      } catch (e) {
        onError?.(id, e);
      }
      return true;
    },
    entries(ctx) {
      const out: PaletteEntry[] = [];
      for (const c of cmds.values()) {
        if (!c.takesArg) out.push({ key: c.id, id: c.id, label: commandLabel(c, ctx), menu: c.menu, ...(c.shortcut ? { shortcut: c.shortcut } : {}) });
        else (c.choices?.(ctx) ?? []).forEach((ch, i) => out.push({ key: `${c.id}#${i}`, id: c.id, label: ch.label, menu: c.menu, arg: ch.arg }));
      }
      return out;
    },
    forKey(event, platform) {
      for (const c of cmds.values()) {
        if (c.takesArg) continue;
        const keys = [c.shortcut, ...(c.alternates ?? [])].filter((k): k is string => !!k);
        if (keys.some((k) => acceleratorMatches(k, event, platform))) return c;
      }
      return undefined;
    },
  };
  return reg;
}

/** A command's label as it reads now (its `describe`, else its fixed label). */
export function commandLabel<C>(cmd: Command<C>, ctx: C): string {
  return cmd.describe?.(ctx) ?? cmd.label;
}

/** How a shortcut reads on a platform: "Ctrl+Shift+S", "⌘⇧S". */
export function shortcutLabel(shortcut: string, platform: HostPlatform): string {
  const parts = shortcut.split(/\+(?!$)/);
  if (platform === 'darwin') {
    const sym: Record<string, string> = { cmdorctrl: '⌘', cmd: '⌘', command: '⌘', ctrl: '⌃', control: '⌃', shift: '⇧', alt: '⌥', option: '⌥' };
    return parts.map((p) => sym[p.toLowerCase()] ?? p.toUpperCase()).join('');
  }
  return parts.map((p) => (p.toLowerCase() === 'cmdorctrl' ? 'Ctrl' : p.length === 1 ? p.toUpperCase() : p)).join('+');
}

/** Palette filter: every word of the query occurs in the menu, label or id (case-insensitive), in order of score. */
export function filterCommands<T extends { readonly menu: string; readonly label: string; readonly id: string }>(cmds: readonly T[], query: string): T[] {
  const words = query.toLowerCase().split(/\s+/).filter(Boolean);
  if (words.length === 0) return [...cmds];
  const scored: { c: T; s: number }[] = [];
  for (const c of cmds) {
    const hay = `${c.menu} ${c.label} ${c.id}`.toLowerCase();
    if (!words.every((w) => hay.includes(w))) continue;
    const s = c.label.toLowerCase().startsWith(words[0]) ? 0 : 1;
    scored.push({ c, s });
  }
  return scored.sort((a, b) => a.s - b.s).map((x) => x.c);
}
