// Crash recovery of autosaved drafts, shared by the Electron main process and the browser host.
//
// Each running host session writes a marker { id, startedAt, lastSeen, clean }. It refreshes lastSeen
// while it runs (the browser: a heartbeat, because several tabs may run at once) and sets clean = true
// when it closes normally, after removing the drafts of documents that were saved or discarded.
// A draft left by another session is offered for recovery when that session did not close cleanly and is
// no longer alive: its marker is missing, or it is not clean and its lastSeen is older than staleMs.

import type { AutosaveDraft } from './contract.ts';

export interface SessionMarker {
  id: string;
  startedAt: number;
  lastSeen: number;
  clean: boolean;
}

export interface DraftTriage {
  /** Drafts to offer to the user, newest first. */
  recoverable: AutosaveDraft[];
  /** Drafts of this session (still being edited). */
  current: AutosaveDraft[];
  /** Drafts of a session that closed cleanly, or of one that still runs elsewhere: not offered. */
  other: AutosaveDraft[];
}

export interface TriageOptions {
  currentSession: string;
  now: number;
  /** A session silent this long is taken as dead (browser heartbeat); 0 where only one session runs. */
  staleMs: number;
}

/** Sorts drafts into recoverable (left by a dead, unclean session), current, and other. */
export function triageDrafts(
  drafts: readonly AutosaveDraft[],
  sessions: readonly SessionMarker[],
  { currentSession, now, staleMs }: TriageOptions,
): DraftTriage {
  const byId = new Map(sessions.map((s) => [s.id, s]));
  const out: DraftTriage = { recoverable: [], current: [], other: [] };
  for (const d of drafts) {
    if (d.session === currentSession) {
      out.current.push(d);
      continue;
    }
    const s = byId.get(d.session);
    const dead = s === undefined || (!s.clean && now - s.lastSeen >= staleMs);
    (dead ? out.recoverable : out.other).push(d);
  }
  out.recoverable.sort((a, b) => b.savedAt - a.savedAt);
  return out;
}

/** Sessions whose markers can be dropped: clean ones and dead ones that no remaining draft refers to. */
export function sessionsToForget(
  sessions: readonly SessionMarker[],
  drafts: readonly AutosaveDraft[],
  { currentSession, now, staleMs }: TriageOptions,
): string[] {
  const referenced = new Set(drafts.map((d) => d.session));
  return sessions
    .filter((s) => s.id !== currentSession && !referenced.has(s.id) && (s.clean || now - s.lastSeen >= staleMs))
    .map((s) => s.id);
}

export function isSessionMarker(v: unknown): v is SessionMarker {
  if (typeof v !== 'object' || v === null) return false;
  const s = v as Record<string, unknown>;
  return (
    typeof s.id === 'string' &&
    /^[A-Za-z0-9_-]{1,64}$/.test(s.id) &&
    typeof s.startedAt === 'number' &&
    typeof s.lastSeen === 'number' &&
    typeof s.clean === 'boolean'
  );
}

/** A new session id: time plus randomness, safe as a file name. */
export function newSessionId(now: number, random: () => number = Math.random): string {
  const r = Math.floor(random() * 0xffffffff).toString(36);
  return `s${now.toString(36)}-${r}`;
}
