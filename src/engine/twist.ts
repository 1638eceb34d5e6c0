/**
 * The field twist's physics: a field of constant size whose direction turns by θ about k̂ over a length,
 * solved exactly in the rotating frame per speed (docs/design.md, "Field twist"), in closed form for a
 * bare spin; and the speed-by-speed average of the subtree behind the first twist on doubling grids.
 */
import { type CMat, cmatZeros, cmatCombine, cmatSandwichParts, cmatMulInto, cmatMul, cmatDagger, copyF64 } from '../physics/cmat.ts';
import { eigh, expmiHermitian } from '../physics/eigh.ts';
import { expNegI } from '../physics/trig.ts';
import { vecCross, type Vec3 } from '../physics/rotation.ts';
import { oscillationGrid, type VelocityDistribution } from '../physics/velocity.ts';
import type { Element } from '../beamline/types.ts';
import type { SpinSystem } from './system.ts';
import { specAt, specIsStatic, specPhaseWeights, type SpecState } from './spectral.ts';
import { type NodeState, PureNodes, mapNodes, conj } from './nodes.ts';
import type { Walk, WalkCtx } from './steps/step.ts';

export interface TwistOp {
  readonly h1: CMat;
  readonly kGen: CMat;
  readonly angle: number;
  readonly rot: CMat;
  readonly length: number;
  /** Where H₁ = c n̂₁·F (a bare spin): the fixed factors of the closed form (twistRotation). */
  readonly rotation: TwistRotation | null;
}

/**
 * For H₁ = c n̂₁·F the rotating-frame exponent t H₁ − θ k̂·F = α û·F is a rotation generator, with
 * α û = t c n̂₁ − θ k̂ (k̂ ⊥ n̂₁). With n̂₁·F = V₁ diag(m₁) V₁†, q̂·F = V_q diag(m_q) V_q†, q̂ = k̂ × n̂₁
 * (which turns n̂₁ into û by β = atan2(θ, t c)):
 *   exp(−iα û·F) = Q(β) exp(−iα n̂₁·F) Q(β)†,  Q(β) = V_q e^{−iβ m_q} V_q†,
 * so U = R · V_q [e^{−iβ m_q} A e^{−iα m₁} A† e^{iβ m_q}] V_q† with A = V_q†V₁: no eigensolver per speed.
 */
interface TwistRotation {
  readonly c: number;
  readonly m1: Float64Array;
  readonly mq: Float64Array;
  /** A = V_q†V₁ */
  readonly a: CMat;
  /** R·V_q */
  readonly b: CMat;
  /** V_q† */
  readonly vqd: CMat;
}

export function twistRotation(ops: SpinSystem['F'], h1: CMat, n1: Vec3, k: Vec3, rot: CMat): TwistRotation | null {
  const g1 = cmatCombine([[n1.x, ops.jx], [n1.y, ops.jy], [n1.z, ops.jz]]);
  let num = 0, den = 0, big = 0;
  for (let i = 0; i < g1.re.length; i++) {
    num += h1.re[i] * g1.re[i] + h1.im[i] * g1.im[i];
    den += g1.re[i] * g1.re[i] + g1.im[i] * g1.im[i];
    big = Math.max(big, Math.abs(h1.re[i]) + Math.abs(h1.im[i]));
  }
  const c = num / den;
  for (let i = 0; i < g1.re.length; i++) {
    if (Math.abs(h1.re[i] - c * g1.re[i]) + Math.abs(h1.im[i] - c * g1.im[i]) > 1e-12 * big) return null;
  }
  const q = vecCross(k, n1);
  const e1 = eigh(g1), eq = eigh(cmatCombine([[q.x, ops.jx], [q.y, ops.jy], [q.z, ops.jz]]));
  const vqd = cmatDagger(eq.vectors);
  return { c, m1: copyF64(e1.values), mq: copyF64(eq.values), a: cmatMul(vqd, e1.vectors), b: cmatMul(rot, eq.vectors), vqd };
}

/** U = exp(−iθF_k) exp(−i(H₁ t − θ F_k)), t = ℓ/v (docs/design.md, "Field twist": the exact rotating-frame solution), per speed. */
export function applyTwist(st: NodeState, op: TwistOp): NodeState {
  const tr = op.rotation;
  if (tr) {
    const d = tr.a.rows;
    const er = new Float64Array(d), ei = new Float64Array(d), qr = new Float64Array(d), qi = new Float64Array(d);
    const ar = tr.a.re, ai = tr.a.im;
    // per speed: C, then U = B·C·V_q† in arrays of this twist (cr/ci: C, then B·C; ur/ui: U)
    const n = d * d;
    const cr = new Float64Array(n), ci = new Float64Array(n), pr = new Float64Array(n), pi = new Float64Array(n);
    const ur = new Float64Array(n), ui = new Float64Array(n);
    return mapNodes(st, (rho, k) => {
      twistPhases(op, tr, st.speeds[k], er, ei, qr, qi);
      // C_ij = e^{−iβ m_q,i} (Σ_l A_il E_l conj(A_jl)) e^{iβ m_q,j}
      for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) {
        let sr = 0, si = 0;
        for (let l = 0; l < d; l++) {
          const xr = ar[i * d + l] * er[l] - ai[i * d + l] * ei[l], xi = ar[i * d + l] * ei[l] + ai[i * d + l] * er[l];
          const yr = ar[j * d + l], yi = -ai[j * d + l];
          sr += xr * yr - xi * yi;
          si += xr * yi + xi * yr;
        }
        // phase q_i conj(q_j)
        const hr = qr[i] * qr[j] + qi[i] * qi[j], hi = qi[i] * qr[j] - qr[i] * qi[j];
        cr[i * d + j] = sr * hr - si * hi;
        ci[i * d + j] = sr * hi + si * hr;
      }
      cmatMulInto(tr.b.re, tr.b.im, cr, ci, d, d, d, pr, pi);
      cmatMulInto(pr, pi, tr.vqd.re, tr.vqd.im, d, d, d, ur, ui);
      return cmatSandwichParts(ur, ui, d, d, rho);
    });
  }
  return mapNodes(st, (rho, k) => {
    const t = op.length / st.speeds[k];
    const u = cmatMul(op.rot, expmiHermitian(cmatCombine([[t, op.h1], [-op.angle, op.kGen]]), 1));
    return conj(u, rho);
  });
}

/**
 * The closed-form twist of a bare spin for a state that is the same at every speed, ρ = W X W† (W d×r):
 * ρ'(v) = Y X Y† with Y = U W = R V_q Q A E A† Q† (V_q† W), applied to the r columns of W without forming
 * U (3d²r products per speed instead of 5d³; r = 1 behind a port that keeps one state).
 */
export function applyTwistStatic(speeds: Float64Array, weights: Float64Array, w: CMat, x: CMat, op: TwistOp, tr: TwistRotation): NodeState {
  if (w.cols === 1) return applyTwistPure(speeds, weights, w, x, op, tr);
  const d = w.rows, r = w.cols, n = d * r;
  const y0 = cmatMul(tr.vqd, w), ad = cmatDagger(tr.a);
  const er = new Float64Array(d), ei = new Float64Array(d), qr = new Float64Array(d), qi = new Float64Array(d);
  const ur = new Float64Array(n), ui = new Float64Array(n), vr = new Float64Array(n), vi = new Float64Array(n);
  const rhos = new Array<CMat>(speeds.length);
  for (let k = 0; k < speeds.length; k++) {
    twistPhases(op, tr, speeds[k], er, ei, qr, qi);
    // Y = B Q A E A† Q† y0 from the right: rows scaled by the diagonal phases, products into work arrays
    scaleRows(y0.re, y0.im, qr, qi, true, d, r, vr, vi);
    cmatMulInto(ad.re, ad.im, vr, vi, d, d, r, ur, ui);
    scaleRows(ur, ui, er, ei, false, d, r, ur, ui);
    cmatMulInto(tr.a.re, tr.a.im, ur, ui, d, d, r, vr, vi);
    scaleRows(vr, vi, qr, qi, false, d, r, vr, vi);
    cmatMulInto(tr.b.re, tr.b.im, vr, vi, d, d, r, ur, ui);
    // ρ' = Y X Y†
    rhos[k] = cmatSandwichParts(ur, ui, d, r, x);
  }
  return { nodes: true, speeds, weights, rhos };
}

/**
 * applyTwistStatic for a basis of one column (a port that keeps one state): Y = U w a vector, ρ' = x · y y†. The
 * same products in the same order as the general form (its matrix products skip A's zero entries as cmatMulInto
 * does), in one loop over the speeds with no call per product.
 */
function applyTwistPure(speeds: Float64Array, weights: Float64Array, w: CMat, x: CMat, op: TwistOp, tr: TwistRotation): NodeState {
  const d = w.rows;
  const y0 = cmatMul(tr.vqd, w), ad = cmatDagger(tr.a);
  const y0r = y0.re, y0i = y0.im, adr = ad.re, adi = ad.im, a_r = tr.a.re, a_i = tr.a.im, br = tr.b.re, bi = tr.b.im;
  const er = new Float64Array(d), ei = new Float64Array(d), qr = new Float64Array(d), qi = new Float64Array(d);
  const ur = new Float64Array(d), ui = new Float64Array(d), vr = new Float64Array(d), vi = new Float64Array(d);
  const xr = x.re[0], xi = x.im[0];
  const yr = new Float64Array(speeds.length * d), yi = new Float64Array(speeds.length * d);
  for (let k = 0; k < speeds.length; k++) {
    twistPhases(op, tr, speeds[k], er, ei, qr, qi);
    // v = conj(q) ∘ y0
    for (let i = 0; i < d; i++) {
      const cr = qr[i], ci = -qi[i], mr = y0r[i], mi = y0i[i];
      vr[i] = cr * mr - ci * mi;
      vi[i] = cr * mi + ci * mr;
    }
    // u = A† v, then e ∘ u
    matVec(adr, adi, vr, vi, d, ur, ui);
    for (let i = 0; i < d; i++) {
      const cr = er[i], ci = ei[i], mr = ur[i], mi = ui[i];
      ur[i] = cr * mr - ci * mi;
      ui[i] = cr * mi + ci * mr;
    }
    // v = A u, then q ∘ v
    matVec(a_r, a_i, ur, ui, d, vr, vi);
    for (let i = 0; i < d; i++) {
      const cr = qr[i], ci = qi[i], mr = vr[i], mi = vi[i];
      vr[i] = cr * mr - ci * mi;
      vi[i] = cr * mi + ci * mr;
    }
    // y = B v, kept as the node's vector: ρ' = y x y† is formed where something reads it (nodes.ts PureNodes)
    matVec(br, bi, vr, vi, d, ur, ui);
    yr.set(ur, k * d);
    yi.set(ui, k * d);
  }
  return new PureNodes(speeds, weights, d, yr, yi, xr, xi);
}

/** (or, oi) = A·v for A d×d and v of length d, summed as cmatMulInto does (over A's columns, skipping its zero entries). */
function matVec(ar: Float64Array, ai: Float64Array, vr: Float64Array, vi: Float64Array, d: number, or: Float64Array, oi: Float64Array): void {
  for (let i = 0; i < d; i++) {
    let sr = 0, si = 0;
    for (let p = 0; p < d; p++) {
      const xr = ar[i * d + p], xi = ai[i * d + p];
      if (xr === 0 && xi === 0) continue;
      const yr = vr[p], yi = vi[p];
      sr += xr * yr - xi * yi;
      si += xr * yi + xi * yr;
    }
    or[i] = sr;
    oi[i] = si;
  }
}

/** e_l = e^{−iα m₁,l} and q_l = e^{−iβ m_q,l} of the twist's closed form at one speed (t = ℓ/v). */
function twistPhases(op: TwistOp, tr: TwistRotation, speed: number, er: Float64Array, ei: Float64Array, qr: Float64Array, qi: Float64Array): void {
  const tc = (op.length / speed) * tr.c;
  const alpha = Math.sqrt(tc * tc + op.angle * op.angle), beta = Math.atan2(op.angle, tc);
  for (let l = 0; l < er.length; l++) {
    expNegI(alpha * tr.m1[l], er, ei, l);
    expNegI(beta * tr.mq[l], qr, qi, l);
  }
}

/** out = diag(p) · m (or diag(conj p) · m) for m d×r by parts; out may be m itself. */
function scaleRows(mr: ArrayLike<number>, mi: ArrayLike<number>, pr: Float64Array, pi: Float64Array, conjugate: boolean, d: number, r: number, or: Float64Array, oi: Float64Array): void {
  for (let i = 0; i < d; i++) {
    const cr = pr[i], ci = conjugate ? -pi[i] : pi[i];
    for (let c = 0; c < r; c++) {
      const xr = mr[i * r + c], xi = mi[i * r + c];
      or[i * r + c] = cr * xr - ci * xi;
      oi[i * r + c] = cr * xi + ci * xr;
    }
  }
}

/**
 * The first grid of the doubling: levels whose nodes step the fastest phase (the twist's eigenphase
 * spread ℓ·ΔΛ plus the incoming state's largest phase-length, times 1/v) by more than ~2 rad between
 * neighbours cannot have converged, so the doubling starts past them (at most at 64 panels, so that
 * the 64 → 128 change still estimates the error).
 */
function firstPanels(d: VelocityDistribution, st: SpecState, twist: TwistOp): number {
  if (d.kind === 'fixed' || d.kind === 'table') return 8;
  const ev = eigh(twist.h1).values;
  let spread = 0;
  for (let i = 0; i < ev.length; i++) for (let j = 0; j < ev.length; j++) spread = Math.max(spread, ev[i] - ev[j]);
  let phi = spread * twist.length;
  for (const w of specPhaseWeights(st)) phi = Math.max(phi, w.phi);
  const g = oscillationGrid(d, 8, 8);
  let ds = 0;
  for (let k = 1; k < g.speeds.length; k++) ds = Math.max(ds, Math.abs(1 / g.speeds[k] - 1 / g.speeds[k - 1]));
  // at 8 panels the largest step is phi·ds; each doubling halves it
  const limit = Math.min(64, (8 * phi * ds) / 4);
  let panels = 8;
  while (panels * 2 <= limit) panels *= 2;
  return panels;
}

/**
 * From a field twist on, the subtree is averaged speed by speed: on the tabulated speeds (or the one
 * speed) as they are, or on grids uniform in 1/v below the typical speed and in v above it
 * (physics/velocity.ts oscillationGrid), doubled from 2×8 to 2×128 panels of 8 nodes until no leaf
 * yield moves by 1e-11 (the last change is reported as the error, and as a warning above 1e-9).
 */
export function runSampledSubtree(ctx: WalkCtx, e: Element, st: SpecState, twist: TwistOp, walk: Walk): void {
  const d = ctx.dist;
  const exact = d.kind === 'fixed' || d.kind === 'table';
  const to = (e as { to: string }).to;
  let prev: Map<string, number> | null = null;
  // each grid walks the subtree with warnings and lost flux of its own; only the last grid's reach the run, as
  // additions in their order (so that a recorded walk, replay.ts, sees nothing a later grid took back)
  let grid = { warnings: new Set<string>(), lost: [] as number[] };
  const settle = () => {
    for (const w of grid.warnings) ctx.warnings.add(w);
    for (const x of grid.lost) ctx.lost.spin += x;
  };
  for (let panels = firstPanels(d, st, twist); ; panels *= 2) {
    const g = oscillationGrid(d, panels, 8);
    const total = g.weights.reduce((a, b) => a + b, 0);
    const weights = g.weights.map((w) => w / total);
    // a state without phases is the same at every node, ρ = W (Σ_t X_t) W†: the twist's closed form then
    // acts on W's columns; otherwise ρ is formed once and shared by the nodes (nothing mutates a ρ)
    let nodes: NodeState;
    if (specIsStatic(st) && twist.rotation) nodes = applyTwistStatic(g.speeds, weights, st.W, sumTerms(st), twist, twist.rotation);
    else {
      const rho0 = specIsStatic(st) ? specAt(st, g.speeds[0]) : null;
      const rhos: CMat[] = rho0 ? new Array<CMat>(g.speeds.length).fill(rho0) : Array.from(g.speeds, (v) => specAt(st, v));
      nodes = applyTwist({ nodes: true, speeds: g.speeds, weights, rhos }, twist);
    }
    const mark = ctx.leaves.length;
    grid = { warnings: new Set(ctx.warnings), lost: [] };
    const known = new Set(ctx.warnings);
    const lost = grid.lost;
    const sub: WalkCtx = { ...ctx, warnings: grid.warnings, lost: { get spin() { return 0; }, set spin(x: number) { lost.push(x); } } };
    ctx.visit(sub, to, nodes, walk);
    for (const w of known) grid.warnings.delete(w);
    ctx.sampled.nodes += g.speeds.length;
    if (exact) {
      settle();
      return;
    }
    const fresh = ctx.leaves.slice(mark);
    const now = new Map(fresh.map((l, i) => [`${i}|${l.path.join(' ')}|${l.target}`, l.yieldSpin]));
    if (prev) {
      let err = 0, sum = 0;
      for (const [k, y] of now) {
        const dy = Math.abs(y - (prev.get(k) ?? 0));
        err = Math.max(err, dy);
        sum += dy;
      }
      if (err < 1e-11 || panels >= 128) {
        settle();
        ctx.sampled.error += sum;
        if (err >= 1e-9) {
          const u = ctx.sampled.unconverged.get(e.path);
          ctx.sampled.unconverged.set(e.path, { error: Math.max(err, u?.error ?? 0), speeds: g.speeds.length });
        }
        return;
      }
    }
    prev = now;
    ctx.leaves.length = mark;
  }
}

/** Σ_t X_t of a state (r×r): its ρ = W (Σ_t X_t) W† where no term carries a phase. */
function sumTerms(st: SpecState): CMat {
  const r = st.W.cols;
  const out = cmatZeros(r, r);
  for (const t of st.terms) for (let i = 0; i < r * r; i++) {
    out.re[i] += t.X.re[i];
    out.im[i] += t.X.im[i];
  }
  return out;
}
