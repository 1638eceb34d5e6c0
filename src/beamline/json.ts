/**
 * Strict JSON (RFC 8259) reader for documents: the same values as JSON.parse, plus what JSON.parse does
 * not say: the line and column of a syntax error (in every JavaScript engine alike) and the JSON path where
 * it stands, duplicate keys in one object (JSON.parse keeps the last silently, and a doubled "gradient"
 * must not change physics unseen), and a nesting limit (a beamline is a few levels deep; a file nested
 * thousands of levels is refused at once instead of exhausting the stack).
 */
import { MAX_PROBLEMS, quote } from './messages.ts';
import type { Problem } from './types.ts';

/** Deepest nesting of objects and lists read (a beamline needs 5: oven.velocity.points[i][j]). */
export const MAX_DEPTH = 64;

export type JsonResult = { ok: true; value: unknown; duplicates: Problem[] } | { ok: false; problem: Problem };

class JsonError extends Error {
  constructor(readonly pos: number, message: string, readonly path = '') {
    super(message);
  }
}

/** The JSON path of a stack of keys and indices, written as the checker writes paths (long keys by their two ends). */
function pathOf(segs: readonly (string | number)[]): string {
  let out = '';
  for (const k of segs) {
    if (typeof k === 'number') out += `[${k}]`;
    else if (k.length <= 64 && /^[A-Za-z_$][A-Za-z0-9_$]*$/.test(k)) out += out ? `.${k}` : k;
    else out += `[${quote(k)}]`;
  }
  return out;
}

/** Line and column (both from 1) of a character offset. */
export function lineColumn(text: string, pos: number): { line: number; column: number } {
  let line = 1;
  let start = 0;
  for (let i = 0; i < pos && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      start = i + 1;
    }
  }
  return { line, column: pos - start + 1 };
}

const NUMBER = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;

/** Parse JSON text; on failure the problem names line, column and what was expected. */
export function parseJson(text: string): JsonResult {
  let i = 0;
  const duplicates: Problem[] = [];
  const n = text.length;
  const segs: (string | number)[] = []; // the path of the value being read
  const err = (pos: number, message: string) => new JsonError(pos, message, pathOf(segs));

  const ws = () => {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };
  const describe = (): string => (i >= n ? 'the end of the file' : quote(String.fromCodePoint(text.codePointAt(i)!)));

  const str = (): string => {
    const start = i; // at the opening quote
    i++;
    let plain = true;
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 34) {
        i++;
        const raw = text.slice(start, i);
        if (plain) return raw.slice(1, -1);
        try {
          return JSON.parse(raw) as string;
        } catch {
          throw err(start, 'invalid escape sequence in string');
        }
      }
      if (c === 92) {
        plain = false;
        i += 2;
        continue;
      }
      if (c < 32) throw err(i, 'control character in string (unterminated string?)');
      i++;
    }
    throw err(start, 'unterminated string');
  };

  const value = (depth: number): unknown => {
    ws();
    if (i >= n) throw err(i, 'expected a value, got the end of the file');
    const c = text[i];
    if ((c === '{' || c === '[') && depth >= MAX_DEPTH) throw err(i, `nested more than ${MAX_DEPTH} levels deep (a beamline is a few levels deep)`);
    if (c === '{') {
      i++;
      const obj: Record<string, unknown> = {};
      const seen = new Set<string>();
      ws();
      if (text[i] === '}') {
        i++;
        return obj;
      }
      for (;;) {
        ws();
        if (text[i] !== '"') throw err(i, `expected a key in double quotes, got ${describe()}`);
        const kpos = i;
        const k = str();
        ws();
        if (text[i] !== ':') throw err(i, `expected ":" after key ${quote(k)}, got ${describe()}`);
        i++;
        segs.push(k);
        const v = value(depth + 1);
        if (seen.has(k) && duplicates.length <= MAX_PROBLEMS) {
          const { line, column } = lineColumn(text, kpos);
          duplicates.push({ path: pathOf(segs), message: `key ${quote(k)} appears twice in one object (line ${line}, column ${column})` });
        }
        segs.pop();
        seen.add(k);
        Object.defineProperty(obj, k, { value: v, enumerable: true, writable: true, configurable: true });
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === '}') {
          i++;
          return obj;
        }
        throw err(i, `expected "," or "}", got ${describe()}`);
      }
    }
    if (c === '[') {
      i++;
      const arr: unknown[] = [];
      ws();
      if (text[i] === ']') {
        i++;
        return arr;
      }
      for (;;) {
        segs.push(arr.length);
        arr.push(value(depth + 1));
        segs.pop();
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === ']') {
          i++;
          return arr;
        }
        throw err(i, `expected "," or "]", got ${describe()}`);
      }
    }
    if (c === '"') return str();
    if (text.startsWith('true', i)) {
      i += 4;
      return true;
    }
    if (text.startsWith('false', i)) {
      i += 5;
      return false;
    }
    if (text.startsWith('null', i)) {
      i += 4;
      return null;
    }
    NUMBER.lastIndex = i;
    const m = NUMBER.exec(text);
    if (m && m[0].length > 0) {
      i += m[0].length;
      return Number(m[0]);
    }
    throw err(i, `expected a value, got ${describe()}`);
  };

  try {
    if (text.charCodeAt(0) === 0xfeff) i = 1; // UTF-8 byte order mark
    const v = value(0);
    ws();
    if (i < n) throw err(i, `unexpected ${describe()} after the end of the document`);
    return { ok: true, value: v, duplicates };
  } catch (e) {
    if (e instanceof RangeError) return { ok: false, problem: { path: '', message: 'not valid JSON for a beamline: nested too deeply' } };
    if (!(e instanceof JsonError)) throw e;
    const { line, column } = lineColumn(text, e.pos);
    return { ok: false, problem: { path: e.path, message: `not valid JSON at line ${line}, column ${column}: ${e.message}` } };
  }
}
