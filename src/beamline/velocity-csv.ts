/**
 * A measured velocity distribution read from CSV, as the oven's velocity table takes it (docs/design.md,
 * `oven.velocity`, kind "table"): a column of speeds and a column of weights, named in a header row with the
 * speed's unit in it ("speed (m/s)", "v [km/s]", "speed/m s^-1" is not read: write the unit in brackets).
 *
 * - The header is the first row that is not blank and not a comment (a line starting with "#").
 * - The speed column is the one whose name is "speed", "v", "velocity" or starts with "speed"/"velocity",
 *   the weight column "weight", "w", "flux", "counts", "intensity" or one starting with "weight"/"flux".
 *   Other columns are left alone. The speed column's unit is required; a weight unit, if any, is ignored
 *   (only the ratios of the weights count: the reader normalises them).
 * - Cells are separated by commas, semicolons or tabs (the header's decides); decimal points, not commas.
 * - Speeds must be positive and distinct; rows in decreasing order (a time-of-flight table) are sorted.
 *   Weights must be ≥ 0 with a positive sum.
 * The numbers are kept as written (no float noise): a speed becomes "<cell> <unit>", a weight its number.
 * Every refusal names the line and the column. Part of the core: no DOM, no node:*.
 */
import { parseQuantity } from './units.ts';

export type VelocityCsv =
  | { ok: true; points: [string, number][]; /** what was done that the user should know (sorted rows, columns left alone) */ notes: string[] }
  | { ok: false; message: string };

const SPEED_NAMES = /^(speed|velocity|v)\b|^(speed|velocity)/i;
const WEIGHT_NAMES = /^(weight|w|flux|counts|intensity)\b|^(weight|flux)/i;
const NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?$/i;
/** The most rows a table takes (the engine's exact sums are over every row). */
export const MAX_TABLE_ROWS = 10_000;

/** A header cell split into its name and the unit in brackets: "speed (m/s)" → ["speed", "m/s"]. */
function nameAndUnit(cell: string): { name: string; unit?: string } {
  const m = /^(.*?)\s*[([]\s*([^)\]]*?)\s*[)\]]\s*$/.exec(cell);
  return m ? { name: m[1].trim(), unit: m[2] || undefined } : { name: cell.trim() };
}

function unquote(cell: string): string {
  const t = cell.trim();
  return t.length >= 2 && t.startsWith('"') && t.endsWith('"') ? t.slice(1, -1).replace(/""/g, '"').trim() : t;
}

/** Reads a velocity table from CSV text (see the module's comment). */
export function readVelocityCsv(text: string): VelocityCsv {
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\r|\n/);
  let h = 0;
  while (h < lines.length && (lines[h].trim() === '' || lines[h].trim().startsWith('#'))) h++;
  if (h >= lines.length) return { ok: false, message: 'the file has no header row: write e.g. "speed (m/s),weight" on its first line' };
  const header = lines[h];
  const sep = header.includes('\t') ? '\t' : header.includes(';') ? ';' : ',';
  const cols = header.split(sep).map(unquote).map(nameAndUnit);
  const si = cols.findIndex((c) => SPEED_NAMES.test(c.name));
  const wi = cols.findIndex((c, i) => i !== si && WEIGHT_NAMES.test(c.name));
  const names = cols.map((c) => (c.unit ? `${c.name} (${c.unit})` : c.name)).join(', ');
  if (si < 0) return { ok: false, message: `line ${h + 1}: no speed column in the header (${names}): name one "speed (m/s)"` };
  if (wi < 0) return { ok: false, message: `line ${h + 1}: no weight column in the header (${names}): name one "weight"` };
  const unit = cols[si].unit;
  if (!unit) return { ok: false, message: `line ${h + 1}: the speed column "${cols[si].name}" gives no unit: write it in brackets, e.g. "speed (m/s)"` };
  const factor = parseQuantity(`1 ${unit}`, 'speed', 'unit');
  if (typeof factor !== 'number') return { ok: false, message: `line ${h + 1}: the speed column's unit "${unit}" is not a speed: write e.g. m/s or km/s` };
  const notes: string[] = [];
  const other = cols.filter((_, i) => i !== si && i !== wi).map((c) => c.name).filter((n) => n !== '');
  if (other.length > 0) notes.push(`columns left alone: ${other.join(', ')}`);
  const rows: { speed: string; si: number; weight: number; line: number }[] = [];
  for (let i = h + 1; i < lines.length; i++) {
    const raw = lines[i];
    if (raw.trim() === '' || raw.trim().startsWith('#')) continue;
    const cells = raw.split(sep).map(unquote);
    const at = (col: number, what: string) => `line ${i + 1}, column ${col + 1} (${what})`;
    const s = cells[si] ?? '';
    const w = cells[wi] ?? '';
    if (!NUMBER.test(s)) return { ok: false, message: `${at(si, 'speed')}: ${s === '' ? 'empty' : `"${s}" is not a number`}${/\d,\d/.test(s) ? ' (write decimals with a point)' : ''}` };
    if (!NUMBER.test(w)) return { ok: false, message: `${at(wi, 'weight')}: ${w === '' ? 'empty' : `"${w}" is not a number`}` };
    const v = Number(s) * factor;
    const wt = Number(w);
    if (!Number.isFinite(v) || !(v > 0)) return { ok: false, message: `${at(si, 'speed')}: a speed must be positive, got ${s} ${unit}` };
    if (!Number.isFinite(wt) || wt < 0) return { ok: false, message: `${at(wi, 'weight')}: a weight must be 0 or more, got ${w}` };
    rows.push({ speed: s.replace(/^\+/, ''), si: v, weight: wt, line: i + 1 });
    if (rows.length > MAX_TABLE_ROWS) return { ok: false, message: `line ${i + 1}: more than ${MAX_TABLE_ROWS} rows; a velocity table takes at most ${MAX_TABLE_ROWS}` };
  }
  if (rows.length === 0) return { ok: false, message: `the file has a header (line ${h + 1}) but no rows of numbers` };
  const increasing = rows.every((r, i) => i === 0 || r.si > rows[i - 1].si);
  if (!increasing) {
    rows.sort((a, b) => a.si - b.si);
    for (let i = 1; i < rows.length; i++) {
      if (rows[i].si === rows[i - 1].si) return { ok: false, message: `lines ${rows[i - 1].line} and ${rows[i].line}: the same speed ${rows[i].speed} ${unit} twice; a table lists each speed once` };
    }
    notes.push('rows sorted by increasing speed');
  }
  const sum = rows.reduce((a, r) => a + r.weight, 0);
  if (!(sum > 0)) return { ok: false, message: 'every weight is 0: at least one speed needs a positive weight' };
  return { ok: true, points: rows.map((r) => [`${r.speed} ${unit}`, r.weight]), notes };
}
