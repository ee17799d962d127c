/**
 * The log-likelihood of a segment under the forward filter (prediction-error decomposition:
 * Schweppe, IEEE Trans. IT-11:61–70, 1965; Harvey 1989 §3.4), without a history: what
 * totalLogLik(forwardFilter(models, data, { ...opt, likelihood: true })) returns, for the case the
 * calibration runs about a thousand times per round (calibrate.ts negLogLik): every axis n = 3,
 * north sharing east's covariances (horizontalShare), an r scale, no q scale, no re-acquisition.
 * The loop runs in WebAssembly (asm/loglik-kernel.ts through loglik-wasm.ts: the same per-axis
 * steps as kalman3.ts, predict3p, innovation3p, updateJoseph3p, updateState3, on the state in the
 * module's memory, nothing stored per epoch); without the module it is the forward filter's own
 * loop. test/estimation/forward-loglik.test.ts and loglik-wasm.test.ts compare the two.
 * Sources as track-filter.ts: gate Bar-Shalom, Li, Kirubarajan (2001) §5.4; Kalman (1960); Joseph
 * form Grewal & Andrews (2015) §6.
 */
import { checkSegment } from './segment.js';
import type { AxisModel } from '../models/axis-model.js';
import { chiSquareQuantile } from './chi-square.js';
import { allocateHistory, forwardFilter, totalLogLik, writePrior, type FilterHistory, type FilterOptions, type SegmentData } from './track-filter.js';
import { makeLogLikKernel, runLogLikKernel, type LogLikKernel } from './loglik-wasm.js';

/** Buffers of forwardLogLik, reused across calls (allocated once per calibration). */
export interface LogLikWork {
  /** One epoch: the prior is written here (writePrior). */
  h1: FilterHistory;
  /** Gate thresholds by degrees of freedom, and the gate probability they are for. */
  thresholds: number[];
  gateProbability: number;
  /** The prior and the running sum in (see forwardLogLik); after a call, the last epoch's filtered x and P and the sum. */
  st: Float64Array;
  /** The loop's WebAssembly form (./loglik-wasm.ts), or null: the forward filter's own loop. */
  kernel: LogLikKernel | null;
}

export function makeLogLikWork(nAxes: number): LogLikWork {
  const three = { n: 3 } as AxisModel;
  return {
    h1: allocateHistory(1, Array.from({ length: nAxes }, () => three)),
    thresholds: [],
    gateProbability: NaN,
    st: new Float64Array(22),
    kernel: makeLogLikKernel(),
  };
}

/**
 * Whether forwardLogLik applies: 2 or 3 axes of n = 3, east and north the same model object with
 * the same r scale, `sameInputs` (sameHorizontalInputs of the data, computed once per segment by the
 * caller), no q scale, and a re-acquisition run longer than the segment (so it never happens).
 */
export function forwardLogLikApplies(models: AxisModel[], data: SegmentData, opt: FilterOptions, rScale: number[], sameInputs: boolean): boolean {
  const nAx = models.length;
  if (nAx !== 2 && nAx !== 3) return false;
  if (models[0] !== models[1] || models[0]!.n !== 3 || (nAx === 3 && models[2]!.n !== 3)) return false;
  return sameInputs && Object.is(rScale[0], rScale[1]) && !opt.qScale && opt.reacquireAfter > data.N;
}

/**
 * Σₖ log-likelihood contribution of epoch k (forwardFilter's logLik: −½(Σ (log 2π + log S) + NIS),
 * NIS capped at the gate threshold for a rejected fix; 0 without a fix), for the case of
 * forwardLogLikApplies (checked by the caller). `rScale` multiplies the measurement variances per axis.
 */
export function forwardLogLik(models: AxisModel[], data: SegmentData, opt: FilterOptions, rScale: number[], w: LogLikWork): number {
  checkSegment('forwardLogLik', models, data);
  if (rScale.length < models.length) throw new RangeError(`forwardLogLik: rScale has ${rScale.length} elements, expected one per model (${models.length})`);
  const N = data.N;
  if (N === 0) return 0;
  const up = models.length === 3;
  if (!(w.gateProbability === opt.gateProbability)) {
    w.thresholds = [0, 0, 0, 0].map((_, d) => (d === 0 ? Infinity : chiSquareQuantile(opt.gateProbability, d)));
    w.gateProbability = opt.gateProbability;
  }
  // the prior (forwardFilter's writePrior, into the one-epoch history)
  const h1 = w.h1;
  writePrior(models, data, opt, h1);
  // the kernel's state: x east 0–2, north 3–5, up 6–8; P east (= north) 9–14, up 15–20; the sum 21
  const st = w.st;
  const xE0 = h1.x[0]!, xN0 = h1.x[1]!, PE0 = h1.P[0]!;
  st[0] = xE0[0]!; st[1] = xE0[1]!; st[2] = xE0[2]!;
  st[3] = xN0[0]!; st[4] = xN0[1]!; st[5] = xN0[2]!;
  for (let i = 0; i < 6; i++) st[9 + i] = PE0[i]!;
  if (up) {
    const xU0 = h1.x[2]!, PU0 = h1.P[2]!;
    st[6] = xU0[0]!; st[7] = xU0[1]!; st[8] = xU0[2]!;
    for (let i = 0; i < 6; i++) st[15 + i] = PU0[i]!;
  } else st.fill(0, 6, 9), st.fill(0, 15, 21);
  // totalLogLik's sum; epochs without a contribution add 0, which leaves a sum that starts at +0 unchanged
  st[21] = 0;
  if (w.kernel) return runLogLikKernel(w.kernel, models, data, w.thresholds, rScale, st);
  // without the kernel: the forward filter's own loop with the likelihood (the same kernels, so the same value)
  const h = forwardFilter(models, data, { ...opt, rScale, likelihood: true });
  const last = data.N - 1;
  for (let i = 0; i < 3; i++) {
    st[i] = h.x[0]![last * 3 + i]!;
    st[3 + i] = h.x[1]![last * 3 + i]!;
    st[6 + i] = up ? h.x[2]![last * 3 + i]! : 0;
  }
  for (let i = 0; i < 6; i++) {
    st[9 + i] = h.P[0]![last * 6 + i]!;
    st[15 + i] = up ? h.P[2]![last * 6 + i]! : 0;
  }
  st[21] = totalLogLik(h);
  return st[21]!;
}
