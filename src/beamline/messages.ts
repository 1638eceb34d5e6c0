/**
 * How the reader's messages quote what a document holds, so that every problem stays short whatever the
 * file contains: a long value is shown by its two ends and its length ("abc…xyz (1,048,576 characters)"), a
 * long list by its first items and its count, and every message and path is capped (docs/design.md,
 * "Keys by element kind").
 */
import type { Problem } from './types.ts';

/** Longest message of a problem, in characters (the longest list a library species gives, natural K's 26 states, stays whole). */
export const MESSAGE_MAX = 500;
/** Longest JSON path of a problem, in characters. */
export const PATH_MAX = 240;
/** Longest value quoted whole in a message; a longer one is shown by its two ends. */
export const QUOTE_MAX = 64;
/** Characters kept at each end of an abbreviated value. */
const END = 28;
/** Longest list written out in a message before "… (N in all)". */
export const LIST_MAX = 360;

/** 1048576 → "1,048,576". */
export function groupDigits(n: number): string {
  const s = String(Math.trunc(Math.abs(n)));
  let out = '';
  for (let i = 0; i < s.length; i++) {
    if (i > 0 && (s.length - i) % 3 === 0) out += ',';
    out += s[i];
  }
  return n < 0 ? `-${out}` : out;
}

/** s.slice(0, n) without splitting a surrogate pair. */
function head(s: string, n: number): string {
  const c = s.charCodeAt(n - 1);
  return s.slice(0, c >= 0xd800 && c < 0xdc00 ? n - 1 : n);
}

/** The last n characters of s without splitting a surrogate pair. */
function tail(s: string, n: number): string {
  const c = s.charCodeAt(s.length - n);
  return s.slice(c >= 0xdc00 && c < 0xe000 ? s.length - n + 1 : s.length - n);
}

/** Control characters, line separators and lone surrogates, which a message shows escaped ("\n", "\ud800"). */
// eslint-disable-next-line no-control-regex -- control characters are what it looks for
const UNPRINTABLE = /[\u0000-\u001f\u007f\u2028\u2029]|[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/g;

function escape(s: string): string {
  return s.replace(UNPRINTABLE, (c) => {
    const j = JSON.stringify(c).slice(1, -1); // "\n", "\u0000", "\ud800"; U+2028, U+2029 and DEL come back as they are
    return j.length > 1 ? j : `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`;
  });
}

/** A value as a message shows it unquoted: whole up to QUOTE_MAX characters, else "abc…xyz (N characters)"; control characters escaped. */
export function abbreviate(s: string, max: number = QUOTE_MAX): string {
  if (s.length <= max) return escape(s);
  return `${escape(head(s, END))}…${escape(tail(s, END))} (${groupDigits(s.length)} characters)`;
}

/** A string as a message quotes it (JSON escapes, so no control character reaches a message), abbreviated when long. */
export function quote(s: string): string {
  if (s.length <= QUOTE_MAX) return escape(JSON.stringify(s));
  return `${escape(JSON.stringify(`${head(s, END)}…${tail(s, END)}`))} (${groupDigits(s.length)} characters)`;
}

/** Items joined by `sep`, written out up to LIST_MAX characters, then "… (N in all)"; `total` counts items left out of `items`. */
export function listText(items: readonly string[], sep = ', ', max: number = LIST_MAX, total: number = items.length): string {
  let out = '';
  for (let i = 0; i < items.length; i++) {
    const item = abbreviate(items[i]);
    const next = i === 0 ? item : `${out}${sep}${item}`;
    if (next.length > max && i > 0) return `${out}${sep}… (${groupDigits(total)} in all)`;
    out = next;
  }
  return total > items.length ? `${out}${sep}… (${groupDigits(total)} in all)` : out;
}

/** The message or path cut to `max` characters, the cut marked "…". */
function cap(s: string, max: number): string {
  return s.length <= max ? s : `${head(s, max - 1)}…`;
}

/** A path kept to PATH_MAX characters: its two ends, the middle marked "…". */
function capPath(p: string): string {
  if (p.length <= PATH_MAX) return p;
  const keep = Math.floor((PATH_MAX - 1) / 2);
  return `${head(p, keep)}…${tail(p, keep)}`;
}

/**
 * Problems (and warnings) listed at most. A file with more is far from a beamline; past this the reader stops
 * looking, so a 20 MB file of ten million wrong elements costs neither minutes nor gigabytes.
 */
export const MAX_PROBLEMS = 1000;

/** The list as reported: every entry capped, at most MAX_PROBLEMS of them, and a last line saying the rest was not looked at. */
export function listedProblems(list: readonly Problem[], what = 'problems'): Problem[] {
  if (list.length <= MAX_PROBLEMS) return list.map(capProblem);
  const out = list.slice(0, MAX_PROBLEMS).map(capProblem);
  out.push({ path: '', message: `the reader stopped after ${groupDigits(MAX_PROBLEMS)} ${what}; correct these and read the file again` });
  return out;
}

/** A problem with its message and path within MESSAGE_MAX and PATH_MAX (the net under every message of the reader). */
export function capProblem(p: Problem): Problem {
  if (p.message.length <= MESSAGE_MAX && p.path.length <= PATH_MAX) return p;
  return { path: capPath(p.path), message: cap(p.message, MESSAGE_MAX) };
}
