/**
 * The review statistic of src/estimation/review.ts in its former form (generic
 * loops over n with covIndex), kept verbatim as the reference for the bit-for-bit test of the
 * current form (test/estimation/review-statistic.test.ts).
 * Sources: de Jong (1988); de Jong & Penzer (1998); Teunissen (2006).
 */
import type { AxisModel } from '../../src/models/axis-model.js';
import { covIndex, covStride } from '../../src/estimation/track-filter.js';

/** Smallest share of R kept in the kept-fix residual variance, so a fix that alone determines the track cannot produce an infinite statistic. */
const MIN_RESIDUAL_SHARE = 0.02;

/**
 * Statistic of epoch k. x and P hold smoothed states (N×n per axis, and N covariances in the
 * history layout of covStride/covIndex). Returns T and writes
 * the per-axis residuals into nuOut; dof through the return of countAxes.
 */
export function refReviewStatistic(
  models: AxisModel[],
  x: Float64Array[],
  P: Float64Array[],
  k: number,
  z: Float64Array[],
  r: Float64Array[],
  used: boolean,
  nuOut: Float64Array,
): { T: number; dof: number } {
  let T = 0;
  let dof = 0;
  for (let a = 0; a < models.length; a++) {
    const zk = z[a]![k]!;
    if (!Number.isFinite(zk)) {
      nuOut[a] = NaN;
      continue;
    }
    const m = models[a]!;
    const n = m.n;
    const h = m.h;
    let hx = 0;
    let hph = 0;
    const Pk = k * covStride(n);
    for (let i = 0; i < n; i++) {
      hx += h[i]! * x[a]![k * n + i]!;
      let acc = 0;
      for (let j = 0; j < n; j++) acc += P[a]![Pk + covIndex(n, i, j)]! * h[j]!;
      hph += h[i]! * acc;
    }
    const rk = r[a]![k]!;
    // ν = z − H xˢ
    const nu = zk - hx;
    // var(ν) = R ∓ H Pˢ Hᵀ
    const v = used ? Math.max(rk - hph, MIN_RESIDUAL_SHARE * rk) : rk + hph;
    nuOut[a] = nu;
    T += (nu * nu) / v;
    dof++;
  }
  return { T, dof };
}
