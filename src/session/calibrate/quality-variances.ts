/**
 * The calibration's measurement variances under quality-column exponents αₕ, αₛ, α_q: r = factor²,
 * factor = exp(αₕ·log DOP ratio + αₛ·½ log sats ratio + α_q·log fix-quality ratio), from the per-epoch
 * log terms of qualityLogTerms (4 an epoch: DOP horizontal, DOP vertical, sats, fix quality). The
 * optimizer changes the exponents at nearly every evaluation, so the variances are rewritten each
 * time. DOP is logged to a tenth and the satellite count is an integer, so a log holds few distinct
 * term combinations (tens to a few hundred in thousands of epochs): qualityTable finds them once,
 * and applyQualityTable computes each combination's factor once an evaluation, with the same
 * expression on the same numbers as the per-epoch form, so the same bits
 * (test/session/calibrate/quality-variances.test.ts holds the per-epoch form).
 */
import type { SegmentData } from '../../estimation/track-filter.js';

/** The distinct (DOP, sats, fix quality) log-term combinations of a calibration item, horizontal and vertical. */
export interface QualityTable {
  /** Per epoch, the index of its horizontal and its vertical combination. */
  idxH: Uint32Array;
  idxV: Uint32Array;
  /** Per combination: the DOP term, the sats term and the fix-quality term (3 a combination). */
  combH: Float64Array;
  combV: Float64Array;
  /** Scratch: each combination's variance under the current exponents. */
  varH: Float64Array;
  varV: Float64Array;
}

/** The distinct combinations of `terms` (4 an epoch, as qualityLogTerms writes them) over N epochs. */
export function qualityTable(terms: Float64Array, N: number): QualityTable {
  const idxH = new Uint32Array(N), idxV = new Uint32Array(N);
  const keysH = new Map<string, number>(), keysV = new Map<string, number>();
  const combH: number[] = [], combV: number[] = [];
  for (let k = 0; k < N; k++) {
    const o = 4 * k;
    const dh = terms[o]!, dv = terms[o + 1]!, s = terms[o + 2]!, q = terms[o + 3]!;
    // String(x) round-trips a double exactly, so equal keys are equal numbers (−0 and 0 give the same factor)
    const kh = `${dh},${s},${q}`, kv = `${dv},${s},${q}`;
    let ih = keysH.get(kh);
    if (ih === undefined) keysH.set(kh, (ih = combH.push(dh, s, q) / 3 - 1));
    let iv = keysV.get(kv);
    if (iv === undefined) keysV.set(kv, (iv = combV.push(dv, s, q) / 3 - 1));
    idxH[k] = ih;
    idxV[k] = iv;
  }
  return {
    idxH,
    idxV,
    combH: Float64Array.from(combH),
    combV: Float64Array.from(combV),
    varH: new Float64Array(combH.length / 3),
    varV: new Float64Array(combV.length / 3),
  };
}

/** The variances through the table: the per-epoch form's, one exp a combination instead of one an epoch. Epochs without a fix (east variance not finite) are left as they are; up likewise. */
export function applyQualityTable(d: SegmentData, t: QualityTable, aH: number, aS: number, aQ = 1): void {
  const { combH, combV, varH, varV, idxH, idxV } = t;
  for (let u = 0; u < varH.length; u++) {
    const c = 3 * u;
    // the per-epoch form's expression, operand for operand
    const fh = Math.exp(aH * combH[c]! + aS * combH[c + 1]! + aQ * combH[c + 2]!);
    varH[u] = fh * fh;
  }
  const rE = d.r[0]!, rN = d.r[1]!, rU = d.r[2];
  if (rU)
    for (let u = 0; u < varV.length; u++) {
      const c = 3 * u;
      const fv = Math.exp(aH * combV[c]! + aS * combV[c + 1]! + aQ * combV[c + 2]!);
      varV[u] = fv * fv;
    }
  for (let k = 0; k < d.N; k++) {
    if (!Number.isFinite(rE[k]!)) continue;
    const v = varH[idxH[k]!]!;
    rE[k] = v;
    rN[k] = v;
    if (rU && Number.isFinite(rU[k]!)) rU[k] = varV[idxV[k]!]!;
  }
}

/**
 * The variances of reported sigmas under exponent α_r (fix-noise.ts reportedWithExponent), at unit
 * scale: r = (med · exp(α_r · log(s / med)))² per axis; epochs without a fix are left as they are.
 */
export function applyReportedExponent(d: SegmentData, terms: Float64Array[], med: [number, number, number], aR: number): void {
  for (let a = 0; a < d.r.length; a++) {
    const r = d.r[a]!, t = terms[a]!, m = med[a]!;
    for (let k = 0; k < d.N; k++) {
      if (!Number.isFinite(r[k]!)) continue;
      const s = m * Math.exp(aR * t[k]!);
      r[k] = s * s;
    }
  }
}
