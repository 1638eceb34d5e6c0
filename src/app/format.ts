// Number formatting for the UI: significant figures, SI lengths, times.

import { durationIn } from './core-adapter.ts';

/** n to `sig` significant figures; exponent form outside 1e-3 … 1e6. */
export function fmt(n: number | undefined, sig = 4): string {
  if (n === undefined || Number.isNaN(n)) return '—';
  if (!Number.isFinite(n)) return n > 0 ? '∞' : '−∞';
  if (n === 0) return '0';
  const a = Math.abs(n);
  if (a >= 1e6 || a < 1e-3) return n.toExponential(sig - 1).replace('e+', 'e');
  return Number(n.toPrecision(sig)).toString();
}

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
