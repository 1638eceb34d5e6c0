/**
 * Quadrature rules: Gauss–Legendre nodes (Newton iteration on P_n, Golub–Welsch accuracy ~1e-15) and
 * adaptive Gauss–Kronrod (7/15 points, Kronrod nodes from Piessens et al., QUADPACK, 1983) with an error estimate.
 */

export interface Rule {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
}

const glCache = new Map<number, Rule>();

/** P_n(x) and P_n′(x) by the three-term recurrence (k P_k = (2k−1) x P_{k−1} − (k−1) P_{k−2}). */
function legendre(n: number, x: number): [number, number] {
  let p0 = 1, p1 = x;
  for (let k = 2; k <= n; k++) {
    const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
    p0 = p1;
    p1 = p2;
  }
  if (n === 1) { p1 = x; p0 = 1; }
  return [p1, (n * (x * p1 - p0)) / (x * x - 1)];
}

/** n-point Gauss–Legendre rule on [−1, 1]. */
export function gaussLegendre(n: number): Rule {
  const hit = glCache.get(n);
  if (hit) return hit;
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    for (let it = 0; it < 100; it++) {
      const [p, dp] = legendre(n, x);
      const dx = p / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    const dp = legendre(n, x)[1];
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    const w = 2 / ((1 - x * x) * dp * dp);
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  if (n % 2 === 1) nodes[(n - 1) / 2] = 0;
  const r = { nodes, weights };
  glCache.set(n, r);
  return r;
}

/** Composite Gauss–Legendre nodes on [a, b]: `panels` equal panels of n points each. */
export function compositeRule(a: number, b: number, n: number, panels: number): Rule {
  const g = gaussLegendre(n);
  const nodes = new Float64Array(n * panels);
  const weights = new Float64Array(n * panels);
  const h = (b - a) / panels;
  for (let p = 0; p < panels; p++) {
    const c = a + (p + 0.5) * h;
    for (let i = 0; i < n; i++) {
      nodes[p * n + i] = c + 0.5 * h * g.nodes[i];
      weights[p * n + i] = 0.5 * h * g.weights[i];
    }
  }
  return { nodes, weights };
}

// Gauss–Kronrod 7/15 (QUADPACK qk15), the nodes and weights as published (more digits than a double holds)
/* eslint-disable no-loss-of-precision */
const XGK = [0.991455371120812639206854697526329, 0.949107912342758524526189684047851, 0.864864423359769072789712788640926,
  0.741531185599394439863864773280788, 0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
  0.207784955007898467600689403773245, 0.0];
const WGK = [0.022935322010529224963732008058970, 0.063092092629978553290700663189204, 0.104790010322250183839876322541518,
  0.140653259715525918745189590510238, 0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
  0.204432940075298892414161999234649, 0.209482141084727828012999174891714];
const WG = [0.129484966168869693270611432679082, 0.279705391489276667901467771423780, 0.381830050505118944950369775488975,
  0.417959183673469387755102040816327];
/* eslint-enable no-loss-of-precision */

export interface ComplexIntegral {
  re: number;
  im: number;
  /** Estimated absolute error (|GK15 − G7| summed over panels, QUADPACK-style). */
  error: number;
  /** Integrand evaluations used. */
  evaluations: number;
}

/**
 * Adaptive Gauss–Kronrod integral of a complex integrand f(x) → [re, im] on [a, b], bisecting the
 * panel with the largest error until the total estimate is below max(absTol, relTol·|I|) or maxPanels.
 */
export function integrateAdaptive(
  f: (x: number) => readonly [number, number],
  a: number,
  b: number,
  absTol: number,
  relTol: number = 1e-13,
  maxPanels: number = 2000,
): ComplexIntegral {
  interface Panel { a: number; b: number; re: number; im: number; err: number }
  let evaluations = 0;
  const evalPanel = (lo: number, hi: number): Panel => {
    const c = 0.5 * (lo + hi), h = 0.5 * (hi - lo);
    const [fcr, fci] = f(c);
    evaluations += 15;
    let kr = fcr * WGK[7], ki = fci * WGK[7];
    let gr = fcr * WG[3], gi = fci * WG[3];
    for (let j = 0; j < 7; j++) {
      const dx = h * XGK[j];
      const [r1, i1] = f(c - dx);
      const [r2, i2] = f(c + dx);
      kr += WGK[j] * (r1 + r2);
      ki += WGK[j] * (i1 + i2);
      if (j % 2 === 1) {
        gr += WG[(j - 1) / 2] * (r1 + r2);
        gi += WG[(j - 1) / 2] * (i1 + i2);
      }
    }
    return { a: lo, b: hi, re: kr * h, im: ki * h, err: Math.hypot(kr - gr, ki - gi) * h };
  };
  const panels: Panel[] = [evalPanel(a, b)];
  for (;;) {
    let re = 0, im = 0, err = 0, worst = 0;
    for (let i = 0; i < panels.length; i++) {
      re += panels[i].re;
      im += panels[i].im;
      err += panels[i].err;
      if (panels[i].err > panels[worst].err) worst = i;
    }
    if (err <= Math.max(absTol, relTol * Math.hypot(re, im)) || panels.length >= maxPanels) {
      return { re, im, error: err, evaluations };
    }
    const p = panels[worst];
    const m = 0.5 * (p.a + p.b);
    panels[worst] = evalPanel(p.a, m);
    panels.push(evalPanel(m, p.b));
  }
}
