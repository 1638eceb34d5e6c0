/**
 * Reading document text, with the species library passed in: size check → JSON (line and column on
 * error, duplicate keys) → migrations → validation (check.ts).
 */
import { beamlineMigrations } from './migrations.ts';
import type { QuantityRead } from './read.ts';
import { checkBeamline } from './check.ts';
import { parseJson } from './json.ts';
import { capProblem, listedProblems } from './messages.ts';
import type { SpeciesResolver } from './speciesDoc.ts';
import type { ParseResult, Problem } from './types.ts';

/** Largest document read by default: 20 MB (a measured velocity table of 10⁵ points is ~5 MB). */
export const DEFAULT_MAX_BYTES = 20 * 1024 * 1024;

export interface ParseOptions {
  /** Size limit in bytes (UTF-8); default DEFAULT_MAX_BYTES. */
  maxBytes?: number;
  /** Receives every quantity read, in document order (parameters.ts). */
  quantities?: QuantityRead[];
}

function mb(n: number): string {
  return `${(n / (1024 * 1024)).toFixed(1)} MB`;
}

/** UTF-8 length of a string, stopping once it exceeds `limit`. */
function utf8Length(s: string, limit: number): number {
  let n = 0;
  for (let i = 0; i < s.length && n <= limit; i++) {
    const c = s.charCodeAt(i);
    if (c < 0x80) n += 1;
    else if (c < 0x800) n += 2;
    else if (c >= 0xd800 && c < 0xdc00) {
      n += 4;
      i++;
    } else n += 3;
  }
  return n;
}

/**
 * The size check alone, for a caller that knows a file's size before reading it (the host should refuse
 * a 50 MB file without loading it). Returns a Problem when `bytes` exceeds the limit.
 */
export function checkSize(bytes: number, maxBytes: number = DEFAULT_MAX_BYTES): Problem | undefined {
  if (bytes <= maxBytes) return undefined;
  return { path: '', message: `the file is ${mb(bytes)}, over the ${mb(maxBytes)} limit for a beamline document; it was not read` };
}

/** Read a beamline from document text; every problem is reported, none thrown. */
export function readBeamlineText(text: string, resolver: SpeciesResolver, opts: ParseOptions = {}): ParseResult {
  const maxBytes = opts.maxBytes ?? DEFAULT_MAX_BYTES;
  // UTF-16 code units never outnumber UTF-8 bytes, so a long string is refused before any scan.
  const size = text.length > maxBytes ? text.length : utf8Length(text, maxBytes);
  const big = checkSize(size, maxBytes);
  if (big) return { ok: false, problems: [text.length > maxBytes ? { path: '', message: `the file is at least ${mb(size)}, over the ${mb(maxBytes)} limit for a beamline document; it was not read` } : big] };
  if (text.trim() === '') return { ok: false, problems: [{ path: '', message: 'the file is empty: a beamline is a JSON object with "format": "spinyard.beamline"' }] };
  const j = parseJson(text);
  if (!j.ok) return { ok: false, problems: [capProblem(j.problem)] };
  const r = checkBeamline(j.value, resolver, beamlineMigrations, opts.quantities);
  if (j.duplicates.length) {
    return { ok: false, problems: listedProblems([...j.duplicates, ...(r.ok ? [] : r.problems)]) };
  }
  return r;
}

