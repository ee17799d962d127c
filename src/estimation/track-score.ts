/**
 * The exact gradient (score) of a segment's innovation log-likelihood with respect to the model's
 * noise parameters, from one forward filter and one RTS smoother pass, by Fisher's identity:
 *   ∇θ log p(y | θ) = E[∇θ log p(x, y | θ) | y],
 * the expectation of the complete-data score under the smoothing posterior (Shumway & Stoffer,
 * "An approach to time series smoothing and forecasting using the EM algorithm", J. Time Series
 * Analysis 3(4):253–264, 1982, eq. for the expected complete-data log-likelihood; Cappé, Moulines &
 * Rydén, "Inference in Hidden Markov Models", Springer 2005, §10.2.4, Fisher's identity). The
 * smoothed moments come from the RTS recursion (Rauch, Tung, Striebel 1965) and the lag-one
 * cross-covariance Cov(xₖ₊₁, xₖ | y) = Pˢₖ₊₁ Gₖᵀ (Särkkä, "Bayesian Filtering and Smoothing" 2013,
 * Theorem 12.8 / eq. 12.47, from memory).
 * The case it covers is the calibration's second round: every axis the constant-velocity model with
 * a Gauss–Markov fix error (n = 3, x = [p, v, b], models/axis-model.ts), no process-noise scale, no
 * re-acquisition, and every fix either used without gate (use 2) or not at all (use 0), so the
 * likelihood is smooth in θ. Per axis it returns ∂ℓ/∂log q, ∂ℓ/∂log σ_b, ∂ℓ/∂log τ and, per epoch,
 * ∂ℓ/∂log Rₖ; the caller maps these to its own parameters (the white sigma scales every Rₖ, the
 * quality-column exponents move log Rₖ by their terms).
 * The complete-data log-density per axis (x₀ ~ N(m₀, P₀) with the Gauss–Markov prior variance σ_b²):
 *   ℓ = −½ log σ_b² − ½ E[b₀²]/σ_b² + Σₖ [−½ log|Qₖ| − ½ tr(Qₖ⁻¹ Mₖ)] + Σ_fixes [−½ log Rₖ − ½ Eₖ/Rₖ]
 * with Mₖ = E[(xₖ − F xₖ₋₁)(xₖ − F xₖ₋₁)ᵀ | y] and Eₖ = E[(zₖ − pₖ − bₖ)² | y]. F and Q are block
 * diagonal (kinematic ⊕ Gauss–Markov), so the kinematic block gives the q term and the scalar
 * Gauss–Markov block the σ_b and τ terms.
 */
import type { AxisModel } from '../models/axis-model.js';
import { sameHorizontalInputs, type FilterOptions, type SegmentData } from './track-filter.js';
import { rtsState3From, rtsStep3pFrom } from './kalman3.js';
import { NumericalError } from '../errors.js';

/** The score of one axis: derivatives of the log-likelihood with respect to log q, log σ_b, log τ. */
export interface AxisScore {
  dLogQ: number;
  dLogSigmaB: number;
  dLogTau: number;
}

export interface TrackScore {
  logLik: number;
  axes: AxisScore[];
  /** Per axis, per epoch: ∂ℓ/∂log Rₖ (0 where the axis has no fix used). */
  dLogR: Float64Array[];
}

/** Buffers of trackScore for one segment size (reused across evaluations of the same segment). */
export interface ScoreWork {
  N: number;
  /** Per axis: filtered and smoothed states (3 an epoch). */
  xf: Float64Array[];
  xs: Float64Array[];
  /** Per axis: filtered, predicted (epoch k from k − 1) and smoothed covariances (6 an epoch, packed upper triangle); an axis sharing another's covariance leaves its own unused. */
  Pf: Float64Array[];
  Pp: Float64Array[];
  Ps: Float64Array[];
  dLogR: Float64Array[];
  F: Float64Array;
  Q: Float64Array;
  gT: Float64Array;
}

export function makeScoreWork(models: AxisModel[], N: number): ScoreWork {
  const per = (n: number) => models.map(() => new Float64Array(n * N));
  return { N, xf: per(3), xs: per(3), Pf: per(6), Pp: per(6), Ps: per(6), dLogR: per(1), F: new Float64Array(9), Q: new Float64Array(9), gT: new Float64Array(9) };
}

/** Whether trackScore applies: every axis constant velocity with a Gauss–Markov error (n = 3), fixes used without gate or not at all, steps of positive length. */
export function trackScoreApplies(models: AxisModel[], data: SegmentData, opt: FilterOptions): boolean {
  for (const m of models) if (m.n !== 3 || m.nMotion !== 2 || m.iBias !== 2 || m.params.motion !== 'cv') return false;
  if (opt.qScale || opt.reacquireAfter <= data.N) return false;
  for (let k = 0; k < data.N; k++) if (data.use[k] === 1) return false;
  for (let k = 1; k < data.N; k++) if (!(data.tSec[k]! - data.tSec[k - 1]! > 0)) return false;
  return true;
}

const LOG_2PI = Math.log(2 * Math.PI);

/**
 * The log-likelihood of the segment (what totalLogLik of the forward filter with `rScale` and no gate
 * gives, to rounding) and its score (see the header), for the case of trackScoreApplies (checked by
 * the caller). East and north, where they have the same model and inputs, share one covariance
 * recursion (the same arithmetic on the same numbers, as in the forward filter).
 */
export function trackScore(models: AxisModel[], data: SegmentData, opt: FilterOptions, rScale: number[], w: ScoreWork): TrackScore {
  if (w.N !== data.N || w.xs.length !== models.length) throw new RangeError(`trackScore: work for ${w.N} epochs × ${w.xs.length} axes, segment has ${data.N} × ${models.length}`);
  const nAx = models.length;
  const share = nAx >= 2 && models[0] === models[1] && Object.is(rScale[0], rScale[1]) && sameHorizontalInputs(data);
  const groups = share ? [[0, 1], ...(nAx === 3 ? [[2]] : [])] : models.map((_, a) => [a]);
  const axes: AxisScore[] = models.map(() => ({ dLogQ: 0, dLogSigmaB: 0, dLogTau: 0 }));
  let logLik = 0;
  for (const g of groups) {
    logLik += forwardGroup(models[g[0]!]!, data, g, rScale[g[0]!]!, opt.priorVar, w);
    backwardGroup(models[g[0]!]!, data, g, rScale[g[0]!]!, w, axes);
  }
  return { logLik, axes, dLogR: w.dLogR };
}

/**
 * The forward filter of a group of axes sharing one covariance (the group's first axis's arrays):
 * x⁻ = F x, P⁻ = F P Fᵀ + Q, then the scalar update of each axis with H = [1, 0, 1]; filtered and
 * predicted moments stored; returns the group's log-likelihood Σ −½ (log 2π + log S + ν²/S).
 * F = [[1, Δt, 0], [0, 1, 0], [0, 0, φ]], Q = q·[[Δt³/3, Δt²/2], [Δt²/2, Δt]] ⊕ σ_b²(1 − φ²)
 * (models/motion.ts, models/gauss-markov.ts).
 */
function forwardGroup(m: AxisModel, data: SegmentData, group: number[], rScale: number, priorVar: [number, number, number], w: ScoreWork): number {
  const N = data.N, t = data.tSec, use = data.use;
  const a0 = group[0]!, a1 = group.length > 1 ? group[1]! : -1;
  const Pf = w.Pf[a0]!, Pp = w.Pp[a0]!;
  const xf0 = w.xf[a0]!, xf1 = a1 >= 0 ? w.xf[a1]! : xf0;
  const z0 = data.z[a0]!, z1 = a1 >= 0 ? data.z[a1]! : z0, r = data.r[a0]!;
  const q = m.params.q, s2 = m.params.gm!.sigmaM ** 2, tau = m.params.gm!.tauSec;
  // the prior (track-filter.ts writePrior): position at the first fix, velocity and error at 0
  let p00 = priorVar[0], p01 = 0, p02 = 0, p11 = priorVar[1], p12 = 0, p22 = s2;
  let x0 = Number.isFinite(z0[0]!) ? z0[0]! : 0, x1 = 0, x2 = 0;
  let y0 = Number.isFinite(z1[0]!) ? z1[0]! : 0, y1 = 0, y2 = 0;
  let lastDt = NaN, phi = 1, V = 0, q3 = 0, q2 = 0, q1 = 0;
  let ll = 0;
  for (let k = 0; k < N; k++) {
    if (k > 0) {
      const dt = t[k]! - t[k - 1]!;
      if (dt !== lastDt) {
        lastDt = dt;
        phi = Math.exp(-dt / tau);
        // −expm1 keeps precision for Δt ≪ τ (gauss-markov.ts gmQ)
        V = s2 * -Math.expm1((-2 * dt) / tau);
        q3 = (q * dt * dt * dt) / 3;
        q2 = (q * dt * dt) / 2;
        q1 = q * dt;
      }
      // P⁻ = F P Fᵀ + Q
      const n00 = p00 + 2 * dt * p01 + dt * dt * p11 + q3;
      const n01 = p01 + dt * p11 + q2;
      const n02 = phi * (p02 + dt * p12);
      const n11 = p11 + q1;
      const n12 = phi * p12;
      const n22 = phi * phi * p22 + V;
      p00 = n00; p01 = n01; p02 = n02; p11 = n11; p12 = n12; p22 = n22;
      // x⁻ = F x
      x0 = x0 + dt * x1; x2 = phi * x2;
      y0 = y0 + dt * y1; y2 = phi * y2;
    }
    const o = 6 * k;
    Pp[o] = p00; Pp[o + 1] = p01; Pp[o + 2] = p02; Pp[o + 3] = p11; Pp[o + 4] = p12; Pp[o + 5] = p22;
    const za = z0[k]!;
    if (use[k] !== 0 && Number.isFinite(za)) {
      // w = P hᵀ, S = h P hᵀ + R
      const w0 = p00 + p02, w1 = p01 + p12, w2 = p02 + p22;
      const R = r[k]! * rScale;
      const hph = w0 + w2;
      const S = hph + R;
      const k0 = w0 / S, k1 = w1 / S, k2 = w2 / S;
      const nu = za - x0 - x2;
      x0 += k0 * nu; x1 += k1 * nu; x2 += k2 * nu;
      ll -= 0.5 * (LOG_2PI + Math.log(S) + (nu * nu) / S);
      if (a1 >= 0) {
        const nv = z1[k]! - y0 - y2;
        y0 += k0 * nv; y1 += k1 * nv; y2 += k2 * nv;
        ll -= 0.5 * (LOG_2PI + Math.log(S) + (nv * nv) / S);
      }
      // Joseph form expanded (kalman3.ts updateJoseph3p): keeps P symmetric positive definite under rounding
      const c = hph + R;
      const n00 = p00 - 2 * k0 * w0 + c * k0 * k0;
      const n01 = p01 - k0 * w1 - w0 * k1 + c * k0 * k1;
      const n02 = p02 - k0 * w2 - w0 * k2 + c * k0 * k2;
      const n11 = p11 - 2 * k1 * w1 + c * k1 * k1;
      const n12 = p12 - k1 * w2 - w1 * k2 + c * k1 * k2;
      const n22 = p22 - 2 * k2 * w2 + c * k2 * k2;
      p00 = n00; p01 = n01; p02 = n02; p11 = n11; p12 = n12; p22 = n22;
    }
    Pf[o] = p00; Pf[o + 1] = p01; Pf[o + 2] = p02; Pf[o + 3] = p11; Pf[o + 4] = p12; Pf[o + 5] = p22;
    xf0[3 * k] = x0; xf0[3 * k + 1] = x1; xf0[3 * k + 2] = x2;
    if (a1 >= 0) (xf1[3 * k] = y0), (xf1[3 * k + 1] = y1), (xf1[3 * k + 2] = y2);
  }
  return ll;
}

/** The RTS smoother of a group (rtsStep3pFrom, its gain reused by the group's second axis) with each step's and each fix's terms of the score. */
function backwardGroup(m: AxisModel, data: SegmentData, group: number[], rScale: number, w: ScoreWork, axes: AxisScore[]): void {
  const N = data.N, t = data.tSec;
  const a0 = group[0]!;
  const Pf = w.Pf[a0]!, Ps = w.Ps[a0]!;
  const { F, Q, gT } = w;
  const q = m.params.q, s2 = m.params.gm!.sigmaM ** 2, tau = m.params.gm!.tauSec;
  // the last epoch: smoothed = filtered
  Ps.set(Pf.subarray(6 * (N - 1), 6 * N), 6 * (N - 1));
  for (const a of group) {
    w.xs[a]!.set(w.xf[a]!.subarray(3 * (N - 1), 3 * N), 3 * (N - 1));
    w.dLogR[a]!.fill(0);
    measurementTerm(data, a, N - 1, rScale, w.xs[a]!, Ps, w.dLogR[a]!);
  }
  let lastDt = NaN;
  F.fill(0);
  Q.fill(0);
  F[0] = 1; F[4] = 1;
  for (let k = N - 2; k >= 0; k--) {
    const dt = t[k + 1]! - t[k]!;
    if (dt !== lastDt) {
      lastDt = dt;
      F[1] = dt;
      F[8] = Math.exp(-dt / tau);
      Q[0] = (q * dt * dt * dt) / 3;
      Q[1] = Q[3] = (q * dt * dt) / 2;
      Q[4] = q * dt;
      Q[8] = s2 * -Math.expm1((-2 * dt) / tau);
    }
    // the gain by a Cholesky solve of P⁻ₖ₊₁ (rtsStep3pFrom), Gᵀ kept for the group's second axis
    if (!rtsStep3pFrom(F, Q, w.xf[a0]!, Pf, w.xs[a0]!, 3 * k, 3 * (k + 1), Ps, 6 * k, 6 * (k + 1), gT)) throw new NumericalError(`score: predicted covariance not positive definite at epoch ${k + 1}`);
    for (let i = 1; i < group.length; i++) rtsState3From(F, gT, w.xf[group[i]!]!, w.xs[group[i]!]!, 3 * k, 3 * (k + 1));
    for (const a of group) {
      stepTerms(m, F, Q, dt, w.xs[a]!, Ps, k, gT, axes[a]!);
      measurementTerm(data, a, k, rScale, w.xs[a]!, Ps, w.dLogR[a]!);
    }
  }
  // the prior of the Gauss–Markov state at the first epoch: b₀ ~ N(0, σ_b²)
  for (const a of group) {
    const Eb0 = Ps[5]! + w.xs[a]![2]! ** 2;
    // ∂/∂log σ_b [−½ log σ_b² − ½ E[b₀²]/σ_b²] = −1 + E[b₀²]/σ_b²
    axes[a]!.dLogSigmaB += -1 + Eb0 / s2;
  }
}

/** ∂ℓ/∂log Rₖ of axis a at epoch k: −½ + ½ Eₖ/Rₖ, Eₖ = (z − p − b)² + Var(p + b) under the smoother. */
function measurementTerm(data: SegmentData, a: number, k: number, rScale: number, x: Float64Array, P: Float64Array, out: Float64Array): void {
  const z = data.z[a]![k]!;
  if (data.use[k] === 0 || !Number.isFinite(z)) return;
  const res = z - x[3 * k]! - x[3 * k + 2]!;
  const o = 6 * k;
  // Var(p + b) = P_pp + 2 P_pb + P_bb
  const E = res * res + P[o]! + 2 * P[o + 2]! + P[o + 5]!;
  const R = data.r[a]![k]! * rScale;
  out[k] = -0.5 + (0.5 * E) / R;
}

/**
 * The step k → k+1 of one axis: the expected complete-data score of the transition density, from
 * the smoothed moments of both epochs and their cross-covariance C = Pˢₖ₊₁ Gₖᵀ (gT: Gₖᵀ row-major).
 */
function stepTerms(m: AxisModel, F: Float64Array, Q: Float64Array, dt: number, xs: Float64Array, Ps: Float64Array, k: number, gT: Float64Array, out: AxisScore): void {
  const j = k + 1;
  const oj = 6 * j, ok = 6 * k;
  const pj00 = Ps[oj]!, pj01 = Ps[oj + 1]!, pj02 = Ps[oj + 2]!, pj11 = Ps[oj + 3]!, pj12 = Ps[oj + 4]!, pj22 = Ps[oj + 5]!;
  const pk00 = Ps[ok]!, pk01 = Ps[ok + 1]!, pk11 = Ps[ok + 3]!, pk22 = Ps[ok + 5]!;
  // C = Pˢⱼ Gᵀ: C[i][l] = Σₘ Pˢⱼ[i][m] Gᵀ[m][l]
  const c00 = pj00 * gT[0]! + pj01 * gT[3]! + pj02 * gT[6]!;
  const c01 = pj00 * gT[1]! + pj01 * gT[4]! + pj02 * gT[7]!;
  const c10 = pj01 * gT[0]! + pj11 * gT[3]! + pj12 * gT[6]!;
  const c11 = pj01 * gT[1]! + pj11 * gT[4]! + pj12 * gT[7]!;
  const c22 = pj02 * gT[2]! + pj12 * gT[5]! + pj22 * gT[8]!;
  // kinematic block of D = Pˢⱼ − C Fᵀ − F Cᵀ + F Pˢₖ Fᵀ with F_kin = [[1, Δt], [0, 1]]
  const d00 = pj00 - 2 * (c00 + dt * c01) + (pk00 + 2 * dt * pk01 + dt * dt * pk11);
  const d01 = pj01 - c01 - (c10 + dt * c11) + (pk01 + dt * pk11);
  const d11 = pj11 - 2 * c11 + pk11;
  // e = mⱼ − F mₖ (kinematic part)
  const mk0 = xs[3 * k]!, mk1 = xs[3 * k + 1]!, mk2 = xs[3 * k + 2]!;
  const mj0 = xs[3 * j]!, mj1 = xs[3 * j + 1]!, mj2 = xs[3 * j + 2]!;
  const e0 = mj0 - (mk0 + dt * mk1), e1 = mj1 - mk1;
  // M = D + e eᵀ; Q_kin = q·Q̃, Q̃⁻¹ = [[12/Δt³, −6/Δt²], [−6/Δt², 4/Δt]] (Bar-Shalom et al. 2001 §6.2 inverted)
  const M00 = d00 + e0 * e0, M01 = d01 + e0 * e1, M11 = d11 + e1 * e1;
  const q = m.params.q;
  const trQinvM = ((12 * M00) / (dt * dt * dt) - (12 * M01) / (dt * dt) + (4 * M11) / dt) / q;
  // ∂/∂log q [−½ log|q Q̃| − ½ tr((q Q̃)⁻¹ M)] = −1 + ½ tr(Q⁻¹ M)
  out.dLogQ += -1 + 0.5 * trQinvM;
  // Gauss–Markov block: bⱼ = φ bₖ + w, Var w = V = σ_b²(1 − φ²)
  const phi = F[8]!, V = Q[8]!;
  const A = pj22 + mj2 * mj2, B = c22 + mj2 * mk2, Cc = pk22 + mk2 * mk2;
  // E2 = E[(bⱼ − φ bₖ)²]
  const E2 = A - 2 * phi * B + phi * phi * Cc;
  // ∂/∂log σ_b: V ∝ σ_b², so −1 + E2/V
  out.dLogSigmaB += -1 + E2 / V;
  // ∂/∂log τ: φ' = φ Δt/τ, V' = −2 σ_b² φ φ', E2' = −2 φ' B + 2 φ φ' Cc
  const tau = m.params.gm!.tauSec, s2 = m.params.gm!.sigmaM ** 2;
  const dphi = (phi * dt) / tau;
  const dV = -2 * s2 * phi * dphi;
  const dE2 = -2 * dphi * B + 2 * phi * dphi * Cc;
  // ∂/∂log τ [−½ log V − ½ E2/V] = ½ (V'/V)(E2/V − 1) − ½ E2'/V
  out.dLogTau += 0.5 * (dV / V) * (E2 / V - 1) - (0.5 * dE2) / V;
}
