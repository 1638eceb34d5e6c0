/**
 * Counting statistics of a detector, in one place: the engine's result, the app's tables and CSV, the command
 * line and the setup sheet all take their numbers from here (docs/design.md, counting statistics).
 *
 * A detector counts Poisson events: N = R·t with R = S + B the total rate (signal S plus background B) has
 * σ_N = √N (common practice). With the background known (measured apart, or long enough to be negligible in
 * the error), the signal S·t = N − B·t has σ = √((S + B)t), so a relative precision ε on the signal needs
 *   t = (S + B) / (S² ε²)
 * (e.g. G. F. Knoll, Radiation Detection and Measurement, 4th ed., §3.VIII; common practice).
 */

/** Counts in a dwell of `dwell` seconds at `rate` counts/s. */
export function countsIn(rate: number, dwell: number): number {
  return rate * dwell;
}

/** Poisson standard deviation of `counts`. */
export function countSigma(counts: number): number {
  return Math.sqrt(counts);
}

/**
 * The counting time (s) for a relative precision `epsilon` on a signal of `signal` counts/s above a known
 * `background` counts/s: (S + B)/(S² ε²). Infinity when there is no signal or ε ≤ 0.
 */
export function timeToPrecision(signal: number, background: number, epsilon: number): number {
  if (!(signal > 0) || !(epsilon > 0)) return Infinity;
  return (signal + Math.max(background, 0)) / (signal * signal * epsilon * epsilon);
}

/** Signal over background; Infinity for a signal without background, 0 without signal. */
export function signalToBackground(signal: number, background: number): number {
  if (background > 0) return signal / background;
  return signal > 0 ? Infinity : 0;
}
