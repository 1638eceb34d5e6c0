// Checks on every IPC message before main acts on it: who sent it, and whether its payload is well formed.
// A message from a webContents the app did not create, from a sub-frame, or from a page outside the
// app's origin is ignored; a malformed payload is refused with a message naming the channel.

import {
  INVOKE_ARGS,
  SEND_ARGS,
  INVOKE_CHANNELS,
  SEND_CHANNELS,
  type InvokeChannel,
  type SendChannel,
} from '../../src/host/contract.ts';

/** What main knows of a message's sender (from event.sender and event.senderFrame). */
export interface SenderInfo {
  webContentsId: number;
  /** URL of the frame that sent it; null when the frame is gone. */
  frameUrl: string | null;
  /** True when the frame is its page's main frame (senderFrame.parent === null). */
  isMainFrame: boolean;
}

/** The origin of a URL ("spinyard://app", "http://127.0.0.1:5173"), or null when it has none. */
export function originOf(url: string): string | null {
  try {
    const u = new URL(url);
    if (u.protocol === 'file:') return 'file://';
    return `${u.protocol}//${u.host}`;
  } catch {
    return null;
  }
}

/** True when main should listen to this sender: a webContents it created, its main frame, showing a page
 *  of one of the app's origins. */
export function isTrustedSender(sender: SenderInfo, ownWebContents: ReadonlySet<number>, appOrigins: readonly string[]): boolean {
  if (!ownWebContents.has(sender.webContentsId)) return false;
  if (!sender.isMainFrame || sender.frameUrl === null) return false;
  const origin = originOf(sender.frameUrl);
  return origin !== null && appOrigins.includes(origin);
}

export type Checked = { ok: true } | { ok: false; error: string };

const invokeChannels: ReadonlySet<string> = new Set(Object.values(INVOKE_CHANNELS));
const sendChannels: ReadonlySet<string> = new Set(Object.values(SEND_CHANNELS));

/** Checks an invoke message's channel and arguments against the contract. */
export function checkInvoke(channel: string, args: readonly unknown[]): Checked {
  if (!invokeChannels.has(channel)) return { ok: false, error: `unknown channel ${JSON.stringify(channel)}` };
  return INVOKE_ARGS[channel as InvokeChannel](args)
    ? { ok: true }
    : { ok: false, error: `malformed payload on ${channel}` };
}

/** Checks a send (one-way) message's channel and arguments against the contract. */
export function checkSend(channel: string, args: readonly unknown[]): Checked {
  if (!sendChannels.has(channel)) return { ok: false, error: `unknown channel ${JSON.stringify(channel)}` };
  return SEND_ARGS[channel as SendChannel](args) ? { ok: true } : { ok: false, error: `malformed payload on ${channel}` };
}
