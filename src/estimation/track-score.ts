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
import { NumericalError } from '../errors.js';
import { scoreGroupKernel, scoreKernel } from './score-wasm.js';

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
}

export function makeScoreWork(models: AxisModel[], N: number): ScoreWork {
  const per = (n: number) => models.map(() => new Float64Array(n * N));
  return { N, xf: per(3), xs: per(3), Pf: per(6), Pp: per(6), Ps: per(6), dLogR: per(1) };
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
  // the same passes in the WebAssembly module where it loads (score-wasm.ts: the same bits)
  const kernel = scoreKernel();
  for (const g of groups) {
    if (kernel) {
      logLik += scoreGroupKernel(kernel, models[g[0]!]!, data, g, rScale[g[0]!]!, opt.priorVar, w.dLogR, axes);
      continue;
    }
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
      // one logarithm for the group (its axes share S)
      const logS = Math.log(S);
      ll -= 0.5 * (LOG_2PI + logS + (nu * nu) / S);
      if (a1 >= 0) {
        const nv = z1[k]! - y0 - y2;
        y0 += k0 * nv; y1 += k1 * nv; y2 += k2 * nv;
        ll -= 0.5 * (LOG_2PI + logS + (nv * nv) / S);
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

/**
 * The RTS smoother of a group with each step's and each fix's terms of the score (the gain once for
 * the group's axes, the predicted covariance the forward pass stored):
 *   xˢₖ = xₖ + Gₖ (xˢₖ₊₁ − F xₖ), Pˢₖ = Pₖ + Gₖ (Pˢₖ₊₁ − P⁻ₖ₊₁) Gₖᵀ
 * (kalman3.ts rtsStep3pFrom, with F's structure written out), then the step's expected score with
 * C = Cov(xₖ₊₁, xₖ | y) = Pˢₖ₊₁ Gₖᵀ (gainStep, axisStep).
 */
function backwardGroup(m: AxisModel, data: SegmentData, group: number[], rScale: number, w: ScoreWork, axes: AxisScore[]): void {
  const N = data.N, t = data.tSec, use = data.use;
  const a0 = group[0]!;
  const Pf = w.Pf[a0]!, Pp = w.Pp[a0]!, Ps = w.Ps[a0]!;
  const s2 = m.params.gm!.sigmaM ** 2, tau = m.params.gm!.tauSec;
  const nG = group.length;
  const xfs = group.map((a) => w.xf[a]!), xss = group.map((a) => w.xs[a]!), zs = group.map((a) => data.z[a]!), outs = group.map((a) => w.dLogR[a]!);
  const r = data.r[a0]!;
  // the last epoch: smoothed = filtered
  Ps.set(Pf.subarray(6 * (N - 1), 6 * N), 6 * (N - 1));
  for (let i = 0; i < nG; i++) {
    xss[i]!.set(xfs[i]!.subarray(3 * (N - 1), 3 * N), 3 * (N - 1));
    outs[i]!.fill(0);
    measurementTerm(zs[i]!, r, use, N - 1, rScale, xss[i]!, Ps, outs[i]!);
  }
  // per axis: Σ ∂/∂log q, ∂/∂log σ_b, ∂/∂log τ
  const acc = new Float64Array(3 * nG);
  const g = new Float64Array(GAIN_STEP);
  const st: StepConsts = { dt: NaN, phi: 1, V: 1, dphi: 0, dV: 0, q: m.params.q, rScale };
  for (let k = N - 2; k >= 0; k--) {
    const dt = t[k + 1]! - t[k]!;
    if (dt !== st.dt) {
      st.dt = dt;
      st.phi = Math.exp(-dt / tau);
      st.V = s2 * -Math.expm1((-2 * dt) / tau);
      // ∂φ/∂log τ = φ Δt/τ, ∂V/∂log τ = −2 σ_b² φ ∂φ/∂log τ
      st.dphi = (st.phi * dt) / tau;
      st.dV = -2 * s2 * st.phi * st.dphi;
    }
    gainStep(Pf, Pp, Ps, k, dt, st.phi, g);
    for (let i = 0; i < nG; i++) axisStep(xfs[i]!, xss[i]!, k, g, st, use[k] !== 0 ? zs[i]![k]! : NaN, r[k]!, outs[i]!, acc, 3 * i);
  }
  for (let i = 0; i < nG; i++) {
    const ax = axes[group[i]!]!;
    // the prior of the Gauss–Markov state at the first epoch, b₀ ~ N(0, σ_b²): −1 + E[b₀²]/σ_b²
    const Eb0 = Ps[5]! + xss[i]![2]! ** 2;
    ax.dLogQ += acc[3 * i]!;
    ax.dLogSigmaB += acc[3 * i + 1]! - 1 + Eb0 / s2;
    ax.dLogTau += acc[3 * i + 2]!;
  }
}

/** The step's constants of the current Δt (φ, V and their log-τ derivatives), q and the r scale. */
interface StepConsts {
  dt: number;
  phi: number;
  V: number;
  dphi: number;
  dV: number;
  q: number;
  rScale: number;
}

/** gainStep's output: Gᵀ (9, t_il = Gᵀ[i][l]), then D00, D01, D11, C22, Pˢₖ₊₁ bb, Pˢₖ bb, Var(p + b) at k. */
const GAIN_STEP = 16;

/**
 * The covariance half of one RTS step k → k + 1 shared by a group's axes: Gₖ by a Cholesky solve of
 * P⁻ₖ₊₁ (half the rounding of an explicit inverse; fails loudly when not positive definite), Pˢₖ
 * written, and what the score reads of the smoothed second moments: the kinematic block of
 * D = Pˢₖ₊₁ − C Fᵀ − F Cᵀ + F Pˢₖ Fᵀ, C_bb, the two epochs' P_bb and Var(p + b) at k.
 * The gain and Pˢₖ are kalman3.ts rtsStep3pFrom's arithmetic with F's zeros dropped, written out
 * here rather than shared: that step is the smoother's per-epoch kernel (bench/pipeline.ts), kept
 * free of a call and of a scratch array.
 */
function gainStep(Pf: Float64Array, Pp: Float64Array, Ps: Float64Array, k: number, dt: number, phi: number, g: Float64Array): void {
  const ok = 6 * k, oj = ok + 6;
  const p00 = Pf[ok]!, p01 = Pf[ok + 1]!, p02 = Pf[ok + 2]!, p11 = Pf[ok + 3]!, p12 = Pf[ok + 4]!, p22 = Pf[ok + 5]!;
  const m00 = Pp[oj]!, m01 = Pp[oj + 1]!, m02 = Pp[oj + 2]!, m11 = Pp[oj + 3]!, m12 = Pp[oj + 4]!, m22 = Pp[oj + 5]!;
  const s00 = Ps[oj]!, s01 = Ps[oj + 1]!, s02 = Ps[oj + 2]!, s11 = Ps[oj + 3]!, s12 = Ps[oj + 4]!, s22 = Ps[oj + 5]!;
  // A = F Pₖ with F = [[1, Δt, 0], [0, 1, 0], [0, 0, φ]]
  const a00 = p00 + dt * p01, a01 = p01 + dt * p11, a02 = p02 + dt * p12;
  const a10 = p01, a11 = p11, a12 = p12;
  const a20 = phi * p02, a21 = phi * p12, a22 = phi * p22;
  // Cholesky P⁻ = L Lᵀ
  const l00 = Math.sqrt(m00);
  const l10 = m01 / l00, l20 = m02 / l00;
  const l11 = Math.sqrt(m11 - l10 * l10);
  const l21 = (m12 - l20 * l10) / l11;
  const l22 = Math.sqrt(m22 - l20 * l20 - l21 * l21);
  if (!(l00 > 0 && l11 > 0 && l22 > 0)) throw new NumericalError(`score: predicted covariance not positive definite at epoch ${k + 1}`);
  // Gᵀ = (P⁻)⁻¹ A column by column
  let y0 = a00 / l00, y1 = (a10 - l10 * y0) / l11, y2 = (a20 - l20 * y0 - l21 * y1) / l22;
  const t20 = y2 / l22, t10 = (y1 - l21 * t20) / l11, t00 = (y0 - l10 * t10 - l20 * t20) / l00;
  y0 = a01 / l00; y1 = (a11 - l10 * y0) / l11; y2 = (a21 - l20 * y0 - l21 * y1) / l22;
  const t21 = y2 / l22, t11 = (y1 - l21 * t21) / l11, t01 = (y0 - l10 * t11 - l20 * t21) / l00;
  y0 = a02 / l00; y1 = (a12 - l10 * y0) / l11; y2 = (a22 - l20 * y0 - l21 * y1) / l22;
  const t22 = y2 / l22, t12 = (y1 - l21 * t22) / l11, t02 = (y0 - l10 * t12 - l20 * t22) / l00;
  // Pˢₖ = Pₖ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ
  const d00 = s00 - m00, d01 = s01 - m01, d02 = s02 - m02, d11 = s11 - m11, d12 = s12 - m12, d22 = s22 - m22;
  const f00 = t00 * d00 + t10 * d01 + t20 * d02, f01 = t00 * d01 + t10 * d11 + t20 * d12, f02 = t00 * d02 + t10 * d12 + t20 * d22;
  const f10 = t01 * d00 + t11 * d01 + t21 * d02, f11 = t01 * d01 + t11 * d11 + t21 * d12, f12 = t01 * d02 + t11 * d12 + t21 * d22;
  const f20 = t02 * d00 + t12 * d01 + t22 * d02, f21 = t02 * d01 + t12 * d11 + t22 * d12, f22 = t02 * d02 + t12 * d12 + t22 * d22;
  const q00 = p00 + (f00 * t00 + f01 * t10 + f02 * t20);
  const q01 = p01 + (f00 * t01 + f01 * t11 + f02 * t21);
  const q02 = p02 + (f00 * t02 + f01 * t12 + f02 * t22);
  const q11 = p11 + (f10 * t01 + f11 * t11 + f12 * t21);
  const q12 = p12 + (f10 * t02 + f11 * t12 + f12 * t22);
  const q22 = p22 + (f20 * t02 + f21 * t12 + f22 * t22);
  Ps[ok] = q00; Ps[ok + 1] = q01; Ps[ok + 2] = q02; Ps[ok + 3] = q11; Ps[ok + 4] = q12; Ps[ok + 5] = q22;
  // C = Pˢₖ₊₁ Gᵀ (the elements the score reads)
  const c00 = s00 * t00 + s01 * t10 + s02 * t20, c01 = s00 * t01 + s01 * t11 + s02 * t21;
  const c10 = s01 * t00 + s11 * t10 + s12 * t20, c11 = s01 * t01 + s11 * t11 + s12 * t21;
  g[0] = t00; g[1] = t01; g[2] = t02; g[3] = t10; g[4] = t11; g[5] = t12; g[6] = t20; g[7] = t21; g[8] = t22;
  g[9] = s00 - 2 * (c00 + dt * c01) + (q00 + 2 * dt * q01 + dt * dt * q11);
  g[10] = s01 - c01 - (c10 + dt * c11) + (q01 + dt * q11);
  g[11] = s11 - 2 * c11 + q11;
  g[12] = s02 * t02 + s12 * t12 + s22 * t22;
  g[13] = s22;
  g[14] = q22;
  g[15] = q00 + 2 * q02 + q22;
}

/**
 * The state half of one RTS step for one axis (xˢₖ written) and its terms of the score: the
 * transition's (into acc[o..o+2]: log q, log σ_b, log τ) and the fix's at k (z NaN: none).
 */
function axisStep(xf: Float64Array, xs: Float64Array, k: number, g: Float64Array, st: StepConsts, z: number, rk: number, out: Float64Array, acc: Float64Array, o: number): void {
  const { dt, phi, V, dphi, dV, q } = st;
  const j = k + 1;
  const x0 = xf[3 * k]!, x1 = xf[3 * k + 1]!, x2 = xf[3 * k + 2]!;
  const mj0 = xs[3 * j]!, mj1 = xs[3 * j + 1]!, mj2 = xs[3 * j + 2]!;
  // dx = xˢⱼ − F xₖ, xˢₖ = xₖ + G dx
  const dx0 = mj0 - (x0 + dt * x1), dx1 = mj1 - x1, dx2 = mj2 - phi * x2;
  const mk0 = x0 + (g[0]! * dx0 + g[3]! * dx1 + g[6]! * dx2);
  const mk1 = x1 + (g[1]! * dx0 + g[4]! * dx1 + g[7]! * dx2);
  const mk2 = x2 + (g[2]! * dx0 + g[5]! * dx1 + g[8]! * dx2);
  xs[3 * k] = mk0; xs[3 * k + 1] = mk1; xs[3 * k + 2] = mk2;
  // kinematic: M = D + e eᵀ with e = xˢⱼ − F xˢₖ; Q_kin = q·Q̃, Q̃⁻¹ = [[12/Δt³, −6/Δt²], [−6/Δt², 4/Δt]]
  const ep = mj0 - (mk0 + dt * mk1), ev = mj1 - mk1;
  const M00 = g[9]! + ep * ep, M01 = g[10]! + ep * ev, M11 = g[11]! + ev * ev;
  const trQinvM = ((12 * M00) / (dt * dt * dt) - (12 * M01) / (dt * dt) + (4 * M11) / dt) / q;
  // ∂/∂log q [−½ log|q Q̃| − ½ tr((q Q̃)⁻¹ M)] = −1 + ½ tr(Q⁻¹ M)
  acc[o] = acc[o]! - 1 + 0.5 * trQinvM;
  // Gauss–Markov: E2 = E[(bⱼ − φ bₖ)²] from A = E[bⱼ²], B = E[bⱼ bₖ], Cc = E[bₖ²]
  const A = g[13]! + mj2 * mj2, B = g[12]! + mj2 * mk2, Cc = g[14]! + mk2 * mk2;
  const E2 = A - 2 * phi * B + phi * phi * Cc;
  // ∂/∂log σ_b: V ∝ σ_b², so −1 + E2/V
  acc[o + 1] = acc[o + 1]! - 1 + E2 / V;
  // ∂/∂log τ [−½ log V − ½ E2/V] = ½ (V'/V)(E2/V − 1) − ½ E2'/V, E2' = −2 φ' B + 2 φ φ' Cc
  const dE2 = -2 * dphi * B + 2 * phi * dphi * Cc;
  acc[o + 2] = acc[o + 2]! + 0.5 * (dV / V) * (E2 / V - 1) - (0.5 * dE2) / V;
  // the fix at k: ∂ℓ/∂log Rₖ = −½ + ½ Eₖ/Rₖ, Eₖ = (z − p − b)² + Var(p + b)
  if (Number.isFinite(z)) {
    const res = z - mk0 - mk2;
    out[k] = -0.5 + (0.5 * (res * res + g[15]!)) / (rk * st.rScale);
  }
}

/** ∂ℓ/∂log Rₖ of one axis at epoch k: −½ + ½ Eₖ/Rₖ, Eₖ = (z − p − b)² + Var(p + b) under the smoother. */
function measurementTerm(z: Float64Array, r: Float64Array, use: Uint8Array, k: number, rScale: number, x: Float64Array, P: Float64Array, out: Float64Array): void {
  const zk = z[k]!;
  if (use[k] === 0 || !Number.isFinite(zk)) return;
  const res = zk - x[3 * k]! - x[3 * k + 2]!;
  const o = 6 * k;
  // Var(p + b) = P_pp + 2 P_pb + P_bb
  const E = res * res + P[o]! + 2 * P[o + 2]! + P[o + 5]!;
  out[k] = -0.5 + (0.5 * E) / (r[k]! * rScale);
}
