// Number formatting for the UI: significant figures, SI lengths, times; the numbers by the one rule of
// src/beamline/numbers.ts (shared with the setup sheet and the command line).

import { durationIn } from './core-adapter.ts';
import { formatValue } from '../beamline/numbers.ts';

/** n to `sig` significant figures by the one number rule; exponent form outside [1e-4, 1e6). */
export function fmt(n: number | undefined, sig = 4): string {
  if (n === undefined || Number.isNaN(n)) return '—';
  return formatValue(n, sig);
}

/**
 * How every chart's axes write their numbers (plotly axis attributes): SI prefixes ("6G", "120M", "2µ"; plotly's
 * default is "6B" for 6e9), the unit in the axis title ("signal rate (/s)" reads "6G" as 6 G/s), no thousands
 * separators. plotly keeps plain numbers while the ticks' magnitude is within 1e-3 … 1e4.
 */
export const AXIS_NUMBERS: Readonly<Record<string, unknown>> = Object.freeze({ exponentformat: 'SI', separatethousands: false });

/** A length in m as mm, cm or m ("3.5 cm"). */
export function fmtLength(m: number): string {
  const a = Math.abs(m);
  if (a === 0) return '0 m';
  if (a < 1e-3) return `${fmt(m * 1e6, 3)} µm`;
  if (a < 1e-2) return `${fmt(m * 1e3, 3)} mm`;
  if (a < 1) return `${fmt(m * 1e2, 3)} cm`;
  return `${fmt(m, 3)} m`;
}

/** A time in s as s, min, h or d. */
export function fmtTime(s: number | undefined): string {
  if (s === undefined || Number.isNaN(s)) return '—';
  if (!Number.isFinite(s)) return '∞';
  return durationIn(s, fmt);
}
