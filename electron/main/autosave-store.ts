// Autosave of unsaved work in the user-data folder, and recovery after a crash.
//
//   USERDATA/autosave/KEY.draft.json        one draft per open document (AutosaveDraft, JSON)
//   USERDATA/autosave/SESSION.session.json  one marker per app session (SessionMarker)
// A session writes its marker at start (clean: false) and sets clean: true when the app quits normally,
// after the drafts of documents that were saved or discarded have been removed. At the next start the
// drafts of an earlier session that is not marked clean are offered for recovery (src/host/drafts.ts).
// The single-instance lock means only one session runs at a time, so no heartbeat is needed here.

import * as nodeFs from 'node:fs/promises';
import * as path from 'node:path';
import { isAutosaveDraft, isDraftKey, type AutosaveDraft } from '../../src/host/contract.ts';
import { isSessionMarker, sessionsToForget, triageDrafts, type SessionMarker } from '../../src/host/drafts.ts';
import { atomicWriteFile, type AtomicFs } from './atomic-save.ts';

export type AutosaveFs = AtomicFs & {
  readFile(file: string, enc: 'utf8'): Promise<string>;
  readdir(dir: string): Promise<string[]>;
  mkdir(dir: string, opts: { recursive: true }): Promise<unknown>;
};

const DRAFT_SUFFIX = '.draft.json';
const SESSION_SUFFIX = '.session.json';

export interface AutosaveStoreOptions {
  session: string;
  now?: () => number;
  fs?: AutosaveFs;
  platform?: string;
}

/** The autosave folder of `userData` with this session's view of it. */
export function createAutosaveStore(userData: string, options: AutosaveStoreOptions) {
  const dir = path.join(userData, 'autosave');
  const fs = options.fs ?? (nodeFs as unknown as AutosaveFs);
  const now = options.now ?? (() => Date.now());
  const platform = options.platform ?? process.platform;
  const session = options.session;
  const startedAt = now();

  const write = async (file: string, value: unknown) => {
    await fs.mkdir(dir, { recursive: true });
    await atomicWriteFile(path.join(dir, file), JSON.stringify(value), { fs, backup: false, platform });
  };
  const readJson = async (file: string): Promise<unknown> => {
    try {
      return JSON.parse(await fs.readFile(path.join(dir, file), 'utf8'));
    } catch {
      return undefined;
    }
  };
  const names = async (): Promise<string[]> => {
    try {
      return await fs.readdir(dir);
    } catch {
      return [];
    }
  };
  const markSession = (clean: boolean) => write(`${session}${SESSION_SUFFIX}`, { id: session, startedAt, lastSeen: now(), clean } satisfies SessionMarker);

  const readAll = async () => {
    const files = await names();
    const drafts: AutosaveDraft[] = [];
    const sessions: SessionMarker[] = [];
    for (const f of files) {
      if (f.endsWith(DRAFT_SUFFIX)) {
        const d = await readJson(f);
        if (isAutosaveDraft(d) && `${d.key}${DRAFT_SUFFIX}` === f) drafts.push(d);
      } else if (f.endsWith(SESSION_SUFFIX)) {
        const s = await readJson(f);
        if (isSessionMarker(s) && `${s.id}${SESSION_SUFFIX}` === f) sessions.push(s);
      }
    }
    return { drafts, sessions };
  };

  return {
    dir,
    session,
    /** Writes this session's marker (not clean) and forgets markers no draft needs any more. */
    async start(): Promise<void> {
      await markSession(false);
      const { drafts, sessions } = await readAll();
      for (const id of sessionsToForget(sessions, drafts, { currentSession: session, now: now(), staleMs: 0 })) {
        await fs.unlink(path.join(dir, `${id}${SESSION_SUFFIX}`)).catch(() => {});
      }
    },
    /** Keeps the draft of document `key`. */
    async save(key: string, text: string, name: string, docPath?: string): Promise<AutosaveDraft> {
      if (!isDraftKey(key)) throw new Error(`Autosave key "${key}" is not 1–64 letters, digits, "_" or "-".`);
      const draft: AutosaveDraft = { key, name, ...(docPath ? { path: docPath } : {}), text, savedAt: now(), session };
      await write(`${key}${DRAFT_SUFFIX}`, draft);
      return draft;
    },
    async remove(key: string): Promise<void> {
      if (!isDraftKey(key)) return;
      await fs.unlink(path.join(dir, `${key}${DRAFT_SUFFIX}`)).catch(() => {});
    },
    /** Drafts left by earlier sessions that did not close cleanly, newest first. */
    async recoverable(): Promise<AutosaveDraft[]> {
      const { drafts, sessions } = await readAll();
      return triageDrafts(drafts, sessions, { currentSession: session, now: now(), staleMs: 0 }).recoverable;
    },
    /** Marks this session closed cleanly (app quit normally). */
    async finish(): Promise<void> {
      await markSession(true);
    },
  };
}

export type AutosaveStore = ReturnType<typeof createAutosaveStore>;
