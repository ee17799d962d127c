/**
 * The calibration's likelihood kernel in WebAssembly (src/estimation/loglik-wasm.ts,
 * src/estimation/asm/loglik-kernel.ts) against forwardLogLik's TypeScript loop, with Object.is:
 * the sum and the state left in the work, over seeded model sets and r scales, one work reused
 * across segments and model sets, and a segment whose use changes between calls (use is copied at
 * every call; tSec, z and r once per segment object). Its logarithm (fdlibm's __ieee754_log, Sun
 * Microsystems 1993, e_log.c) against Math.log on seeded arguments over the whole double range.
 * forward-loglik.test.ts and calibrate-loglik.test.ts run the module too (it is the default).
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { FilterOptions, SegmentData } from '../../src/estimation/track-filter.js';
import { sameHorizontalInputs } from '../../src/estimation/track-filter.js';
import { forwardLogLik, forwardLogLikApplies, makeLogLikWork } from '../../src/estimation/track-loglik.js';
import { LOGLIK_KERNEL, kernelLog, kernelLog2Pi, makeLogLikKernel } from '../../src/estimation/loglik-wasm.js';
import { buildAxisModels, type AxisParams } from '../../src/session/prepare/axis-params.js';
import { segmentCase } from '../helpers/history-compare.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

afterEach(() => {
  LOGLIK_KERNEL.prefer = 'wasm';
});

describe('the likelihood kernel module', () => {
  it('is built and loads (a fallback to the TypeScript loop would fail this)', () => {
    expect(makeLogLikKernel()).not.toBeNull();
    expect(makeLogLikWork(3).kernel).not.toBeNull();
  });

  it('its logarithm is Math.log bit for bit (2,000,000 seeded arguments, edge cases), and so is log 2π', () => {
    const k = makeLogLikKernel()!;
    expect(Object.is(kernelLog2Pi(k), Math.log(2 * Math.PI))).toBe(true);
    const u = rng(20261202);
    const b = new Float64Array(1), w = new Uint32Array(b.buffer);
    let bad = 0;
    for (let i = 0; i < 2_000_000; i++) {
      let x: number;
      switch (i % 5) {
        case 0: x = u() * 100; break; // variances of the calibration's range
        case 1: x = Math.exp((u() - 0.5) * 1400); break; // every exponent
        case 2: w[0] = (u() * 4294967296) >>> 0; w[1] = (u() * 0x7fefffff) >>> 0; x = b[0]!; break; // any bit pattern
        case 3: x = 1 + (u() - 0.5) * 1e-5; break; // |f| < 2⁻²⁰ and near it
        default: x = u() * 1e-308; // subnormals
      }
      if (!Object.is(kernelLog(k, x), Math.log(x))) bad++;
    }
    expect(bad).toBe(0);
    for (const x of [0, -0, -1, -Infinity, Infinity, NaN, 1, 2, 0.5, Math.E, 5e-324, 2.2250738585072014e-308, Number.MAX_VALUE, 1 + 2 ** -52, 1 - 2 ** -53])
      expect(Object.is(kernelLog(k, x), Math.log(x))).toBe(true);
  });
});

const CASES: Array<['vehicle' | 'drone' | 'walk', number, number, boolean]> = [
  ['vehicle', 5, 1, false],
  ['vehicle', 6, 10, false],
  ['vehicle', 1, 1, true],
  ['drone', 7, 5, false],
  ['walk', 3, 1, false],
];

describe('forwardLogLik on the module and in TypeScript', () => {
  it('gives the same sums and final states over seeded model sets, one work reused across segments', () => {
    const wasm = makeLogLikWork(3);
    const segs = CASES.map(([kind, seed, rate, noHeight]) => ({ ...segmentCase(kind, seed, rate, noHeight), rate }));
    const u = rng(808);
    let compared = 0;
    for (let trial = 0; trial < 12; trial++) {
      for (const { models: m0, data, opt } of segs) {
        const up = m0.length === 3;
        const p: AxisParams = {
          motion: 'cv', qHorizontal: 0.05 + 2 * u(), qVertical: 0.001 + 0.1 * u(), sigmaHorizontalM: 0.5 + 2 * u(), sigmaVerticalM: 1 + 3 * u(),
          gmHorizontalSigmaM: 0.2 + 2 * u(), gmVerticalSigmaM: 0.5 + 3 * u(), gmTauSec: 10 + 200 * u(),
        };
        const models = buildAxisModels(p, up);
        const rScale = [p.sigmaHorizontalM ** 2, p.sigmaHorizontalM ** 2, p.sigmaVerticalM ** 2];
        const lopt: FilterOptions = { ...opt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
        // a calibration-sized slice (as its chunks) on odd trials, the whole segment on even ones
        const d: SegmentData = trial % 2 ? slice(data, 7, Math.min(data.N, 1007)) : data;
        if (!forwardLogLikApplies(models, d, lopt, rScale, sameHorizontalInputs(d))) continue;
        const a = forwardLogLik(models, d, lopt, rScale, wasm);
        LOGLIK_KERNEL.prefer = 'js';
        const js = makeLogLikWork(3);
        expect(js.kernel).toBeNull();
        const b = forwardLogLik(models, d, lopt, rScale, js);
        LOGLIK_KERNEL.prefer = 'wasm';
        expect(Object.is(a, b)).toBe(true);
        expect(Array.from(wasm.st).findIndex((v, i) => !Object.is(v, js.st[i]))).toBe(-1);
        compared++;
      }
    }
    expect(compared).toBeGreaterThanOrEqual(40);
  });

  it('follows a change of use on the same segment object between calls (held-fixed decisions)', () => {
    const { models, data, opt } = segmentCase('vehicle', 6, 10, false);
    const lopt: FilterOptions = { ...opt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
    const rScale = [2.25, 2.25, 9];
    const wasm = makeLogLikWork(3);
    const d: SegmentData = { ...data, use: data.use.slice() };
    const first = forwardLogLik(models, d, lopt, rScale, wasm);
    const u = rng(5);
    for (let k = 1; k < d.N; k++) if (d.use[k] !== 0 && u() < 0.1) d.use[k] = u() < 0.5 ? 2 : 0;
    const second = forwardLogLik(models, d, lopt, rScale, wasm);
    expect(Object.is(first, second)).toBe(false);
    LOGLIK_KERNEL.prefer = 'js';
    expect(Object.is(second, forwardLogLik(models, d, lopt, rScale, makeLogLikWork(3)))).toBe(true);
  });
});

function slice(d: SegmentData, a: number, b: number): SegmentData {
  return { N: b - a, tSec: d.tSec.subarray(a, b), z: d.z.map((v) => v.subarray(a, b)), r: d.r.map((v) => v.subarray(a, b)), use: d.use.subarray(a, b) };
}
