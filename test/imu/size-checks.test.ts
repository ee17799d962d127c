/**
 * The IMU filter's step functions refuse wrongly sized arguments with the step's name, the argument,
 * its length and the expected one (common practice: fail loudly instead of reading undefined as NaN).
 */
import { describe, expect, it } from 'vitest';
import { NE, packSym, propagateCovariance, type ErrorModelParams } from '../../src/estimation/ins/error-model.js';
import { InsSmoother, type InsEpochs } from '../../src/estimation/ins/ins-filter.js';
import { makeInsKernels } from '../../src/estimation/ins/kernels.js';
import { gnssRow } from '../../src/estimation/ins/measurements.js';
import { insPropagate } from '../../src/estimation/ins/propagate.js';
import { insRtsStep, makeInsRtsScratch } from '../../src/estimation/ins/rts.js';
import { makeScalarScratch, scalarJosephUpdate } from '../../src/estimation/ins/scalar-update.js';
import { makeInsScratch, makeInsState } from '../../src/estimation/ins/state.js';
import { makeMechScratch, mechanizeRates, NAV_LEN } from '../../src/models/ins/mechanization.js';

const err: ErrorModelParams = {
  accelNoiseDensity: 1e-3, gyroNoiseDensity: 1e-4, accelBiasWalk: 1e-5, gyroBiasWalk: 1e-6,
  gmSigmaHM: 0.5, gmSigmaVM: 1, gmTauSec: 60, earthRateEnu: new Float64Array(3),
};
const M = () => new Float64Array(NE * NE);

describe('size checks of the IMU steps', () => {
  it('insPropagate names a covariance of the wrong size', () => {
    const kf = makeInsKernels(err, 'js').filter;
    const s = { ...makeInsState(kf), P: new Float64Array(120) };
    expect(() => insPropagate(s, makeInsScratch(kf), err)).toThrow('insPropagate: P has 120 elements, expected 324 (18×18)');
  });

  it('the kernels name their short arguments', () => {
    expect(() => propagateCovariance(M(), M(), new Float64Array(10), M())).toThrow('propagateCovariance: P has 10 elements, expected 324 (18×18)');
    expect(() => packSym(M(), new Float64Array(171), 171)).toThrow(/packSym: out has 171 elements, expected at least 342/);
    expect(() => scalarJosephUpdate(NE, new Float64Array(17), 0, 1, new Float64Array(NE), M(), makeScalarScratch(NE))).toThrow('scalarJosephUpdate: h has 17 elements, expected 18');
    expect(() => insRtsStep(M(), M(), M(), M(), new Float64Array(NE), new Float64Array(3), M(), makeInsRtsScratch())).toThrow('insRtsStep: dx has 3 elements, expected 18 (error state)');
    expect(() => gnssRow(0, new Float64Array(2), new Float64Array(NE))).toThrow('gnssRow: leverNav has 2 elements, expected 3 (ENU)');
    const mech = { gamma0Mps2: 9.8, heightRefM: 0, earthRateEnu: new Float64Array(3) };
    expect(() => mechanizeRates(new Float64Array(NAV_LEN - 1), new Float64Array(7), mech, makeMechScratch())).toThrow(`mechanizeRates: x has ${NAV_LEN - 1} elements, expected ${NAV_LEN}`);
  });

  it('an epoch grid whose arrays do not hold N entries is refused when the filter is made', () => {
    const N = 3;
    const f = () => new Float64Array(N);
    const ep: InsEpochs = { N, tSec: f(), z: [f(), f(), new Float64Array(2)], r: [f(), f(), f()], use: new Uint8Array(N), segStart: new Uint8Array(N) };
    const init = { velocity: () => 0, yaw: () => ({ yawRad: 0, sigmaRad: 1 }) };
    expect(() => new InsSmoother(ep, init, {} as never)).toThrow('InsEpochs: z[2] has 2 elements, expected 3 (one an epoch)');
  });
});
