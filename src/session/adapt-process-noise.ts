/**
 * Manoeuvre handling: a time-varying process-noise level estimated from the data by a local EM
 * iteration. Each pass runs the filter and smoother, takes the expected process noise of every step
 * given all the data (the EM E-step, Shumway & Stoffer 1982; see estimation/track-smoother.ts),
 * expresses it as a local spectral density q̂ₖ, and smooths q̂ in time with a two-sided exponential
 * window (O(N) on irregular steps). The next pass uses q(t) = max(q̂(t), floor). Straight, steady
 * stretches get a small q (a stiff, precise track); turns, stops and starts get a large one (the
 * track follows, and its uncertainty grows there instead of the gate rejecting good fixes).
 * Choice recorded in DEVELOPERS.md ("Manoeuvres").
 */
import type { AxisModel } from '../models/axis-model.js';
import { forwardFilter, type FilterHistory, type FilterOptions, type SegmentData } from '../estimation/track-filter.js';
import { smoothInPlace } from '../estimation/track-smoother.js';

export interface AdaptOptions {
  iterations: number;
  /** Time constant (s) of the exponential window that smooths the local q estimates. */
  windowSec: number;
  /** Lowest and highest allowed ratio of local to global q. */
  minRatio: number;
  maxRatio: number;
  /** Only a local level above excessFactor × the global q raises q (manoeuvres); 0 lets it follow freely. */
  excessFactor: number;
}

export const DEFAULT_ADAPT: AdaptOptions = { iterations: 3, windowSec: 4, minRatio: 1, maxRatio: 3000, excessFactor: 3 };

/** Two-sided exponential smoothing of v over irregular times t, ignoring NaN entries. */
export function twoSidedExpSmooth(t: Float64Array, v: Float64Array, tauSec: number, out: Float64Array): void {
  const N = t.length;
  const fw = new Float64Array(N), fwW = new Float64Array(N);
  let s = 0, w = 0;
  for (let k = 0; k < N; k++) {
    const a = k > 0 ? Math.exp(-(t[k]! - t[k - 1]!) / tauSec) : 0;
    s *= a;
    w *= a;
    if (Number.isFinite(v[k]!)) {
      s += v[k]!;
      w += 1;
    }
    fw[k] = s;
    fwW[k] = w;
  }
  s = 0;
  w = 0;
  for (let k = N - 1; k >= 0; k--) {
    // the forward sum already holds sample k: the backward sum adds the later ones only
    const a = k < N - 1 ? Math.exp(-(t[k + 1]! - t[k]!) / tauSec) : 0;
    s *= a;
    w *= a;
    const tot = fw[k]! + s;
    const totW = fwW[k]! + w;
    out[k] = totW > 0 ? tot / totW : NaN;
    if (Number.isFinite(v[k]!)) {
      s += v[k]!;
      w += 1;
    }
  }
}

/**
 * Estimate per-axis q scale arrays for one segment. Axes 0 and 1 (east, north) share one level
 * (manoeuvres are not aligned with the grid); the vertical has its own.
 */
export function adaptProcessNoise(models: AxisModel[], data: SegmentData, opt: FilterOptions, ad: AdaptOptions = DEFAULT_ADAPT): { qScale: Float64Array[]; history: FilterHistory } {
  const N = data.N;
  const nAx = models.length;
  const qScale = models.map(() => new Float64Array(N).fill(1));
  const stat = models.map(() => new Float64Array(N));
  const tmp = new Float64Array(N);
  const sm = new Float64Array(N);
  let h: FilterHistory | undefined;
  for (let it = 0; it < ad.iterations; it++) {
    h = forwardFilter(models, data, { ...opt, qScale }, h && h.N === N ? resetHistory(h) : undefined);
    smoothInPlace(models, data, h, qScale, stat);
    // horizontal: mean of east and north statistics
    for (let k = 0; k < N; k++) tmp[k] = 0.5 * (stat[0]![k]! + stat[1]![k]!);
    twoSidedExpSmooth(data.tSec, tmp, ad.windowSec, sm);
    const qh = models[0]!.params.q;
    for (let k = 0; k < N; k++) {
      let r = Number.isFinite(sm[k]!) ? sm[k]! / qh : 1;
      if (ad.excessFactor > 0) r = r > ad.excessFactor ? r / ad.excessFactor : 1;
      qScale[0]![k] = qScale[1]![k] = Math.min(ad.maxRatio, Math.max(ad.minRatio, r));
    }
    if (nAx > 2) {
      twoSidedExpSmooth(data.tSec, stat[2]!, ad.windowSec, sm);
      const qv = models[2]!.params.q;
      for (let k = 0; k < N; k++) {
        let r = Number.isFinite(sm[k]!) ? sm[k]! / qv : 1;
        if (ad.excessFactor > 0) r = r > ad.excessFactor ? r / ad.excessFactor : 1;
        qScale[2]![k] = Math.min(ad.maxRatio, Math.max(ad.minRatio, r));
      }
    }
  }
  return { qScale, history: h! };
}

function resetHistory(h: FilterHistory): FilterHistory {
  h.extraQ.clear();
  h.reacquired.length = 0;
  return h;
}
