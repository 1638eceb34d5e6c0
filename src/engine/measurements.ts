/**
 * Measured counts for a fit (docs/design.md, "Fits"): a CSV file, one row per detector reading.
 *
 *   detector,counts,dwell [s],M2.axis.roll [deg]
 *   D1,84113,10,30
 *
 * Columns: `detector` (an id of the line), `counts` (a whole number ≥ 0), optionally `dwell [unit]` (a time; without
 * it each reading lasts its detector's dwell), and one column per set-point that differs between readings, named
 * as a parameter of the line with its unit in brackets (`F1.field.x [mT]`; none for a plain number). Lines that
 * start with "#" and empty lines are skipped; fields may be quoted (RFC 4180). A set-point without a column keeps
 * the document's value.
 */
import { DISPLAY_UNITS } from '../beamline/parameters.ts';
import { quote } from '../beamline/messages.ts';
import { isProblem, parseQuantity } from '../beamline/units.ts';
import { parameter, type Plan } from './plan.ts';
import { RunError } from './run.ts';

export interface Reading {
  /** Line number in the file (1-based), for messages. */
  line: number;
  detector: string;
  counts: number;
  /** Seconds. */
  dwell: number;
  /** The set-points of this reading (parameter name → SI value), the columns of the file. */
  setPoints: Record<string, number>;
}

export interface Measurements {
  readings: Reading[];
  /** The set-point columns: parameter name and the unit of the file. */
  columns: { name: string; unit: string }[];
}

/** The most readings a file may hold. */
export const MAX_READINGS = 100_000;

/** The fields of one CSV line (RFC 4180 quoting; a quoted field may not span lines here). */
export function csvFields(line: string): string[] | string {
  const out: string[] = [];
  let i = 0;
  for (;;) {
    if (line[i] === '"') {
      let v = '';
      i++;
      for (;;) {
        if (i >= line.length) return 'a quoted field is not closed';
        if (line[i] === '"') {
          if (line[i + 1] === '"') {
            v += '"';
            i += 2;
            continue;
          }
          i++;
          break;
        }
        v += line[i++];
      }
      out.push(v);
      if (i === line.length) return out;
      if (line[i] !== ',') return `a quoted field is followed by ${quote(line[i])} instead of a comma`;
      i++;
    } else {
      const j = line.indexOf(',', i);
      if (j < 0) {
        out.push(line.slice(i).trim());
        return out;
      }
      out.push(line.slice(i, j).trim());
      i = j + 1;
    }
  }
}

/** Read measured counts against a compiled line; a RunError names the file, line and column of the first problem. */
export function readMeasurements(text: string, plan: Plan, file = 'the data'): Measurements {
  const fail = (line: number, m: string): never => {
    throw new RunError(`${file} line ${line}: ${m}`);
  };
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/);
  let header: string[] | undefined;
  let headLine = 0;
  const detectors = new Map(plan.line.elements.filter((e) => e.kind === 'detector').map((e) => [e.id, e]));
  const cols: { index: number; name: string; unit: string; factor: number }[] = [];
  let iDet = -1, iCounts = -1, iDwell = -1, dwellFactor = 1;
  const readings: Reading[] = [];
  for (let n = 0; n < lines.length; n++) {
    const raw = lines[n];
    const ln = n + 1;
    if (raw.trim() === '' || raw.trimStart().startsWith('#')) continue;
    const f = csvFields(raw);
    if (typeof f === 'string') fail(ln, f);
    const fields = f as string[];
    if (!header) {
      header = fields;
      headLine = ln;
      fields.forEach((h, index) => {
        const m = /^(.*?)\s*(?:\[(.*)\])?\s*$/.exec(h)!;
        const name = m[1].trim(), unit = (m[2] ?? '').trim();
        const lower = name.toLowerCase();
        if (lower === 'detector') iDet = index;
        else if (lower === 'counts') iCounts = index;
        else if (lower === 'dwell') {
          iDwell = index;
          const r = parseQuantity(`1 ${unit || 's'}`, 'time', `column ${quote(h)}`);
          if (isProblem(r)) fail(ln, `the dwell column's unit ${quote(unit)} is not a time (write "dwell [s]")`);
          dwellFactor = r as number;
        } else {
          let slot;
          try {
            slot = parameter(plan, name);
          } catch (e) {
            fail(ln, `column ${quote(h)}: ${(e as Error).message}`);
          }
          const dim = slot!.dimension;
          let factor = 1;
          if (dim === 'dimensionless') {
            if (unit) fail(ln, `column ${quote(h)}: ${name} is a plain number and takes no unit`);
          } else {
            if (!unit) fail(ln, `column ${quote(h)}: give the unit of ${name} in brackets, e.g. "${name} [${DISPLAY_UNITS[dim].unit}]"`);
            const r = parseQuantity(`1 ${unit}`, dim, `column ${quote(h)}`);
            if (isProblem(r)) fail(ln, `column ${quote(h)}: ${r.message}`);
            factor = r as number;
          }
          if (cols.some((c) => c.name === slot!.name)) fail(ln, `column ${quote(h)}: ${slot!.name} has a column already`);
          cols.push({ index, name: slot!.name, unit, factor });
        }
      });
      if (iDet < 0 || iCounts < 0) fail(ln, `the header needs a "detector" and a "counts" column, got ${fields.map(quote).join(', ')}`);
      continue;
    }
    if (fields.length !== header.length) fail(ln, `${fields.length} fields where the header (line ${headLine}) has ${header.length}`);
    const id = fields[iDet];
    const det = detectors.get(id);
    if (!det || det.kind !== 'detector') fail(ln, `detector ${quote(id)} is not a detector of the line (detectors: ${[...detectors.keys()].join(', ')})`);
    const c = fields[iCounts];
    if (!/^\d+$/.test(c) || !Number.isSafeInteger(Number(c))) fail(ln, `counts: a whole number ≥ 0, got ${quote(c)}`);
    let dwell = det!.kind === 'detector' ? det!.dwell : 1;
    if (iDwell >= 0) {
      const d = Number(fields[iDwell]);
      if (fields[iDwell] === '' || !Number.isFinite(d) || !(d > 0)) fail(ln, `dwell: a positive number, got ${quote(fields[iDwell])}`);
      dwell = d * dwellFactor;
    }
    const setPoints: Record<string, number> = {};
    for (const col of cols) {
      const v = Number(fields[col.index]);
      if (fields[col.index] === '' || !Number.isFinite(v)) fail(ln, `${col.name}: a number${col.unit ? ` in ${col.unit}` : ''}, got ${quote(fields[col.index])}`);
      setPoints[col.name] = v * col.factor;
    }
    readings.push({ line: ln, detector: id, counts: Number(c), dwell, setPoints });
    if (readings.length > MAX_READINGS) fail(ln, `more than ${MAX_READINGS} readings`);
  }
  if (!header) throw new RunError(`${file}: no header line ("detector,counts,…")`);
  if (!readings.length) throw new RunError(`${file}: no readings after the header`);
  return { readings, columns: cols.map((c) => ({ name: c.name, unit: c.unit })) };
}
