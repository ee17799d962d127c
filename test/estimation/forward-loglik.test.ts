/**
 * forwardLogLik (the calibration's log-likelihood without a history, src/estimation/track-loglik.ts)
 * against totalLogLik of forwardFilter with the likelihood on (its general loop; the per-epoch terms
 * are checked against the textbook filter in forward-filter.test.ts), compared with Object.is: the
 * same kernels on the same numbers, without the history. Cases: gated subsets with outlier bursts (rejected fixes: capped terms), user-kept fixes,
 * a vertical axis with missing values, logs without height, a first epoch without a fix, slices as
 * the calibration takes them, r scales, and one work reused across model sets (its step cache must
 * not carry one model's F, Q into another's); besides the sum, the state the work holds after a call
 * (the last epoch's x and P) and the sums of the first 1…150 epochs, which show a difference in any
 * one epoch's term that a long sum may round away. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { forwardFilter, sameHorizontalInputs, totalLogLik, type FilterHistory, type FilterOptions, type SegmentData } from '../../src/estimation/track-filter.js';
import { forwardLogLik, forwardLogLikApplies, makeLogLikWork } from '../../src/estimation/track-loglik.js';
import { makeAxisModel } from '../../src/models/axis-model.js';
import { buildAxisModels } from '../../src/session/prepare/axis-params.js';
import { sliceSegment } from '../../src/session/prepare/prepare.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';
import { segmentCase } from '../helpers/history-compare.js';
import { rng } from '../helpers/park-miller.js';

/** The work's state after a call (x east, north, up; P east, up) equals the last epoch of the forward history; north's P is east's. */
function expectFinalState(st: Float64Array, ref: FilterHistory, nAx: number): void {
  const k = ref.N - 1;
  const got: number[] = [], want: number[] = [];
  for (let a = 0; a < nAx; a++) for (let i = 0; i < 3; i++) got.push(st[a * 3 + i]!), want.push(ref.x[a]![k * 3 + i]!);
  for (let i = 0; i < 6; i++) got.push(st[9 + i]!, st[9 + i]!), want.push(ref.P[0]![k * 6 + i]!, ref.P[1]![k * 6 + i]!);
  if (nAx === 3) for (let i = 0; i < 6; i++) got.push(st[15 + i]!), want.push(ref.P[2]![k * 6 + i]!);
  expect(got.findIndex((v, i) => !Object.is(v, want[i]))).toBe(-1);
}

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 5, 1, false],
  ['vehicle', 6, 10, false],
  ['vehicle', 1, 1, true],
  ['drone', 7, 5, false],
  ['walk', 3, 1, false],
];

describe('forwardLogLik: the calibration objective without a history', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): the same bits as totalLogLik of the forward pass', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const r = rng(seed * 7919 + rateHz);
    // as negLogLik: no re-acquisition, the likelihood on
    const lopt: FilterOptions = { ...opt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
    // variants: as simulated; some user-kept and some rejected fixes (held-fixed decisions), missing heights, no fix at the first epoch
    const use = data.use.slice();
    const zU = data.z.length > 2 ? data.z[2]!.slice() : null;
    for (let k = 1; k < data.N; k++) {
      if (use[k] !== 0 && r() < 0.05) use[k] = r() < 0.5 ? 2 : 0;
      if (zU && Number.isFinite(zU[k]!) && r() < 0.02) zU[k] = NaN;
    }
    const noFirst = data.use.slice();
    noFirst[0] = 0;
    const variants: SegmentData[] = [data, { ...data, use }, { ...data, use: noFirst }];
    if (zU) variants.push({ ...data, use, z: [data.z[0]!, data.z[1]!, zU] });
    // slices as the calibration takes them (chunks of a long segment)
    const L = Math.min(1000, data.N >> 2);
    for (const from of [0, data.N >> 3, data.N >> 1]) variants.push(sliceSegment(data, from, Math.min(data.N, from + L)));
    const w = makeLogLikWork(models.length);
    let rejected = 0;
    for (const d of variants) {
      const same = sameHorizontalInputs(d);
      expect(same).toBe(true);
      for (const rScale of [models.map(() => 1), [2.25, 2.25, 7.3], [0.04, 0.04, 150]].map((s) => s.slice(0, models.length))) {
        expect(forwardLogLikApplies(models, d, lopt, rScale, same)).toBe(true);
        const fo = { ...lopt, rScale };
        const a = forwardLogLik(models, d, lopt, rScale, w);
        const ref = forwardFilter(models, d, fo);
        expect(Object.is(a, totalLogLik(ref))).toBe(true);
        expectFinalState(w.st, ref, models.length);
        for (let k = 0; k < d.N; k++) if (d.use[k] === 1 && ref.accepted[k] === 0 && ref.dof[k] > 0) rejected++;
      }
    }
    // the capped terms of rejected fixes are covered
    expect(rejected).toBeGreaterThan(0);
    // every prefix of a slice (a sum of a few terms shows a difference in any one of them)
    const d = variants[variants.length - 1]!;
    const rScale = [1.7, 1.7, 5.2].slice(0, models.length);
    for (let n = 1; n <= Math.min(150, d.N); n++) {
      const dn = sliceSegment(d, 0, n);
      const ref = forwardFilter(models, dn, { ...lopt, rScale });
      expect(Object.is(forwardLogLik(models, dn, lopt, rScale, w), totalLogLik(ref))).toBe(true);
      expectFinalState(w.st, ref, models.length);
    }
  });

  it('one work across model sets and segments: each value as from a fresh forward pass', () => {
    const { models, data, opt } = segmentCase('vehicle', 6, 10);
    const lopt: FilterOptions = { ...opt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
    const p = models[0]!.params;
    const pv = models[2]!.params;
    // parameter sets as the optimizer visits them (each a factor of up to e^±2 from the profile), the first one again at the end
    const r = rng(31337);
    const f = () => Math.exp(4 * r() - 2);
    const sets = Array.from({ length: 12 }, () => buildAxisModels({ motion: 'cv', qHorizontal: p.q * f(), qVertical: pv.q * f(), sigmaHorizontalM: 1, sigmaVerticalM: 1, gmHorizontalSigmaM: p.gm!.sigmaM * f(), gmVerticalSigmaM: pv.gm!.sigmaM * f(), gmTauSec: p.gm!.tauSec * f() }, true));
    sets.push(sets[0]!);
    const parts = [sliceSegment(data, 0, 900), sliceSegment(data, 2000, 2900), sliceSegment(data, 900, 2000)];
    const w = makeLogLikWork(3);
    for (const m of sets) {
      const rScale = [f(), 0, f()];
      rScale[1] = rScale[0]!;
      for (const d of parts) {
        const ref = forwardFilter(m, d, { ...lopt, rScale });
        expect(Object.is(forwardLogLik(m, d, lopt, rScale, w), totalLogLik(ref))).toBe(true);
        expectFinalState(w.st, ref, 3);
      }
    }
  });

  it('applies only to its case', () => {
    const { models, data, opt } = segmentCase('vehicle', 5, 1);
    const lopt: FilterOptions = { ...opt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
    const rs = [1, 1, 1];
    expect(forwardLogLikApplies(models, data, lopt, rs, true)).toBe(true);
    // inputs of east and north not the same, a re-acquisition possible, a q scale, unequal horizontal r scales
    expect(forwardLogLikApplies(models, data, lopt, rs, false)).toBe(false);
    expect(forwardLogLikApplies(models, data, { ...lopt, reacquireAfter: 5 }, rs, true)).toBe(false);
    expect(forwardLogLikApplies(models, data, { ...lopt, qScale: models.map(() => new Float64Array(data.N).fill(1)) }, rs, true)).toBe(false);
    expect(forwardLogLikApplies(models, data, lopt, [1, 2, 1], true)).toBe(false);
    // east and north not one model object; a 4-state axis (constant acceleration with the correlated error)
    expect(forwardLogLikApplies([models[0]!, makeAxisModel(models[0]!.params), models[2]!], data, lopt, rs, true)).toBe(false);
    const ca = makeAxisModel({ motion: 'ca', q: 0.1, gm: { sigmaM: 1, tauSec: 60 } });
    expect(ca.n).toBe(4);
    expect(forwardLogLikApplies([ca, ca, ca], data, lopt, rs, true)).toBe(false);
    // a data set whose east and north variances differ somewhere
    const r1 = data.r[1]!.slice();
    r1[7] = r1[7]! * 2;
    expect(sameHorizontalInputs({ ...data, r: [data.r[0]!, r1, ...data.r.slice(2)] })).toBe(false);
    expect(sameHorizontalInputs(data)).toBe(true);
  });
});
