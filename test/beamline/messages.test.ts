/** How messages quote long values and lists, and the caps on every message, path and problem count. */
import { describe, expect, it } from 'vitest';
import {
  MAX_PROBLEMS, MESSAGE_MAX, PATH_MAX, QUOTE_MAX, abbreviate, capProblem, groupDigits, listText, listedProblems, quote,
} from '../../src/beamline/messages.ts';

describe('quoting values in messages', () => {
  it('quotes a short value whole, with JSON escapes', () => {
    expect(quote('gradeint')).toBe('"gradeint"');
    expect(quote('a"b\n')).toBe('"a\\"b\\n"');
    expect(quote('x'.repeat(QUOTE_MAX))).toBe(`"${'x'.repeat(QUOTE_MAX)}"`);
  });
  it('shows a long value by its two ends and its length: "abc…xyz (1,048,576 characters)"', () => {
    const s = `abc${'k'.repeat(1024 * 1024 - 6)}xyz`;
    const q = quote(s);
    expect(q).toMatch(/^"abck+…k+xyz" \(1,048,576 characters\)$/);
    expect(q.length).toBeLessThan(100);
    expect(abbreviate(s)).toMatch(/^abck+…k+xyz \(1,048,576 characters\)$/);
  });
  it('never splits a surrogate pair at a cut', () => {
    const s = `a${'😀'.repeat(100)}b`; // 202 UTF-16 units: a naive cut after 28 units falls inside a pair
    const a = abbreviate(s);
    expect(a).toMatch(/^a(?:😀)+…(?:😀)+b \(202 characters\)$/u);
    expect(a).not.toMatch(/[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/); // no lone surrogate
  });
  it('escapes control characters, line separators and lone surrogates, so a message stays on one line', () => {
    expect(abbreviate('a\nb\u0000c')).toBe('a\\nb\\u0000c');
    expect(abbreviate('\u2028\u007f')).toBe('\\u2028\\u007f');
    expect(abbreviate('x\ud800y\udc00')).toBe('x\\ud800y\\udc00');
    expect(abbreviate('😀')).toBe('😀');
    expect(quote('a\u2029b')).toBe('"a\\u2029b"');
    expect(abbreviate(`\n${'k'.repeat(100)}\n`)).toMatch(/^\\nk+…k+\\n \(102 characters\)$/);
  });
  it('groups digits by thousands', () => {
    expect(groupDigits(0)).toBe('0');
    expect(groupDigits(999)).toBe('999');
    expect(groupDigits(1000)).toBe('1,000');
    expect(groupDigits(1048576)).toBe('1,048,576');
  });
});

describe('lists in messages', () => {
  it('writes a short list whole', () => {
    expect(listText(['+1/2', '-1/2'])).toBe('+1/2, -1/2');
  });
  it('ends a long list with its count', () => {
    const ids = Array.from({ length: 100000 }, (_, i) => `D${i}`);
    const t = listText(ids);
    expect(t).toMatch(/^D0, D1, D2, .*, … \(100,000 in all\)$/);
    expect(t.length).toBeLessThan(400);
  });
});

describe('caps', () => {
  it('cuts a message past MESSAGE_MAX and a path past PATH_MAX, marking the cut', () => {
    const p = capProblem({ path: `a.${'b'.repeat(1000)}.c`, message: 'm'.repeat(10000) });
    expect(p.message).toHaveLength(MESSAGE_MAX);
    expect(p.message.endsWith('…')).toBe(true);
    expect(p.path.length).toBeLessThanOrEqual(PATH_MAX);
    expect(p.path).toMatch(/^a\.b+…b+\.c$/);
  });
  it('leaves a problem within the caps as it is', () => {
    const p = { path: 'oven.flux', message: 'the flux must not be negative, got -1 /s' };
    expect(capProblem(p)).toBe(p);
  });
  it(`lists at most ${MAX_PROBLEMS} problems and says the reader stopped`, () => {
    const many = Array.from({ length: MAX_PROBLEMS + 5 }, (_, i) => ({ path: `elements[${i}]`, message: 'expected an element object, got number 1' }));
    const out = listedProblems(many);
    expect(out).toHaveLength(MAX_PROBLEMS + 1);
    expect(out[MAX_PROBLEMS]).toEqual({ path: '', message: 'the reader stopped after 1,000 problems; correct these and read the file again' });
    expect(listedProblems(many.slice(0, 3))).toEqual(many.slice(0, 3));
  });
});
