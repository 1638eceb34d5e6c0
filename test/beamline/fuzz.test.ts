/**
 * The reader under 10,000 mutated documents built from the samples and the reference documents: keys
 * deleted, doubled, retyped and renamed (to near misses and to built-in names such as __proto__,
 * constructor, toString), wrong units, huge and tiny numbers, deep nesting, long strings and keys, the
 * characters invalid UTF-8 decodes to (U+FFFD) and lone surrogates, Unicode dashes, hexadecimal literals,
 * spins beyond the engine, broken JSON text. readBeamlineText must never throw or hang, every problem must
 * carry a path and stay under the caps in the project's words, on one line (control characters and lone
 * surrogates escaped), and an accepted line holds finite numbers only.
 *
 * The seed is printed; SPINYARD_SEED=<seed> repeats a run. The figures of a run (documents, problems, the
 * longest message, the slowest read) are printed for docs/reliability.md ("Reader"). The time guard is
 * a hang guard (over ten times the slowest read measured), not a speed target: speed is the benchmark's.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MESSAGE_MAX, PATH_MAX } from '../../src/beamline/messages.ts';
import { readBeamlineText } from '../../src/beamline/text.ts';
import type { Problem } from '../../src/beamline/types.ts';
import { librarySpecies } from '../../src/beamline/validate.ts';
import { DESIGN_V1, completedBeamKeys } from './examples.ts';
import { prng } from '../prng.ts';

const DOCUMENTS = 10_000;
/**
 * A read slower than this is a hang: the slowest of 10,000 reads measured on the project's 2-core machine took
 * 15–54 ms, and 96–180 ms with the machine loaded by other work (docs/reliability.md); the review's hangs took
 * 31 s and more.
 */
const HANG_GUARD_MS = 2000;

/** mathjs' and JavaScript's own wording, which no message of the reader may show. */
const FOREIGN = /Undefined symbol|Unexpected type of argument|Syntax error in part|\(char \d+\)|Value expected|Units do not match|is no angle|Too (few|many) arguments|Cannot convert|native code|\[object Object\]|function \w*\(|Maximum call stack|undefined is not|Cannot read propert|is not a function|DenseMatrix|Complex\b/;
/** What a one-line message must not hold raw: control characters, line separators, lone surrogates. */
// eslint-disable-next-line no-control-regex -- control characters are what it looks for
const UNPRINTABLE = /[\u0000-\u001f\u007f\u2028\u2029]|[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;
/** Problems of the whole file, which have no JSON path to stand at. */
const WHOLE_FILE = /^(not valid JSON|the file is|a beamline is a JSON object|the reader stopped after)/;


type Json = null | boolean | number | string | Json[] | { [k: string]: Json };
/** An object key written twice when the document is written (JSON allows writing it; the reader must report it). */
const DOUBLED = Symbol('doubled');

const dir = resolve(import.meta.dirname, '..', '..', 'samples');
const BASES: Json[] = [
  ...readdirSync(dir).filter((n) => n.endsWith('.spinyard')).sort().map((n) => JSON.parse(readFileSync(join(dir, n), 'utf8')) as Json),
  JSON.parse(DESIGN_V1) as Json,
  completedBeamKeys() as Json,
];

const BUILTIN = ['__proto__', 'constructor', 'toString', 'valueOf', 'hasOwnProperty', 'isPrototypeOf', 'propertyIsEnumerable', 'toLocaleString', '__defineGetter__', '__lookupSetter__'];
const UNITS = ['m', 'cm', 'mm', 'um', 'nm', 'km', 'T', 'mT', 'uT', 'G', 'kG', 'T/m', 'G/cm', '/s', 'Hz', 'MHz', 'GHz', 's', 'ms', 'min', 'h', 'K', 'degC', 'degF', 'deg', 'rad', 'm/s', 'km/h', 'u', 'kg', 'g', 'furlong', 'Ohm', 'e', 'pi', 'i', 'J', 'N', 'µT', 'μm', 'sec', ''];
const NUMBERS = ['0', '-0', '1', '-1', '1e308', '1e-308', '5e-324', '1e400', '-1e400', '1e-400', '1e9', '1e-9', '1e30', '1e31', '1e-297', '0.1', '999999', '16', '1e7', '31/2', '33/2', '0x10', '0b11', '0o17', '\u22123', '\u20133', '2 e', '2e3', 'NaN', 'Infinity', '1,5', 'sqrt(-1)', '(pi/4)', 'exp(1)', '1/0', '0/0', '10^400', '1e1e1'];
const WEIRD_CHARS = ['\uFFFD', '\uD800', '\uDC00', '\uDBFF\uDFFF', '\u0000', '\u001F', '\u2212', '\u2014', '\u00B5', '\u200B', '\uFEFF', '"', '\\', '😀', '\n', '\u2028'];

/** Every [parent, key] place of a document tree, and every string found. */
function places(root: Json): { parent: Json[] | { [k: string]: Json }; key: string | number }[] {
  const out: { parent: Json[] | { [k: string]: Json }; key: string | number }[] = [];
  const walk = (v: Json) => {
    if (Array.isArray(v)) v.forEach((x, i) => { out.push({ parent: v, key: i }); walk(x); });
    else if (v !== null && typeof v === 'object') for (const k of Object.keys(v)) { out.push({ parent: v, key: k }); walk(v[k]); }
  };
  walk(root);
  return out;
}

function setOwn(o: { [k: string]: Json }, k: string, v: Json): void {
  Object.defineProperty(o, k, { value: v, enumerable: true, writable: true, configurable: true });
}

/** A document that may hold doubled keys, written as JSON text (the writer of the test, not of the project). */
function write(v: Json): string {
  if (v === null || typeof v !== 'object') return JSON.stringify(v) ?? 'null';
  if (Array.isArray(v)) return `[${v.map(write).join(',')}]`;
  const doubled = (v as { [DOUBLED]?: string })[DOUBLED];
  const parts = Object.keys(v).map((k) => `${JSON.stringify(k)}:${write(v[k])}`);
  if (doubled !== undefined && Object.hasOwn(v, doubled)) parts.push(`${JSON.stringify(doubled)}:${write(v[doubled])}`);
  return `{${parts.join(',')}}`;
}

/** One document: a base with 1 to 4 mutations, or its text broken. */
function mutate(rnd: () => number): string {
  const pick = <T>(a: readonly T[]): T => a[Math.floor(rnd() * a.length)];
  const doc = structuredClone(pick(BASES));
  const n = rnd() < 0.5 ? 1 : 2 + Math.floor(rnd() * 3);
  for (let m = 0; m < n; m++) {
    const all = places(doc);
    if (all.length === 0) break;
    const { parent, key } = pick(all);
    const get = (): Json => (parent as Record<string | number, Json>)[key];
    const set = (v: Json) => {
      if (Array.isArray(parent)) parent[key as number] = v;
      else setOwn(parent, key as string, v);
    };
    const old = get();
    switch (Math.floor(rnd() * 18)) {
      case 0: // delete a key or an item
        if (Array.isArray(parent)) parent.splice(key as number, 1);
        else delete parent[key as string];
        break;
      case 1: // double a key
        if (!Array.isArray(parent)) (parent as { [DOUBLED]?: string })[DOUBLED] = key as string;
        else parent.push(structuredClone(old));
        break;
      case 2: // retype
        set(pick<Json>([null, true, false, 0, -1, 1.5, 1e308, '', 'x', [], {}, [1, 2], { kind: 'x' }, '3 cm', 'stop', 'oven']));
        break;
      case 3: // wrong or odd unit
        if (typeof old === 'string') set(`${old.match(/^[-+0-9.eE/ ]*/)?.[0] || '1'} ${pick(UNITS)}`.trim());
        else set(`${pick(NUMBERS)} ${pick(UNITS)}`);
        break;
      case 4: // huge, tiny and odd numbers
        if (typeof old === 'string' && /[a-zA-Z/]/.test(old)) set(`${pick(NUMBERS)} ${old.replace(/^[-+0-9.eE ]*/, '')}`);
        else set(rnd() < 0.5 ? pick([1e308, -1e308, 5e-324, 1e-300, 1e300, 2 ** 53, -0, 1e9, 16, 15.5]) : pick(NUMBERS));
        break;
      case 5: { // deep nesting (up to past the reader's limit)
        let v: Json = old;
        const depth = 1 + Math.floor(rnd() ** 2 * 200);
        for (let d = 0; d < depth; d++) v = rnd() < 0.5 ? [v] : { [pick(['a', 'kind', 'x', '__proto__'])]: v };
        set(v);
        break;
      }
      case 6: { // a long string
        const len = Math.floor(10 ** (1 + rnd() * (rnd() < 0.05 ? 5 : 3.5)));
        const unit = typeof old === 'string' && old !== '' ? old : 'x';
        set(unit.repeat(Math.ceil(len / unit.length)).slice(0, len));
        break;
      }
      case 7: // a long or odd key
        if (!Array.isArray(parent)) {
          const k = rnd() < 0.3 ? 'k'.repeat(Math.floor(10 ** (1 + rnd() * 5))) : `${key}${pick(WEIRD_CHARS)}`;
          setOwn(parent, k, old);
          delete parent[key as string];
        }
        break;
      case 8: // a built-in name as key or value
        if (!Array.isArray(parent) && rnd() < 0.6) setOwn(parent, pick(BUILTIN), rnd() < 0.5 ? old : 1);
        else set(pick(BUILTIN));
        break;
      case 9: // characters invalid UTF-8 decodes to, lone surrogates, controls, dashes
        if (typeof old === 'string') {
          const at = Math.floor(rnd() * (old.length + 1));
          set(old.slice(0, at) + pick(WEIRD_CHARS) + old.slice(at));
        } else set(pick(WEIRD_CHARS));
        break;
      case 10: // a near-miss key (a typo)
        if (!Array.isArray(parent) && typeof key === 'string' && key.length > 1) {
          const i = Math.floor(rnd() * (key.length - 1));
          setOwn(parent, key.slice(0, i) + key[i + 1] + key[i] + key.slice(i + 2), old);
          delete parent[key];
        }
        break;
      case 11: // a spin or a label beyond the species
        set(pick<Json>(['1e9', '1e7', '16', '31/2', 1e300, 15.5, '-1/2', '2/3', 'F=9,mF=+9', 'mJ=+3/2', '+31/2', '*']));
        break;
      case 12: { // a long list (velocity tables, elements)
        const k = Math.floor(10 ** (rnd() * (old !== null && typeof old === 'object' ? 2 : 4)));
        set(Array.from({ length: k }, (_, i) => (rnd() < 0.9 ? structuredClone(old) : i)));
        break;
      }
      case 13: { // routing to somewhere else
        const ids = all.filter((p) => p.key === 'id').map((p) => (p.parent as Record<string, Json>).id).filter((x): x is string => typeof x === 'string');
        set(pick([...ids, 'stop', 'oven', 'nowhere', '']));
        break;
      }
      case 14: // a value moved from elsewhere in the document
        set(structuredClone(pick(all).parent as Json));
        break;
      case 16: case 17: // a plausible value: a number scaled by 10^±6 or negated, the unit kept (accepted lines must hold finite numbers)
        if (typeof old === 'number') set(rnd() < 0.2 ? -old : old * 10 ** (12 * rnd() - 6));
        else if (typeof old === 'string' && /^[-+]?[0-9.]+(e[-+]?\d+)? /.test(old)) {
          const [num, ...unit] = old.split(' ');
          set(`${rnd() < 0.2 ? -Number(num) : Number(num) * 10 ** (12 * rnd() - 6)} ${unit.join(' ')}`);
        }
        break;
      default: // swap with another place's value
        set(structuredClone((() => { const p = pick(all); return (p.parent as Record<string | number, Json>)[p.key]; })()));
    }
  }
  let text = rnd() < 0.3 ? JSON.stringify(doc, null, 2) ?? 'null' : write(doc);
  const r = rnd();
  if (r < 0.04) text = text.slice(0, Math.floor(rnd() * text.length)); // truncated
  else if (r < 0.08) {
    const at = Math.floor(rnd() * text.length);
    text = text.slice(0, at) + pick(['', ',', '}', ']', '"', ':', 'x', '\uFFFD', '\uD800', '\u0000', '{', '[', '1e', '-']) + text.slice(at + 1);
  } else if (r < 0.09) text = `\uFEFF${text}`;
  return text;
}

/** Every number in a normalized line. */
function numbers(v: unknown, out: number[] = []): number[] {
  if (typeof v === 'number') out.push(v);
  else if (v && typeof v === 'object') for (const x of Object.values(v)) numbers(x, out);
  return out;
}

describe('the reader under mutated documents', () => {
  it(`reads ${DOCUMENTS.toLocaleString('en')} mutated documents: no throw, no hang, every problem with a path, capped, in the project's words`, () => {
    const seed = process.env.SPINYARD_SEED ? Number(process.env.SPINYARD_SEED) : Date.now() % 2 ** 31;
    console.log(`reader fuzz: seed ${seed} (SPINYARD_SEED=${seed} repeats this run)`);
    const rnd = prng(seed);
    let problems = 0, accepted = 0, warnings = 0, longest = 0, slowest = 0, slowestBytes = 0, bytes = 0, longestMessage = '';
    const start = performance.now();
    const bad = (i: number, text: string, what: string) => new Error(`document ${i} of seed ${seed}: ${what}\n${text.length > 2000 ? `${text.slice(0, 2000)}…` : text}`);
    const checkProblem = (i: number, text: string, p: Problem) => {
      if (typeof p.path !== 'string' || typeof p.message !== 'string' || p.message === '') throw bad(i, text, `malformed problem ${JSON.stringify(p).slice(0, 300)}`);
      if (p.message.length > MESSAGE_MAX) throw bad(i, text, `message of ${p.message.length} characters`);
      if (p.path.length > PATH_MAX) throw bad(i, text, `path of ${p.path.length} characters`);
      if (FOREIGN.test(p.message)) throw bad(i, text, `foreign words in "${p.path}: ${p.message}"`);
      if (UNPRINTABLE.test(p.message) || UNPRINTABLE.test(p.path)) throw bad(i, text, `an unescaped control character or lone surrogate in ${JSON.stringify(`${p.path}: ${p.message}`)}`);
      if (p.path === '' && !WHOLE_FILE.test(p.message)) throw bad(i, text, `no path for "${p.message}"`);
      if (p.message.length > longest) {
        longest = p.message.length;
        longestMessage = p.path ? `${p.path}: ${p.message}` : p.message;
      }
    };
    for (let i = 0; i < DOCUMENTS; i++) {
      const text = mutate(rnd);
      bytes += text.length;
      const t0 = performance.now();
      let r: ReturnType<typeof readBeamlineText>;
      try {
        r = readBeamlineText(text, librarySpecies);
      } catch (e) {
        throw bad(i, text, `threw ${(e as Error).stack ?? String(e)}`);
      }
      const ms = performance.now() - t0;
      if (ms > slowest) {
        slowest = ms;
        slowestBytes = text.length;
      }
      if (ms > HANG_GUARD_MS) throw bad(i, text, `read in ${ms.toFixed(0)} ms`);
      if (r.ok) {
        accepted++;
        const bad0 = numbers(r.line).find((x) => !Number.isFinite(x));
        if (bad0 !== undefined) throw bad(i, text, `accepted with the number ${bad0} in its line`);
        for (const w of r.warnings) checkProblem(i, text, w);
        warnings += r.warnings.length;
      } else {
        if (r.problems.length === 0) throw bad(i, text, 'refused without a problem');
        for (const p of r.problems) checkProblem(i, text, p);
        problems += r.problems.length;
      }
    }
    const total = performance.now() - start;
    console.log(
      `reader fuzz: ${DOCUMENTS} documents (${(bytes / 1e6).toFixed(1)} MB), ${accepted} accepted (${warnings} warnings), ${DOCUMENTS - accepted} refused with ${problems} problems; `
      + `longest message ${longest} characters; slowest read ${slowest.toFixed(1)} ms (${slowestBytes} characters); all reads ${(total / 1000).toFixed(1)} s`,
    );
    console.log(`reader fuzz: longest message: ${longestMessage}`);
    expect(accepted).toBeGreaterThan(0); // the mutations leave some documents valid: the check of their numbers ran
    expect(DOCUMENTS - accepted).toBeGreaterThan(DOCUMENTS / 2);
  });
});
