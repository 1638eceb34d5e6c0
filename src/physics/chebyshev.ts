/**
 * Lazily built piecewise Chebyshev interpolants of a smooth complex function on [lo, hi]. Each panel is
 * fitted on first use at the Chebyshev points of the first kind; its last coefficients bound its error
 * (Trefethen, Approximation Theory and Approximation Practice, ch. 4, 8). A panel whose tail is above the
 * tolerance is marked so that callers evaluate the function directly there.
 */
export interface ChebPanel {
  readonly a: number;
  readonly b: number;
  readonly cr: Float64Array;
  readonly ci: Float64Array;
  /** Estimated absolute error of the interpolant on the panel. */
  readonly error: number;
  /** Function evaluations spent on the fit (quadrature nodes of the underlying integrals). */
  readonly nodes: number;
}

/** Chebyshev coefficients of f on [a, b] from n samples at the first-kind points (a DCT-II by sums). */
export function chebFit(f: (x: number) => { re: number; im: number; nodes: number }, a: number, b: number, n: number): ChebPanel {
  const vr = new Float64Array(n), vi = new Float64Array(n);
  let nodes = 0;
  for (let k = 0; k < n; k++) {
    const t = Math.cos((Math.PI * (k + 0.5)) / n);
    const v = f(0.5 * (a + b) + 0.5 * (b - a) * t);
    vr[k] = v.re;
    vi[k] = v.im;
    nodes += v.nodes;
  }
  const cr = new Float64Array(n), ci = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    let sr = 0, si = 0;
    for (let k = 0; k < n; k++) {
      const c = Math.cos((Math.PI * j * (k + 0.5)) / n);
      sr += vr[k] * c;
      si += vi[k] * c;
    }
    const s = (j === 0 ? 1 : 2) / n;
    cr[j] = sr * s;
    ci[j] = si * s;
  }
  const tail = Math.max(Math.hypot(cr[n - 1], ci[n - 1]), Math.hypot(cr[n - 2], ci[n - 2]), Math.hypot(cr[n - 3], ci[n - 3]));
  return { a, b, cr, ci, error: 2 * tail + 1e-16, nodes };
}

/** Clenshaw evaluation of a panel at x. */
export function chebEval(p: ChebPanel, x: number): [number, number] {
  const t = (2 * x - p.a - p.b) / (p.b - p.a);
  const n = p.cr.length;
  let b1r = 0, b1i = 0, b2r = 0, b2i = 0;
  for (let j = n - 1; j >= 1; j--) {
    const r = 2 * t * b1r - b2r + p.cr[j];
    const i = 2 * t * b1i - b2i + p.ci[j];
    b2r = b1r; b2i = b1i;
    b1r = r; b1i = i;
  }
  return [t * b1r - b2r + p.cr[0], t * b1i - b2i + p.ci[0]];
}
