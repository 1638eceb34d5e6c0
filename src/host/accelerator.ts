// Matching a keyboard event against an accelerator of HOST_COMMANDS (Electron's syntax), so the browser
// renderer binds the same keys the Electron menus show.

import { HOST_COMMANDS, type HostPlatform } from './contract.ts';

/** The part of a KeyboardEvent this needs. */
export interface KeyLike {
  key: string;
  ctrlKey: boolean;
  metaKey: boolean;
  shiftKey: boolean;
  altKey: boolean;
  /** The physical key ("KeyA", "Digit1"), where the event has it. */
  code?: string;
}

/**
 * Electron's key names (lower case) as KeyboardEvent.key reports the key (lower case): the arrows are
 * "Up" in an accelerator and "ArrowUp" in the browser, Return is "Enter", Space is " ". Names not listed
 * are the same in both ("Delete", "Home", "F5", letters, digits).
 */
const KEY_NAMES: Record<string, string> = {
  plus: '+', minus: '-', space: ' ', esc: 'escape', escape: 'escape',
  up: 'arrowup', down: 'arrowdown', left: 'arrowleft', right: 'arrowright',
  return: 'enter', enter: 'enter',
};

/** The letter or digit of a physical key code ("KeyA" → "a", "Digit1" → "1"), or undefined. */
function codeChar(code: string | undefined): string | undefined {
  const m = code ? /^(?:Key([A-Z])|Digit([0-9]))$/.exec(code) : null;
  return m ? (m[1] ?? m[2]).toLowerCase() : undefined;
}

/** True when `event` presses `accelerator` ("CmdOrCtrl+Shift+S"; CmdOrCtrl is ⌘ on darwin, Ctrl elsewhere). */
export function acceleratorMatches(accelerator: string, event: KeyLike, platform: HostPlatform): boolean {
  const parts = accelerator.split(/\+(?!$)/);
  const keyPart = parts.pop() ?? '';
  let ctrl = false;
  let meta = false;
  let shift = false;
  let alt = false;
  for (const p of parts.map((x) => x.toLowerCase())) {
    if (p === 'cmdorctrl' || p === 'commandorcontrol') {
      if (platform === 'darwin') meta = true;
      else ctrl = true;
    } else if (p === 'ctrl' || p === 'control') ctrl = true;
    else if (p === 'cmd' || p === 'command' || p === 'super' || p === 'meta') meta = true;
    else if (p === 'shift') shift = true;
    else if (p === 'alt' || p === 'option') alt = true;
    else return false;
  }
  const want = KEY_NAMES[keyPart.toLowerCase()] ?? keyPart.toLowerCase();
  const got = event.key.toLowerCase();
  // "CmdOrCtrl+=" is also pressed as "+" with shift on many layouts; "Plus" names that key. With Alt
  // (Option on darwin) a letter or digit key types another character ("å" for Alt+A): its position decides.
  const keyOk = got === want || (alt && /^[a-z0-9]$/.test(want) && codeChar(event.code) === want);
  const shiftOk = want === '+' ? true : event.shiftKey === shift;
  return keyOk && shiftOk && event.ctrlKey === ctrl && event.metaKey === meta && event.altKey === alt;
}

/** The id of the HOST_COMMANDS entry a key event presses on `platform`, or undefined. */
export function commandForKey(event: KeyLike, platform: HostPlatform): string | undefined {
  for (const c of HOST_COMMANDS) {
    const main = platform === 'darwin' && c.macAccelerator ? c.macAccelerator : c.accelerator;
    const keys = [main, ...(c.alternates ?? [])].filter((k): k is string => k !== undefined);
    if (keys.some((k) => acceleratorMatches(k, event, platform))) return c.id;
  }
  return undefined;
}
