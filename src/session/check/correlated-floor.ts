/**
 * The correlated-error floor of the reported uncertainty: the correlated (Gauss–Markov) fix error
 * the log cannot rule out is added to every epoch's reported variance.
 *
 * Why. Under motion the horizontal correlated error is not identified: a slowly varying offset of
 * the fixes looks like the motion itself, the likelihood fixes only the error's diffusion, and the
 * calibration's prior holds the correlated sigma near the profile's 1.5 m whatever the receiver
 * (docs/decisions/correlated-sigma-centre.md: no prior centre the log supports reaches a phone's
 * 1.5–5 m). The smoother's covariance then describes a 1.5 m correlated error where the fixes carry
 * 4 m, and the 95 % regions hold the truth half the time. What the log does identify is the white
 * fix noise σ_w, and the white noise says what grade of receiver it is: in code-based single-point
 * fixes the slowly varying errors (satellite orbit and clock, ionosphere and troposphere residuals,
 * multipath) are at least as large as the receiver's white noise (common practice; from memory,
 * the user equivalent range error budgets of single-frequency positioning, e.g. Misra & Enge,
 * "Global Positioning System", 2nd ed. 2006, ch. 7, put receiver noise well below the sum of the
 * correlated terms). So the reported regions assume a correlated sigma of at least ρ·σ_w per axis:
 *
 *   Δ = max(0, (ρ σ_w)² − σ_b²)        (σ_b the calibrated correlated sigma)
 *   P_reported = P_smoothed + Δ        (east and north alike, up with its own ρ and σ's)
 *
 * Δ is added, not re-smoothed: the part of the correlated error the smoother cannot separate from
 * the motion is an offset shared by neighbouring epochs, and an offset shared by a whole stretch of
 * track adds its full variance to every epoch's error (and to an occupied point's average, which
 * averages white noise away but not an offset). The track itself is the calibrated model's (the
 * smoothed positions do not change). ρ = 1.25 on both axis groups: on the scenario family it lifts
 * the pooled coverage of phone-grade kinds most of the way that larger ratios do, and on the real
 * receiver fixes of the smartLoc drives, where the calibration alone already gives 0.92–0.93, it
 * keeps the regions at 0.98 (1.5 gave 0.99–1.00, too wide); docs/noise-model.md "The
 * correlated-error floor" has the figures. `noise.correlatedFloorRatio`
 * sets them, 0 turns the floor off. Pure; no file system.
 */
import { errorEllipse } from '../../estimation/error-ellipse.js';
import type { SessionResult } from '../result/result.js';
import type { AxisParams } from '../prepare/axis-params.js';
import type { CorrelatedFloor } from '../result/correlated-floor-info.js';
import type { FixSigmaFactors } from '../prepare/fix-noise.js';

export type { CorrelatedFloor };

/**
 * The white fix sigma of p in metres at the session's median quality (horizontal per axis,
 * vertical): p's own, or with reported per-fix sigmas (where p holds their scale) the scale times
 * their median (fix-noise.ts reportedMedians).
 */
export function whiteSigmaM(p: AxisParams, factors: FixSigmaFactors): { horizontal: number; vertical: number } {
  if (!factors.reported || !factors.reportedMedians) return { horizontal: p.sigmaHorizontalM, vertical: p.sigmaVerticalM };
  const [mE, , mU] = factors.reportedMedians;
  return { horizontal: p.sigmaHorizontalM * mE, vertical: p.sigmaVerticalM * mU };
}

/** The floor for parameters p whose white sigma is whiteM (m; whiteSigmaM). */
export function correlatedFloor(p: AxisParams, ratio: { horizontal: number; vertical: number }, whiteM: { horizontal: number; vertical: number }): CorrelatedFloor {
  const wantH = Number.isFinite(whiteM.horizontal) ? ratio.horizontal * whiteM.horizontal : 0;
  const wantV = Number.isFinite(whiteM.vertical) ? ratio.vertical * whiteM.vertical : 0;
  // Δ = max(0, (ρ σ_w)² − σ_b²)
  const dH = Math.max(0, wantH * wantH - p.gmHorizontalSigmaM ** 2);
  const dV = Math.max(0, wantV * wantV - p.gmVerticalSigmaM ** 2);
  return {
    ratio: { ...ratio },
    assumedSigmaM: { horizontal: Math.max(wantH, p.gmHorizontalSigmaM), vertical: Math.max(wantV, p.gmVerticalSigmaM) },
    addedSdM: { horizontal: Math.sqrt(dH), vertical: Math.sqrt(dV) },
  };
}

/** Add the floor's variance to every epoch of r (sd, ellipses and the sd metrics follow). */
export function applyCorrelatedFloor(r: SessionResult, f: CorrelatedFloor): void {
  const dH = f.addedSdM.horizontal ** 2, dV = f.addedSdM.vertical ** 2;
  if (dH === 0 && dV === 0) return;
  for (let j = 0; j < r.N; j++) {
    // P_reported = P_smoothed + Δ (per axis; the east–north covariance is unchanged)
    r.sdEnu[0][j] = Math.sqrt(r.sdEnu[0][j]! ** 2 + dH);
    r.sdEnu[1][j] = Math.sqrt(r.sdEnu[1][j]! ** 2 + dH);
    if (r.hasHeight) r.sdEnu[2][j] = Math.sqrt(r.sdEnu[2][j]! ** 2 + dV);
  }
  refreshUncertaintyMetrics(r);
}

/** Recompute r's 95 % ellipses and its sd metrics from sdEnu and covEN (after they were widened). */
export function refreshUncertaintyMetrics(r: SessionResult): void {
  const sdH = new Float64Array(r.N);
  for (let j = 0; j < r.N; j++) {
    const el = errorEllipse(r.sdEnu[0][j]! ** 2, r.sdEnu[1][j]! ** 2, r.covEN[j]!);
    r.ell95MajorM[j] = el.majorM;
    r.ell95MinorM[j] = el.minorM;
    r.ell95AzimuthDeg[j] = el.azimuthDeg;
    sdH[j] = Math.hypot(r.sdEnu[0][j]!, r.sdEnu[1][j]!);
  }
  // the metrics as products.ts defines them (median: the element at index ⌊N/2⌋ of the sorted values)
  const med = (v: Float64Array) => (v.length ? v.sort()[v.length >> 1]! : NaN);
  r.metrics.medianSdHorizontalM = med(sdH);
  r.metrics.worstEll95MajorM = r.N ? r.ell95MajorM.reduce((m, v) => (v > m ? v : m), -Infinity) : NaN;
  r.metrics.medianEll95MajorM = med(r.ell95MajorM.slice());
}
