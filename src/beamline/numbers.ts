/**
 * How a result's numbers are shown: the one rule of the app's tables and CSV export, the setup sheet and the
 * command line. The result itself (result format v1, `spinyard run --json`) keeps every number at full
 * precision; only what a person reads is rounded here.
 *
 * - Round-off is 0: a yield or fraction of the oven flux below ROUND_OFF, the engine's stated round-off, is
 *   written 0 (and a rate below ROUND_OFF × the oven flux, counts below ROUND_OFF × flux × dwell).
 * - A fixed number of significant figures per kind of column (FIGURES), trailing zeros dropped.
 * - A stated error bounds the figures: a value is written no finer than the place of the error's leading
 *   digit (an estimated quadrature error is an order of magnitude, not a standard deviation); counts ± σ
 *   give σ to 2 figures and the counts to the same decimal place. Zeros up to that place are kept.
 * - Equal values print equally: a number is first taken to 12 significant figures (what the engine's
 *   round-off supports; binary noise such as 9374999.999999998 against 9375000.000000002 sits beyond it),
 *   then rounded half away from zero on its decimal digits, never on the binary value.
 * - One notation per column: plain when every value of the column lies in [1e-4, 1e6), otherwise every
 *   value with an exponent ("1.12e7" and "8.08e5", never "808000" beside "1.12e7").
 * Part of the core (no DOM, no node:*): the renderer, the sheet and the CLI import it.
 */

/**
 * The engine's stated round-off, as a fraction of the oven flux: its balance check holds Σ yields + lost = 1
 * within 1e-12 (src/engine/run.ts) and `roundOffFloor` (src/engine/detector-plane.ts) takes a yield down to
 * −1e-12 as 0. A fraction of the flux below it cannot be told from round-off: bench H's 3.5e-33, bench D's lost
 * 2.8e-16 and bench G's lost 1.2e-15 are all sums of differences of traces that cancel.
 */
export const ROUND_OFF = 1e-12;

/** Significant figures per kind of column. */
export const FIGURES = {
  /** fractions of the oven flux: yields, lost, a detector's yield */
  yield: 6,
  /** counts/s: signal, background, total, atoms/s absorbed at a stop */
  rate: 4,
  /** ratios a person compares by eye: S/B, crosstalk fractions, overlaps, captured fractions */
  ratio: 3,
  /** positions and spreads on the detector plane */
  length: 4,
  /** a standard deviation beside its value */
  sigma: 2,
} as const;

export type NumberKind = keyof typeof FIGURES;

/** The largest significant figures the rule ever prints (beyond them is round-off). */
const CLEAN = 12;

/** A rounded number before it is written: value = ±0.d₁d₂… × 10^(exp+1), i.e. d₁.d₂… × 10^exp. */
export interface Rounded {
  neg: boolean;
  /** Significant digits ("" for zero). */
  digits: string;
  /** Power of ten of the first digit. */
  exp: number;
  /** The last digit stands at this power of ten (zeros up to it are significant and kept). */
  last: number;
}

const ZERO: Rounded = { neg: false, digits: '', exp: 0, last: 0 };

/** x to CLEAN significant decimal digits: sign, digits and the power of ten of the first. */
function decimal(x: number): { neg: boolean; digits: string; exp: number } {
  const [m, e] = Math.abs(x).toExponential(CLEAN - 1).split('e');
  return { neg: x < 0, digits: m.replace('.', ''), exp: Number(e) };
}

/** The first n digits of `digits` (power of ten `exp` for the first), rounded half away from zero; n may exceed the digits. */
function cut(neg: boolean, digits: string, exp: number, n: number): Rounded {
  if (n <= 0) {
    // the value is below the last place kept: 0, or one unit of that place when it is at least half of it
    const place = exp - n + 1;
    return n === 0 && Number(digits[0]) >= 5 ? { neg, digits: '1', exp: place, last: place } : { ...ZERO, last: place };
  }
  const last = exp - n + 1;
  if (n >= digits.length) return { neg, digits: digits.padEnd(n, '0'), exp, last };
  const kept = digits.slice(0, n).split('').map(Number);
  if (Number(digits[n]) >= 5) {
    let i = n - 1;
    while (i >= 0 && kept[i] === 9) kept[i--] = 0;
    if (i < 0) {
      // 9.96 to the units place is 10: one more digit, the last place unchanged
      kept.unshift(1);
      exp += 1;
    } else kept[i] += 1;
  }
  return { neg, digits: kept.join(''), exp, last };
}

/** Drops trailing zeros (they carry no meaning where no error says how far the figures go). */
function trim(r: Rounded): Rounded {
  const digits = r.digits.replace(/0+$/, '');
  return digits === '' ? { ...ZERO } : { ...r, digits, last: r.exp - digits.length + 1 };
}

/** x to `figures` significant figures, trailing zeros dropped. */
export function roundToFigures(x: number, figures: number): Rounded {
  if (x === 0 || !Number.isFinite(x)) return { ...ZERO };
  const d = decimal(x);
  return trim(cut(d.neg, d.digits, d.exp, Math.min(figures, CLEAN)));
}

/** x rounded to the power of ten `place` (its last digit there), zeros up to that place kept. */
export function roundToPlace(x: number, place: number): Rounded {
  if (x === 0 || !Number.isFinite(x)) return { ...ZERO, last: place };
  const d = decimal(x);
  return cut(d.neg, d.digits, d.exp, d.exp - place + 1);
}

/** The power of ten of a positive number's first significant digit (after taking it to CLEAN figures). */
export function leadingPlace(x: number): number {
  return decimal(x).exp;
}

export type Notation = 'plain' | 'exponent';

/** Plain when every non-zero value lies in [1e-4, 1e6), else exponent form for all. */
export function notationOf(values: readonly Rounded[]): Notation {
  return values.every((r) => r.digits === '' || (r.exp >= -4 && r.exp < 6)) ? 'plain' : 'exponent';
}

/** A rounded number in the notation given; `minus` is the sign written for a negative value. */
export function writeRounded(r: Rounded, notation: Notation, minus = '-'): string {
  if (r.digits === '') return '0';
  const sign = r.neg ? minus : '';
  if (notation === 'exponent') {
    const m = r.digits.length > 1 ? `${r.digits[0]}.${r.digits.slice(1)}` : r.digits;
    return `${sign}${m}e${r.exp}`;
  }
  if (r.exp < 0) return `${sign}0.${'0'.repeat(-r.exp - 1)}${r.digits}`;
  const int = r.digits.slice(0, r.exp + 1).padEnd(r.exp + 1, '0');
  const frac = r.digits.slice(r.exp + 1);
  return `${sign}${int}${frac ? `.${frac}` : ''}`;
}

/** What the rule needs to know about one value. */
export interface NumberSpec {
  /** Significant figures at most (FIGURES). */
  figures: number;
  /** Magnitudes below this are round-off and written 0 (ROUND_OFF for fractions of the flux, ROUND_OFF × flux for rates). */
  floor?: number;
  /** A stated absolute error: the value is written no finer than the place of its leading digit. */
  error?: number;
}

/** x rounded by the rule (round-off floor, figures, stated error), not yet written. */
export function roundValue(x: number, spec: NumberSpec): Rounded {
  if (x === 0 || !Number.isFinite(x)) return { ...ZERO };
  if (spec.floor !== undefined && Math.abs(x) < spec.floor) return { ...ZERO };
  const byFigures = roundToFigures(x, spec.figures);
  if (spec.error === undefined || !(spec.error > 0) || !Number.isFinite(spec.error)) return byFigures;
  const place = leadingPlace(spec.error);
  const d = decimal(x);
  // the figures allow no finer than d.exp − figures + 1; the error no finer than its place
  if (d.exp - spec.figures + 1 >= place) return byFigures;
  return roundToPlace(x, place);
}

/** Not a number to show: "—" style text of the caller for undefined, ∞ for an unbounded value. */
function special(x: number, minus: string): string | undefined {
  if (Number.isNaN(x)) return '–';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : `${minus}∞`;
  return undefined;
}

/** One number by the rule, in its own notation (a value outside a column: a note, a title, a hover). */
export function formatValue(x: number, spec: NumberSpec | number, minus = '-'): string {
  const s = typeof spec === 'number' ? { figures: spec } : spec;
  return special(x, minus) ?? writeRounded(roundValue(x, s), notationOf([roundValue(x, s)]), minus);
}

/**
 * A column of numbers by the rule, in one notation; `undefined` cells come back as `blank`. `spec` is one
 * spec for every cell or one per cell (cells of one column may have their own floors and errors).
 */
export function formatColumn(values: readonly (number | undefined)[], spec: NumberSpec | readonly NumberSpec[], opts: { blank?: string; minus?: string } = {}): string[] {
  const minus = opts.minus ?? '-';
  const specOf = (i: number) => (Array.isArray(spec) ? (spec as readonly NumberSpec[])[i] : (spec as NumberSpec));
  const rounded = values.map((x, i) => (x === undefined || !Number.isFinite(x) ? undefined : roundValue(x, specOf(i))));
  const notation = notationOf(rounded.filter((r): r is Rounded => r !== undefined));
  return values.map((x, i) => {
    if (x === undefined) return opts.blank ?? '';
    return special(x, minus) ?? writeRounded(rounded[i]!, notation, minus);
  });
}

/**
 * A column whose rows are quantities of different kinds (a table with a row per parameter: an angle in deg beside a
 * flux in /s): the rule per column applied to the rows of each unit together, so the degrees share one notation and
 * the fluxes theirs (never "3e1 deg" because a flux in the same column needs an exponent).
 */
export function formatByUnit(values: readonly (number | undefined)[], spec: NumberSpec | readonly NumberSpec[], units: readonly string[], opts: { blank?: string; minus?: string } = {}): string[] {
  const out: string[] = new Array<string>(values.length);
  for (const unit of new Set(units)) {
    const rows = units.flatMap((u, i) => (u === unit ? [i] : []));
    const cells = formatColumn(rows.map((i) => values[i]), Array.isArray(spec) ? rows.map((i) => (spec as readonly NumberSpec[])[i]) : (spec as NumberSpec), opts);
    rows.forEach((i, k) => (out[i] = cells[k]));
  }
  return out;
}

/**
 * Values with their σ or error, read as "value ± σ" in one cell: the values as one column (no finer than each
 * one's σ), the σ to 2 figures, written with exponents where the values are (never "8.51e7 ± 420000"), plain where
 * the values are plain and the σ fit. Rows are grouped by unit as `formatByUnit` does. `minus` as formatColumn.
 */
export function valueSigmaColumns(values: readonly (number | undefined)[], sigmas: readonly (number | undefined)[], figures: number,
  units: readonly string[] = values.map(() => ''), opts: { blank?: string; minus?: string } = {}): { value: string[]; sigma: string[] } {
  const blank = opts.blank ?? '';
  const value: string[] = new Array<string>(values.length);
  const sigma: string[] = new Array<string>(values.length);
  const good = (x: number | undefined): x is number => x !== undefined && Number.isFinite(x);
  for (const unit of new Set(units)) {
    const rows = units.flatMap((u, i) => (u === unit ? [i] : []));
    const rv = rows.map((i) => (good(values[i]) ? roundValue(values[i]!, { figures, ...(good(sigmas[i]) && sigmas[i]! > 0 ? { error: sigmas[i] } : {}) }) : undefined));
    // a σ below the round-off of its value (ROUND_OFF of it: a derivative that is exact, as the signal's in the flux)
    // is round-off itself and written 0
    const rs = rows.map((i) => (!good(sigmas[i]) ? undefined
      : good(values[i]) && Math.abs(sigmas[i]!) < ROUND_OFF * Math.abs(values[i]!) ? roundToFigures(0, FIGURES.sigma) : roundToFigures(sigmas[i]!, FIGURES.sigma)));
    const shownValues = rv.filter((r): r is Rounded => r !== undefined);
    const shownSigmas = rs.filter((r): r is Rounded => r !== undefined);
    const nv = notationOf(shownValues);
    const ns = nv === 'exponent' ? 'exponent' : notationOf(shownSigmas);
    rows.forEach((i, k) => {
      value[i] = rv[k] ? writeRounded(rv[k]!, nv, opts.minus) : blank;
      sigma[i] = rs[k] ? writeRounded(rs[k]!, ns, opts.minus) : blank;
    });
  }
  return { value, sigma };
}

/** Said under a table of derivatives where one's error is written 0 (valueSigmaColumns: below its round-off). */
export const ROUND_OFF_DERIVATIVE_NOTE = '± 0: the derivatives at both step sizes agree to round-off (the signal is linear in that set-point over its tolerance).';

/** Counts with their standard deviation, and what the rule needs about them. */
export interface CountsCell {
  counts: number;
  sigma: number;
  /** Counts below this are round-off (ROUND_OFF × flux × dwell). */
  floor?: number;
  /** A stated absolute error of the counts (the yield's error carried to counts). */
  error?: number;
}

/**
 * A column of "counts ± σ": σ to 2 significant figures and the counts to the same decimal place (or to the
 * place of a stated error where it is coarser), in one notation for the column; counts of round-off are "0 ± 0".
 */
export function formatCountsColumn(cells: readonly (CountsCell | undefined)[], opts: { blank?: string; minus?: string } = {}): string[] {
  const minus = opts.minus ?? '-';
  const pairs = cells.map((c) => {
    if (!c || !Number.isFinite(c.counts) || !Number.isFinite(c.sigma)) return undefined;
    if (c.counts === 0 || (c.floor !== undefined && Math.abs(c.counts) < c.floor)) return { value: { ...ZERO }, sigma: { ...ZERO } };
    if (!(c.sigma > 0)) return { value: roundValue(c.counts, { figures: FIGURES.rate, error: c.error }), sigma: { ...ZERO } };
    const s = roundToFigures(c.sigma, FIGURES.sigma);
    const sigma = roundToPlace(c.sigma, s.exp - FIGURES.sigma + 1);
    let place = sigma.last;
    if (c.error !== undefined && c.error > 0 && Number.isFinite(c.error)) place = Math.max(place, leadingPlace(c.error));
    return { value: roundToPlace(c.counts, place), sigma };
  });
  const notation = notationOf(pairs.flatMap((p) => (p ? [p.value] : [])));
  return pairs.map((p) => {
    if (!p) return opts.blank ?? '';
    const v = writeRounded(p.value, notation, minus);
    const s = writeRounded(p.sigma, notation === 'plain' ? notationOf([p.sigma]) : 'exponent', minus);
    return `${v} ± ${s}`;
  });
}

/** True when x, a part of `scale` (1 for a fraction of the oven flux, the flux for a rate), is round-off. */
export function isRoundOff(x: number, scale = 1): boolean {
  return x !== 0 && Math.abs(x) < ROUND_OFF * Math.abs(scale);
}

/**
 * A number for a CSV cell by the rule at full precision: round-off (below `floor`) as 0, then 12 significant
 * figures (what the engine's round-off supports, so no binary noise such as 0.37499999999999967), written as
 * the shortest number that reads back as that value (675000000, 2.5e-11); "" for none, "inf"/"-inf"/"nan" for a
 * value that is not finite.
 */
export function csvValue(x: number | undefined, floor?: number): string {
  if (x === undefined) return '';
  if (!Number.isFinite(x)) return x > 0 ? 'inf' : x < 0 ? '-inf' : 'nan';
  return String(Number(formatValue(x, { figures: CLEAN, floor })));
}

/**
 * The unit of a budget's ∂S/∂p, S a signal in counts/s, by the parameter's shown unit (parameters.ts DISPLAY_UNITS):
 * counts/s per that unit; none for a rate (counts/s per atom/s of the oven's flux is counts per atom, a plain number);
 * counts/s for a plain-number parameter (an efficiency).
 */
export function derivativeUnit(unit: string): string {
  if (unit === '/s') return '';
  return unit ? `/s per ${unit}` : '/s';
}
