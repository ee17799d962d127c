/**
 * Per-fix white measurement noise from the log's quality columns.
 * Rules (docs/noise-model.md; columns in docs/formats.md, "Quality columns"):
 * - reported sigmas (sd_east, sd_north, sd_up) are used as given, times noise.reportedSigmaScale;
 * - otherwise the profile's sigma holds at the session's median quality and is scaled by
 *   (hdop/median(hdop))^αₕ (vdop for the vertical, hdop when there is no vdop), by
 *   (median sats / sats)^(αₛ/2), and by a factor for the fix quality indicator relative to the
 *   session's most common one. The exponents run from 0 (the column says nothing about the error)
 *   to 1 (the error is proportional to it); the calibration estimates them by maximum likelihood
 *   (calibrate.ts). perAxis holds the factors at αₕ = αₛ = 1, factorsWithExponents the others.
 * Relative scaling keeps the calibrated sigma meaningful whatever the receiver's DOP convention.
 */
import type { FixSeries } from '../../input/fix-series.js';
import { selectKth } from '../../estimation/select.js';

/** Sigma factor per GGA fix quality (0 invalid, 1 GPS, 2 DGPS, 3 PPS, 4 RTK fixed, 5 RTK float, 6 dead reckoning, 7 manual, 8 simulation, 9 SBAS); common practice, rounded. */
export const FIX_QUALITY_FACTOR: Record<number, number> = { 1: 1, 2: 0.6, 3: 1, 4: 0.02, 5: 0.2, 6: 5, 7: 1, 8: 1, 9: 0.6 };

/** Median of the finite positive values of a; `scratch` (at least a.length, overwritten) to select in instead of a new array. */
function median(a: Float64Array | undefined, scratch?: Float64Array): number {
  if (!a) return NaN;
  let c = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]!) && a[i]! > 0) c++;
  if (c === 0) return NaN;
  // the order statistic of the sorted values, selected without sorting (the same value)
  const v = scratch && scratch.length >= c ? scratch.subarray(0, c) : new Float64Array(c);
  c = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]!) && a[i]! > 0) v[c++] = a[i]!;
  return selectKth(v, v.length >> 1);
}

function mode(a: Float64Array | undefined): number {
  if (!a) return NaN;
  const c = new Map<number, number>();
  for (const x of a) if (Number.isFinite(x)) c.set(x, (c.get(x) ?? 0) + 1);
  let best = NaN;
  let bc = 0;
  for (const [k, v] of c) if (v > bc) {
    best = k;
    bc = v;
  }
  return best;
}

export interface FixSigmaFactors {
  /**
   * Per-fix factor on the base sigma of each axis (east, north, up). With reported sigmas the factor
   * is the reported sigma itself (m) and the base is a dimensionless scale; otherwise it is a relative
   * factor (1 at the session's median quality) and the base is the white sigma (m).
   */
  perAxis: [Float64Array, Float64Array, Float64Array];
  /** True when the factors are reported sigmas (the base is then a scale). */
  reported: boolean;
  /** Which columns were used. */
  used: string[];
  /**
   * The quality columns the exponents apply to (none with reported sigmas; fix quality only where it
   * varies), and whether the reported sigmas get one (where they vary).
   */
  exponents: { hdop: boolean; sats: boolean; fixQuality: boolean; reported: boolean };
  /** With reported sigmas: their medians per axis (east, north, up), which an exponent keeps fixed. */
  reportedMedians?: [number, number, number];
  /** The session medians the relative factors are taken against (NaN where a column is absent). */
  medians: { hdop: number; vdop: number; sats: number; fixQualityMode: number };
}

/**
 * The logarithms of the relative quality terms of fix i, as written into `out`: [log of the
 * horizontal DOP ratio, log of the vertical one (hdop's where there is no vdop), ½ log(median sats /
 * sats), log of the fix quality factor ratio]; 0 for a term whose column is absent or empty.
 * The factor of axis a under exponents (αₕ, αₛ, α_q) is exp(αₕ·out[a<2 ? 0 : 1] + αₛ·out[2] + α_q·out[3]).
 */
export function qualityLogTerms(s: FixSeries, f: FixSigmaFactors, i: number, out: Float64Array): void {
  const q = s.quality;
  const hd = q.hdop, vd = q.vdop, sats = q.sats, fq = q.fixQuality;
  const { hdop: mh, vdop: mv, sats: ms, fixQualityMode: mq } = f.medians;
  let lh = 0, lv = 0, ls = 0, lq = 0;
  if (hd && Number.isFinite(mh) && hd[i]! > 0) lh = Math.log(hd[i]! / mh);
  if (vd && Number.isFinite(mv) && vd[i]! > 0) lv = Math.log(vd[i]! / mv);
  else lv = lh;
  if (sats && Number.isFinite(ms) && sats[i]! > 0) ls = 0.5 * Math.log(ms / Math.max(sats[i]!, 3));
  if (fq && Number.isFinite(mq) && Number.isFinite(fq[i]!)) lq = Math.log((FIX_QUALITY_FACTOR[fq[i]!] ?? 1) / (FIX_QUALITY_FACTOR[mq] ?? 1));
  out[0] = lh;
  out[1] = lv;
  out[2] = ls;
  out[3] = lq;
}

/** The last exponents' factors of each FixSigmaFactors (the final run and the review build them once). */
const withExponents = new WeakMap<FixSigmaFactors, { aH: number; aS: number; aQ: number; aR: number; perAxis: [Float64Array, Float64Array, Float64Array] }>();

/**
 * Per-fix factors (east, north, up) under exponents αₕ (DOP), αₛ (satellite count) and α_q (fix
 * quality): perAxis itself at 1, 1, 1 (or where the exponents do not apply), otherwise
 * exp(αₕ·log DOP ratio + αₛ·½ log sats ratio + α_q·log fix quality ratio) per fix (qualityLogTerms).
 * The last result is kept.
 */
export function factorsWithExponents(s: FixSeries, f: FixSigmaFactors, aH = 1, aS = 1, aQ = 1, aR = 1): [Float64Array, Float64Array, Float64Array] {
  if (f.reported) return reportedWithExponent(f, f.exponents.reported ? aR : 1);
  if (!f.exponents.hdop) aH = 1;
  if (!f.exponents.sats) aS = 1;
  if (!f.exponents.fixQuality) aQ = 1;
  if (aH === 1 && aS === 1 && aQ === 1) return f.perAxis;
  const c = withExponents.get(f);
  if (c && c.aH === aH && c.aS === aS && c.aQ === aQ) return c.perAxis;
  const n = s.n;
  const fh = new Float64Array(n), fv = new Float64Array(n);
  const t = new Float64Array(4);
  for (let i = 0; i < n; i++) {
    qualityLogTerms(s, f, i, t);
    fh[i] = Math.exp(aH * t[0]! + aS * t[2]! + aQ * t[3]!);
    fv[i] = Math.exp(aH * t[1]! + aS * t[2]! + aQ * t[3]!);
  }
  const perAxis: [Float64Array, Float64Array, Float64Array] = [fh, fh, fv];
  withExponents.set(f, { aH, aS, aQ, aR: 1, perAxis });
  return perAxis;
}

export function fixSigmaFactors(s: FixSeries): FixSigmaFactors {
  const n = s.n;
  // fh is the medians' scratch before the loop below writes every element of fh and fv (the values
  // a fill with 1 and the loop gave; two arrays of fresh memory less, 16 MB at 1M fixes)
  const fh = new Float64Array(n);
  const fv = new Float64Array(n);
  const used: string[] = [];
  const q = s.quality;
  const hd = q.hdop, vd = q.vdop, sats = q.sats, fq = q.fixQuality;
  const mh = median(hd, fh), mv = median(vd, fh), ms = median(sats, fh), mq = mode(fq);
  if (hd && Number.isFinite(mh)) used.push('hdop');
  if (vd && Number.isFinite(mv)) used.push('vdop');
  if (sats && Number.isFinite(ms)) used.push('sats');
  if (fq && Number.isFinite(mq)) used.push('fix_quality');
  const qRef = FIX_QUALITY_FACTOR[mq] ?? 1;
  const medians = { hdop: mh, vdop: mv, sats: ms, fixQualityMode: mq };
  for (let i = 0; i < n; i++) {
    let h = 1, v = 1;
    if (hd && Number.isFinite(mh) && hd[i]! > 0) h *= hd[i]! / mh;
    if (vd && Number.isFinite(mv) && vd[i]! > 0) v *= vd[i]! / mv;
    else if (hd && Number.isFinite(mh) && hd[i]! > 0) v *= hd[i]! / mh;
    if (sats && Number.isFinite(ms) && sats[i]! > 0) {
      const f = Math.sqrt(ms / Math.max(sats[i]!, 3));
      h *= f;
      v *= f;
    }
    if (fq && Number.isFinite(mq) && Number.isFinite(fq[i]!)) {
      const f = (FIX_QUALITY_FACTOR[fq[i]!] ?? 1) / qRef;
      h *= f;
      v *= f;
    }
    fh[i] = h;
    fv[i] = v;
  }
  if (q.sdEast && q.sdNorth) {
    // reported sigmas: absolute per fix; a row without them gets the session median times its relative factor
    used.push('sd_east', 'sd_north');
    if (q.sdUp) used.push('sd_up');
    const src = [q.sdEast, q.sdNorth, q.sdUp];
    const med = src.map((a) => median(a));
    const out = [0, 1, 2].map((a) => {
      const f = new Float64Array(n);
      const arr = src[a];
      const m = Number.isFinite(med[a]!) ? med[a]! : a < 2 ? 1 : 2 * (Number.isFinite(med[0]!) ? med[0]! : 1);
      for (let i = 0; i < n; i++) {
        const v = arr ? arr[i]! : NaN;
        f[i] = Number.isFinite(v) && v > 0 ? v : m * (a < 2 ? fh[i]! : fv[i]!);
      }
      return f;
    }) as [Float64Array, Float64Array, Float64Array];
    const reportedMedians = out.map((a) => median(a)) as [number, number, number];
    return { perAxis: out, reported: true, used, exponents: { hdop: false, sats: false, fixQuality: false, reported: reportedVaries(out[0]!) }, medians, reportedMedians };
  }
  const exponents = { hdop: used.includes('hdop') || used.includes('vdop'), sats: used.includes('sats'), fixQuality: used.includes('fix_quality') && fixQualityVaries(fq!), reported: false };
  return { perAxis: [fh, fh, fv], reported: false, used, exponents, medians };
}

/** Least share of the fixes a second fix-quality factor must hold for its exponent to be estimated. */
const FIX_QUALITY_MIN_SHARE = 0.01;

/** Whether the fix-quality column takes at least two factors (FIX_QUALITY_FACTOR), the rarer on at least 1 % of the fixes with one. */
function fixQualityVaries(fq: Float64Array): boolean {
  const counts = new Map<number, number>();
  let n = 0;
  for (let i = 0; i < fq.length; i++) {
    if (!Number.isFinite(fq[i]!)) continue;
    const f = FIX_QUALITY_FACTOR[fq[i]!] ?? 1;
    counts.set(f, (counts.get(f) ?? 0) + 1);
    n++;
  }
  if (counts.size < 2) return false;
  const sorted = [...counts.values()].sort((a, b) => b - a);
  return sorted[1]! >= FIX_QUALITY_MIN_SHARE * n;
}

/**
 * Reported sigmas under exponent α_r: med_a · (s_i / med_a)^α_r per axis (the medians kept, so the
 * calibrated scale keeps its meaning): the reported sigmas themselves at 1, one sigma a log at 0. A
 * receiver's reported sigmas come from its own error model, which may follow the actual error
 * closely or hardly at all, so how far they are followed is estimated like the quality columns'.
 */
function reportedWithExponent(f: FixSigmaFactors, aR: number): [Float64Array, Float64Array, Float64Array] {
  if (aR === 1 || !f.reportedMedians) return f.perAxis;
  const c = withExponents.get(f);
  if (c && c.aR === aR) return c.perAxis;
  const perAxis = f.perAxis.map((a, ax) => {
    const m = f.reportedMedians![ax]!;
    const out = new Float64Array(a.length);
    for (let i = 0; i < a.length; i++) out[i] = m * Math.exp(aR * Math.log(a[i]! / m));
    return out;
  }) as [Float64Array, Float64Array, Float64Array];
  withExponents.set(f, { aH: 1, aS: 1, aQ: 1, aR, perAxis });
  return perAxis;
}

/** Whether reported sigmas vary enough for an exponent to be estimated: their 90th percentile at least 1.2 × their 10th. */
function reportedVaries(a: Float64Array): boolean {
  const v = Float64Array.from(a).filter((x) => Number.isFinite(x) && x > 0).sort();
  if (v.length < 10) return false;
  return v[Math.floor(0.9 * (v.length - 1))]! >= 1.2 * v[Math.floor(0.1 * (v.length - 1))]!;
}
