/**
 * Scans: the line run for each value of one parameter (a key of one element of the normalized line,
 * SI units), e.g. the x component of a field region's field. Every run is a full engine run; what does
 * not change between points (magnet sortings, species data) is cached by the engine.
 */
import type { Beamline, Element } from '../beamline/types.ts';
import { runLine, RunError, type RunOptions } from './run.ts';
import type { RunResult } from './result.ts';

export interface ScanSpec {
  /** Element id. */
  readonly element: string;
  /** Dotted key inside the normalized element, e.g. "field.x", "axis" (for an axis pass a vector), "gap". */
  readonly key: string;
  readonly values: readonly unknown[];
}

/** The line with one key of one element replaced (the line itself is not changed). */
export function withParameter(line: Beamline, element: string, key: string, value: unknown): Beamline {
  const idx = line.elements.findIndex((e) => e.id === element);
  if (idx < 0) throw new RunError(`scan: no element "${element}"`);
  const elements = line.elements.slice();
  elements[idx] = replaced(line.elements[idx], key.split('.'), 0, value, element) as Element;
  return { ...line, elements };
}

/** obj with the key path parts[i…] set to value (copies along the path; a module-level function, not a closure per point). */
function replaced(obj: unknown, parts: readonly string[], i: number, value: unknown, element: string): unknown {
  if (i === parts.length) return value;
  if (obj === null || typeof obj !== 'object' || !(parts[i] in obj)) throw new RunError(`scan: ${element} has no key "${parts.slice(0, i + 1).join('.')}"`);
  return { ...(obj as Record<string, unknown>), [parts[i]]: replaced((obj as Record<string, unknown>)[parts[i]], parts, i + 1, value, element) };
}

export function runScan(line: Beamline, spec: ScanSpec, opts: RunOptions = {}): RunResult[] {
  const out: RunResult[] = [];
  spec.values.forEach((v, i) => {
    if (opts.isCancelled?.()) throw new RunError('scan: cancelled');
    // the table-resolution check and the velocity plot are done at the two ends of the scan
    const light = i > 0 && i < spec.values.length - 1;
    out.push(runLine(withParameter(line, spec.element, spec.key, v), { ...opts, onProgress: undefined, light }));
    opts.onProgress?.((i + 1) / spec.values.length);
  });
  return out;
}
