/**
 * Backward Rauch–Tung–Striebel pass over a segment's forward history, in place (the filtered
 * estimate of epoch k is replaced by the smoothed one). Uses the same step matrices as the forward
 * pass, including the extra noise recorded at re-acquisitions.
 * Source: Rauch, Tung, Striebel (1965); Särkkä (2013) Theorem 8.2.
 */
import type { AxisModel } from '../models/axis-model.js';
import { NumericalError } from '../errors.js';
import { makeScratch } from './kalman.js';
import { makeRtsScratch, rtsStep } from './rts.js';
import { rtsStep3 } from './kalman3.js';
import { makeStepCache, stepMatrices, type FilterHistory, type SegmentData } from './track-filter.js';

export function smoothInPlace(models: AxisModel[], data: SegmentData, h: FilterHistory, qScale?: Float64Array[] | null): void {
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const rs = models.map((m) => makeRtsScratch(m.n, makeScratch(m.n)));
  const cache = makeStepCache(models.length, models.map((m) => m.n));
  for (let k = h.N - 2; k >= 0; k--) {
    stepMatrices(models, data, h, k + 1, qScale, F, Q, cache);
    for (let a = 0; a < models.length; a++) {
      const n = models[a]!.n;
      const ok = n === 3
        ? rtsStep3(F[a]!, Q[a]!, h.x[a]!, k * 3, (k + 1) * 3, h.P[a]!, k * 9, (k + 1) * 9)
        : rtsStep(n, F[a]!, Q[a]!, h.x[a]!, k * n, (k + 1) * n, h.P[a]!, k * n * n, (k + 1) * n * n, rs[a]!);
      if (!ok) throw new NumericalError(`smoother: predicted covariance not positive definite at epoch ${k + 1}`);
    }
  }
}
