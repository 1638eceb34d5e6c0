import { describe, expect, it } from 'vitest';
import type { AutosaveDraft } from '../../src/host/contract.ts';
import { isSessionMarker, newSessionId, sessionsToForget, triageDrafts, type SessionMarker } from '../../src/host/drafts.ts';

const draft = (key: string, session: string, savedAt = 1): AutosaveDraft => ({ key, name: `${key}.spinyard`, text: '{}', savedAt, session });
const marker = (id: string, clean: boolean, lastSeen: number): SessionMarker => ({ id, startedAt: 0, lastSeen, clean });

describe('triageDrafts', () => {
  const opts = { currentSession: 'now', now: 100_000, staleMs: 30_000 };
  it('offers drafts of a session that crashed (not clean, silent), newest first', () => {
    const t = triageDrafts([draft('a', 'old', 5), draft('b', 'old', 9)], [marker('old', false, 1_000)], opts);
    expect(t.recoverable.map((d) => d.key)).toEqual(['b', 'a']);
  });
  it('offers drafts whose session marker is missing', () => {
    expect(triageDrafts([draft('a', 'lost')], [], opts).recoverable).toHaveLength(1);
  });
  it('does not offer drafts of the current session, of a clean session, or of one still alive', () => {
    const t = triageDrafts(
      [draft('mine', 'now'), draft('clean', 'c'), draft('alive', 'tab2')],
      [marker('c', true, 0), marker('tab2', false, 95_000)],
      opts,
    );
    expect(t.recoverable).toEqual([]);
    expect(t.current.map((d) => d.key)).toEqual(['mine']);
    expect(t.other.map((d) => d.key).sort()).toEqual(['alive', 'clean']);
  });
  it('with staleMs 0 (one session at a time) any earlier unclean session is dead', () => {
    const t = triageDrafts([draft('a', 'prev')], [marker('prev', false, 100_000)], { ...opts, staleMs: 0 });
    expect(t.recoverable).toHaveLength(1);
  });
});

describe('sessionsToForget', () => {
  it('forgets clean or dead sessions no draft refers to, never the current one', () => {
    const sessions = [marker('now', false, 100_000), marker('c', true, 0), marker('dead', false, 0), marker('alive', false, 99_000), marker('kept', false, 0)];
    const ids = sessionsToForget(sessions, [draft('k', 'kept')], { currentSession: 'now', now: 100_000, staleMs: 30_000 });
    expect(ids.sort()).toEqual(['c', 'dead']);
  });
});

describe('isSessionMarker / newSessionId', () => {
  it('new ids are valid marker ids and differ', () => {
    const a = newSessionId(1_700_000_000_000, () => 0.25);
    const b = newSessionId(1_700_000_000_000, () => 0.75);
    expect(a).not.toBe(b);
    expect(isSessionMarker({ id: a, startedAt: 1, lastSeen: 1, clean: false })).toBe(true);
    expect(isSessionMarker({ id: '../x', startedAt: 1, lastSeen: 1, clean: false })).toBe(false);
    expect(isSessionMarker({ id: a, startedAt: 1, lastSeen: 1 })).toBe(false);
  });
});
