/**
 * The analytic truth of the IMU scenario simulator (simulate/imu.ts): speed and yaw at any time
 * from the drive plan, road grade and camber as functions of the distance driven (so pitch and roll
 * follow the road), and the position integrated by Simpson's rule on the IMU's time grid.
 */
import type { DrivePlan } from './imu-drive-plan.js';

/** smoothstep u ↦ 3u² − 2u³ and its integral u³ − u⁴/2 */
const sstep = (u: number) => u * u * (3 - 2 * u);
const sstepInt = (u: number) => u * u * u - 0.5 * u * u * u * u;
/**
 * Trapezoidal acceleration (ramps of share r at both ends, flat between), normalised to a unit speed
 * change: g(u) the speed share, g′(u) its derivative, G(u) = ∫₀ᵘ g. A braking car: nearly constant
 * deceleration that ends with a short jerk at the stop.
 */
const trapG = (u: number, r: number) => {
  const k = 1 / (1 - r);
  if (u < r) return (k * u * u) / (2 * r);
  if (u <= 1 - r) return k * (r / 2 + (u - r));
  const v = 1 - u;
  return k * (1 - r - (v * v) / (2 * r));
};
const trapDg = (u: number, r: number) => (u < r ? u / r : u <= 1 - r ? 1 : (1 - u) / r) / (1 - r);
const trapInt = (u: number, r: number) => {
  const k = 1 / (1 - r);
  if (u < r) return (k * u * u * u) / (6 * r);
  if (u <= 1 - r) return k * ((r * r) / 6 + (r / 2) * (u - r) + ((u - r) * (u - r)) / 2);
  const v = 1 - u;
  // ∫₀¹ G1 = (1 − r)/2 by symmetry of the shape
  return k * ((1 - r) / 2 - (1 - r) * v + (v * v * v) / (6 * r));
};

/** Wavelengths (m) of the road grade and camber. */
const GRADE_WAVELENGTH_M = 400, CAMBER_WAVELENGTH_M = 250;

/** Index of the last piece starting at or before τ (pieces sorted by t0), −1 when none. */
function pieceAt(pieces: ReadonlyArray<{ t0: number }>, tau: number): number {
  let lo = 0, hi = pieces.length - 1, idx = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (pieces[mid]!.t0 <= tau) {
      idx = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return idx;
}

/** The vehicle's truth in the truth frame (ENU, m) at any time τ (s from the start of the drive). */
export class DriveTruth {
  /** Speed (m/s), its rate, distance driven (m), yaw (rad) and yaw rate at the τ of the last kinAt. */
  private readonly kin = { s: 0, sd: 0, d: 0, yaw: 0, yawd: 0 };
  private readonly a8 = new Float64Array(8);
  /** Grid step (s) and points of the position grid. */
  readonly h: number;
  readonly M: number;
  private readonly pe: Float64Array;
  private readonly pn: Float64Array;
  private readonly pu: Float64Array;

  /** `upStartM`: the height of the start in the truth frame. */
  constructor(
    private readonly plan: DrivePlan,
    private readonly gradeRad: number,
    private readonly camberRad: number,
    imuRateHz: number,
    durationSec: number,
    upStartM: number,
  ) {
    this.h = 1 / imuRateHz;
    this.M = Math.ceil(durationSec / this.h) + 2;
    this.pe = new Float64Array(this.M);
    this.pn = new Float64Array(this.M);
    this.pu = new Float64Array(this.M);
    this.pu[0] = upStartM;
    this.integratePosition();
  }

  /** Speed, distance and yaw at τ into `kin`. */
  private kinAt(tau: number): void {
    const kin = this.kin;
    const si = pieceAt(this.plan.speed, tau);
    if (si < 0) {
      kin.s = 0; kin.sd = 0; kin.d = 0;
    } else {
      const p = this.plan.speed[si]!;
      const u = Math.min(1, (tau - p.t0) / p.dur);
      const ds = p.s1 - p.s0;
      const r = p.r;
      kin.s = p.s0 + ds * (r ? trapG(u, r) : sstep(u));
      kin.sd = u < 1 ? (ds * (r ? trapDg(u, r) : 6 * u * (1 - u))) / p.dur : 0;
      kin.d = p.d0 + p.s0 * Math.min(tau - p.t0, p.dur) + ds * p.dur * (r ? trapInt(u, r) : sstepInt(u)) + (u >= 1 ? p.s1 * (tau - p.t0 - p.dur) : 0);
    }
    const ti = pieceAt(this.plan.turns, tau);
    if (ti < 0) {
      kin.yaw = this.plan.y0; kin.yawd = 0;
    } else {
      const p = this.plan.turns[ti]!;
      const u = Math.min(1, (tau - p.t0) / p.dur);
      // raised-cosine rate: ψ̇ = (A/T)(1 − cos 2πu), ψ = ψ0 + A (u − sin(2πu)/2π)
      kin.yaw = p.y0 + p.angle * (u - Math.sin(2 * Math.PI * u) / (2 * Math.PI));
      kin.yawd = u < 1 ? (p.angle / p.dur) * (1 - Math.cos(2 * Math.PI * u)) : 0;
    }
  }

  /** Roll, pitch, yaw (rad), their rates (rad/s), speed (m/s) and its rate at τ into `out` (8 values). */
  attAt(tau: number, out: Float64Array): void {
    this.kinAt(tau);
    const kin = this.kin;
    const ag = (2 * Math.PI) / GRADE_WAVELENGTH_M, ac = (2 * Math.PI) / CAMBER_WAVELENGTH_M;
    // pitch = grade(d), roll = camber(d); their rates through ḋ = s
    out[0] = this.camberRad * Math.sin(ac * kin.d);
    out[1] = this.gradeRad * Math.sin(ag * kin.d);
    out[2] = kin.yaw;
    out[3] = this.camberRad * ac * Math.cos(ac * kin.d) * kin.s;
    out[4] = this.gradeRad * ag * Math.cos(ag * kin.d) * kin.s;
    out[5] = kin.yawd;
    out[6] = kin.s;
    out[7] = kin.sd;
  }

  /** Velocity ENU (m/s) at τ into `o`. */
  velAt(tau: number, o: number[]): void {
    const a8 = this.a8;
    this.attAt(tau, a8);
    const s = a8[6]!, th = a8[1]!, y = a8[2]!;
    o[0] = s * Math.cos(th) * Math.cos(y);
    o[1] = s * Math.cos(th) * Math.sin(y);
    o[2] = s * Math.sin(th);
  }

  /** Position on the grid (Simpson over half steps). */
  private integratePosition(): void {
    const { h, M, pe, pn, pu } = this;
    const v0 = [0, 0, 0], v1 = [0, 0, 0], v2 = [0, 0, 0];
    this.velAt(0, v0);
    for (let i = 1; i < M; i++) {
      const t0 = (i - 1) * h;
      this.velAt(t0 + 0.5 * h, v1);
      this.velAt(t0 + h, v2);
      // Simpson: ∫v = h/6 (v0 + 4 v½ + v1)
      pe[i] = pe[i - 1]! + (h / 6) * (v0[0]! + 4 * v1[0]! + v2[0]!);
      pn[i] = pn[i - 1]! + (h / 6) * (v0[1]! + 4 * v1[1]! + v2[1]!);
      pu[i] = pu[i - 1]! + (h / 6) * (v0[2]! + 4 * v1[2]! + v2[2]!);
      v0[0] = v2[0]!; v0[1] = v2[1]!; v0[2] = v2[2]!;
    }
  }

  /** Position ENU (m) at τ (within the grid), linear between grid points. */
  positionAt(tau: number): [number, number, number] {
    const { M, pe, pn, pu } = this;
    const x = Math.min(tau / this.h, M - 1);
    const i = Math.min(Math.floor(x), M - 2);
    const f = x - i;
    return [pe[i]! + f * (pe[i + 1]! - pe[i]!), pn[i]! + f * (pn[i + 1]! - pn[i]!), pu[i]! + f * (pu[i + 1]! - pu[i]!)];
  }

  /** Up (m) at τ, as positionAt. */
  upAt(tau: number): number {
    const { M, pu } = this;
    const x = Math.min(tau / this.h, M - 1);
    const j = Math.min(Math.floor(x), M - 2);
    return pu[j]! + (x - j) * (pu[j + 1]! - pu[j]!);
  }
}
