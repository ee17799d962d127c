/**
 * The receiver error of a family log (simulate/family-spec.ts) along a truth: white noise with the
 * log's tail, scaled by a slowly varying quality factor that the written HDOP predicts fully, weakly
 * or not at all; a time-correlated error per axis that is a sum of first-order Gauss–Markov
 * processes, optionally with a drifting bias and steps at fix-mode changes (horizontal and vertical
 * drawn apart); multipath bursts as jumps or ramps; outages; invalid rows.
 *
 * Each fix carries a label for scoring: "outlier" where the burst offset is large enough that a
 * processor must reject the fix (horizontal offset ≥ max(10 m, 4 × the fix's total 1σ)),
 * "ambiguous" where a burst's offset is smaller (a ramp's start) or the white draw is beyond 4.5σ (a
 * heavy tail), neither required to be kept nor to be flagged, "invalid" for rows without a usable
 * position, "clean" otherwise.
 *
 * Gauss–Markov discretization x_{k+1} = φ x_k + √(1−φ²) σ w_k, φ = exp(−Δt/τ) (Gelb, "Applied Optimal
 * Estimation", 1974, §3.8 — from memory); a random-walk bias b_{k+1} = b_k + σ_d √(Δt/600 s) w_k.
 */
import type { EnuFrame } from '../geodesy/ecef.js';
import type { FamilyLogSpec, CorrelatedSpec, WhiteTail } from './family-spec.js';
import { Rng } from './rng.js';

export type FixLabel = 'clean' | 'outlier' | 'ambiguous' | 'invalid';

export interface FamilyFix {
  tSec: number;
  latDeg: number;
  lonDeg: number;
  heightM: number;
  /** Written quality columns (NaN when the log has none). */
  hdop: number;
  sats: number;
  /** Truth ENU (m, the log's frame) at this time. */
  truthEnu: [number, number, number];
  label: FixLabel;
  /** An invalid row written with an empty position (else (0, 0)). */
  empty?: boolean;
}

/** One axis's correlated error: GM components, drift, mode-step offset. */
class CorrelatedAxis {
  private x: number[];
  private drift = 0;
  offset = 0;
  constructor(private readonly c: CorrelatedSpec, private readonly rng: Rng) {
    this.x = c.components.map((g) => g.sigmaM * rng.normal());
  }
  step(dtSec: number): number {
    let s = 0;
    this.c.components.forEach((g, i) => {
      const phi = Math.exp(-dtSec / g.tauSec);
      this.x[i] = phi * this.x[i]! + Math.sqrt(1 - phi * phi) * g.sigmaM * this.rng.normal();
      s += this.x[i]!;
    });
    if (this.c.drift10MinM > 0) this.drift += this.c.drift10MinM * Math.sqrt(dtSec / 600) * this.rng.normal();
    return s + this.drift + this.offset;
  }
}

/** A unit-variance draw with the log's tail; `wild` when it is beyond 4.5 (of the unit sd). */
function whiteDraw(rng: Rng, tail: WhiteTail): number {
  if (tail.kind === 'normal') return rng.normal();
  if (tail.kind === 'student') {
    // t_ν = z / √(χ²_ν/ν), scaled by √((ν−2)/ν) to unit variance
    let chi = 0;
    for (let i = 0; i < tail.nu; i++) chi += rng.normal() ** 2;
    return (rng.normal() / Math.sqrt(chi / tail.nu)) * Math.sqrt((tail.nu - 2) / tail.nu);
  }
  const z = rng.normal();
  return rng.next() < tail.share ? z * tail.scale : z;
}

interface Burst {
  /** Peak offset ENU (m). */
  peak: [number, number, number];
  /** Ramp rise (s; 0 for a jump), hold (s), fade (s; 0 for a drop at the end). */
  rise: number;
  hold: number;
  fade: number;
  t0: number;
}

function burstOffset(b: Burst, t: number): number {
  const s = t - b.t0;
  if (s < 0) return 0;
  if (s < b.rise) return s / b.rise;
  if (s < b.rise + b.hold) return 1;
  if (s < b.rise + b.hold + b.fade) return 1 - (s - b.rise - b.hold) / b.fade;
  return -1;
}

/** The fixes of a log along truthEnuAt (s from the start → ENU m). */
export function degradeFamily(spec: FamilyLogSpec, frame: EnuFrame, truthEnuAt: (tRelSec: number) => [number, number, number]): FamilyFix[] {
  const rng = new Rng((spec.seed * 2246822519) >>> 0 || 7);
  const R = spec.receiver;
  const Q = spec.quality;
  const dt = 1 / spec.rateHz;
  const count = Math.floor(spec.durationSec * spec.rateHz);
  const axes = [new CorrelatedAxis(R.correlatedH, rng), new CorrelatedAxis(R.correlatedH, rng), new CorrelatedAxis(R.correlatedV, rng)];
  const corrH = Math.sqrt(R.correlatedH.components.reduce((a, g) => a + g.sigmaM ** 2, 0));
  const sigmaTot = Math.hypot(R.whiteHM, corrH);
  const outlierM = Math.max(10, 4 * sigmaTot);
  // quality: log HDOP and the unwritten factor as Ornstein–Uhlenbeck processes
  const hdopMeanLog = Math.log(1.2), hdopSdLog = 0.4;
  let lh = hdopMeanLog + hdopSdLog * rng.normal();
  let hidden = Q.hiddenLogSd * rng.normal();
  const phiQ = Math.exp(-dt / Q.tauSec);
  const qW = Math.sqrt(1 - phiQ * phiQ);
  let nextStep = 0;
  let burst: Burst | null = null;
  const pBurst = (spec.bursts.perMinute / 60) * dt;
  const fixes: FamilyFix[] = [];
  for (let k = 0; k < count; k++) {
    const t = k * dt;
    lh = hdopMeanLog + phiQ * (lh - hdopMeanLog) + qW * hdopSdLog * rng.normal();
    hidden = phiQ * hidden + qW * Q.hiddenLogSd * rng.normal();
    const hdop = Math.min(5, Math.max(0.6, Math.exp(lh)));
    while (nextStep < R.modeSteps.length && t >= R.modeSteps[nextStep]!) {
      for (const ax of axes) ax.offset += R.stepSigmaM * rng.normal();
      nextStep++;
    }
    const corr = [axes[0]!.step(dt), axes[1]!.step(dt), axes[2]!.step(dt)];
    if (!burst && rng.next() < pBurst) {
      const mag = Math.max(spec.bursts.minM, rng.uniform(spec.bursts.minSigmas, spec.bursts.maxSigmas) * sigmaTot);
      const az = rng.uniform(0, 2 * Math.PI);
      const ramp = rng.next() < spec.bursts.rampShare;
      burst = {
        peak: [mag * Math.sin(az), mag * Math.cos(az), rng.uniform(-0.5, 0.5) * mag],
        rise: ramp ? rng.uniform(2, 8) : 0,
        hold: ramp ? rng.uniform(0, 2) : Math.max(dt, rng.uniform(0.3, 2)),
        fade: ramp && rng.next() < 0.5 ? rng.uniform(2, 5) : 0,
        t0: t,
      };
    }
    let bf = burst ? burstOffset(burst, t) : 0;
    if (bf < 0) {
      burst = null;
      bf = 0;
    }
    const scale = Math.pow(hdop / 1.2, Q.alpha) * Math.exp(hidden);
    const w = [whiteDraw(rng, R.tail), whiteDraw(rng, R.tail), whiteDraw(rng, R.tail)];
    const sats = Math.min(30, Math.max(4, Math.round(22 - 4 * hdop + rng.normal())));
    if (spec.gaps.some(([g0, len]) => t >= g0 && t < g0 + len)) continue;
    const tr = truthEnuAt(t);
    const off = burst ? burst.peak.map((p) => p * bf) : [0, 0, 0];
    const eM = tr[0] + corr[0]! + R.whiteHM * scale * w[0]! + off[0]!;
    const nM = tr[1] + corr[1]! + R.whiteHM * scale * w[1]! + off[1]!;
    const uM = tr[2] + corr[2]! + R.whiteVM * scale * w[2]! + off[2]!;
    const offH = Math.hypot(off[0]!, off[1]!);
    const wild = Math.max(Math.abs(w[0]!), Math.abs(w[1]!), Math.abs(w[2]!)) > 4.5;
    const label: FixLabel = offH >= outlierM ? 'outlier' : offH > 0 || wild ? 'ambiguous' : 'clean';
    const [lat, lon, h] = frame.enuToGeodetic(eM, nM, uM);
    const withQ = Q.mode !== 'absent';
    fixes.push({ tSec: spec.startUnixSec + t, latDeg: lat, lonDeg: lon, heightM: h, hdop: withQ ? Math.round(hdop * 10) / 10 : NaN, sats: withQ ? sats : NaN, truthEnu: tr, label });
  }
  // invalid rows at drawn epochs: (0, 0) as receivers write without a fix, or an empty position
  for (let i = 0; i < spec.zeroRows + spec.emptyRows && fixes.length > 20; i++) {
    const f = fixes[rng.int(10, fixes.length - 10)]!;
    f.latDeg = 0;
    f.lonDeg = 0;
    f.heightM = 0;
    f.label = 'invalid';
    if (i >= spec.zeroRows) f.empty = true;
  }
  return fixes;
}
