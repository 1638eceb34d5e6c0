import { describe, expect, it } from 'vitest';
import { parseJson } from '../../src/beamline/json.ts';

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
});
