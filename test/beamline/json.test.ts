import { describe, expect, it } from 'vitest';
import { MAX_DEPTH, parseJson } from '../../src/beamline/json.ts';

describe('parseJson', () => {
  it('reads the same values as JSON.parse', () => {
    const text = '{"a": [1, -2.5e3, true, false, null, "x\\"y\\u00e9"], "b": {"c": {}}, "d": []}';
    const r = parseJson(text);
    expect(r.ok && r.value).toEqual(JSON.parse(text));
  });

  it('names line and column of a syntax error', () => {
    const r = parseJson('{\n  "a": 1,\n  "b" }');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problem.message).toBe('not valid JSON at line 3, column 7: expected ":" after key "b", got "}"');
  });

  it('reports a trailing comma, an unterminated string and text after the document', () => {
    const a = parseJson('{"a": 1,}');
    expect(!a.ok && a.problem.message).toMatch(/line 1, column 9: expected a key/);
    const b = parseJson('{"a": "x');
    expect(!b.ok && b.problem.message).toMatch(/unterminated string/);
    const c = parseJson('{} x');
    expect(!c.ok && c.problem.message).toMatch(/line 1, column 4: unexpected "x" after the end/);
  });

  it('reports duplicate keys with their path', () => {
    const r = parseJson('{"elements": [{"gradient": "1 T/m", "gradient": "2 T/m"}]}');
    expect(r.ok && r.duplicates).toEqual([{ path: 'elements[0].gradient', message: 'key "gradient" appears twice in one object (line 1, column 37)' }]);
  });

  it('keeps "__proto__" as a plain key', () => {
    const r = parseJson('{"__proto__": {"x": 1}}');
    expect(r.ok).toBe(true);
    if (r.ok) {
      expect(Object.keys(r.value as object)).toEqual(['__proto__']);
      expect(Object.getPrototypeOf(r.value)).toBe(Object.prototype);
    }
  });

  it('names the JSON path where a syntax error stands', () => {
    const r = parseJson('{"oven": {"flux": "2e9 /s" "to": "M1"}}');
    expect(!r.ok && r.problem).toEqual({ path: 'oven', message: 'not valid JSON at line 1, column 28: expected "," or "}", got "\\""' });
    const e = parseJson('{"elements": [{"id": "M1"}, {"id": "M2", "gap": "1 cm",]}');
    expect(!e.ok && e.problem.path).toBe('elements[1]');
    const v = parseJson('{"oven": {"velocity": {"points": [[1, 2], [3, ]]}}}');
    expect(!v.ok && v.problem.path).toBe('oven.velocity.points[1][1]');
  });

  it(`refuses nesting deeper than ${MAX_DEPTH} levels at once, at its line and column, and reads ${MAX_DEPTH}`, () => {
    const deep = (n: number) => `${'['.repeat(n)}${']'.repeat(n)}`;
    expect(parseJson(deep(MAX_DEPTH)).ok).toBe(true);
    const r = parseJson(deep(MAX_DEPTH + 1));
    expect(!r.ok && r.problem.message).toBe(`not valid JSON at line 1, column ${MAX_DEPTH + 1}: nested more than ${MAX_DEPTH} levels deep (a beamline is a few levels deep)`);
    const huge = parseJson(`{"a": ${deep(1_000_000)}}`); // would exhaust the stack of a recursive reader
    expect(!huge.ok && huge.problem.message).toMatch(/nested more than 64 levels deep/);
    expect(!huge.ok && huge.problem.path.length).toBeLessThan(300);
  });

  it('quotes a long duplicate key by its two ends, in its message and its path', () => {
    const k = 'k'.repeat(100000);
    const r = parseJson(`{"${k}": 1, "${k}": 2}`);
    expect(r.ok && r.duplicates).toEqual([{
      path: `["${'k'.repeat(28)}…${'k'.repeat(28)}" (100,000 characters)]`,
      message: `key "${'k'.repeat(28)}…${'k'.repeat(28)}" (100,000 characters) appears twice in one object (line 1, column 100009)`,
    }]);
  });

  it('shows a character after an error whole, even outside the Basic Multilingual Plane', () => {
    const r = parseJson('{"a": 1 😀}');
    expect(!r.ok && r.problem.message).toBe('not valid JSON at line 1, column 9: expected "," or "}", got "😀"');
  });
});
