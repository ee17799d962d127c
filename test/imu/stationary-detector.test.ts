/**
 * The stationary detector of the IMU-aided filter (src/estimation/ins/stationary-detector.ts) on
 * windows built by hand, body frame level and aligned with ENU (C_nb = I), so the specific force of a
 * standing vehicle is [0, 0, γ] (a standing accelerometer measures the reaction to gravity: Groves
 * 2013 §5.6.2, levelling — from memory). The thresholds and the newest-quarter test are the
 * detector's own design (common practice for window-based stillness tests).
 */
import { describe, expect, it } from 'vitest';
import { NAV_LEN, NAV_Q, NAV_V } from '../../src/models/ins/mechanization.js';
import { detectorSaysStationary, newStationaryDetector, pushDetector, sizeDetector, type StationaryLimits } from '../../src/estimation/ins/stationary-detector.js';

const GAMMA = 9.80665;
const lim: StationaryLimits = {
  mech: { gamma0Mps2: GAMMA, heightRefM: 0, earthRateEnu: new Float64Array(3) },
  staticAccelSdMps2: 0.3,
  staticGyroRadps: 0.01,
  staticMaxSpeedMps: 0.5,
  staticAccelMeanMps2: 0.2,
};
const I3 = new Float64Array([1, 0, 0, 0, 1, 0, 0, 0, 1]);

function levelNav(): Float64Array {
  const x = new Float64Array(NAV_LEN);
  x[NAV_Q] = 1;
  return x;
}

/** A detector of 100 samples (1 s at 100 Hz) fed with forward specific forces fx[i] over gravity. */
function windowOf(fx: number[]): ReturnType<typeof newStationaryDetector> {
  const d = newStationaryDetector();
  sizeDetector(d, 1, 0.01);
  const s = new Float64Array(7);
  for (const f of fx) {
    s.set([0, f, 0, GAMMA, 0, 0, 0]);
    pushDetector(d, s, 0);
  }
  return d;
}

describe('stationary detector', () => {
  it('a still window is stationary; the ring keeps its last cap samples', () => {
    const d = windowOf(new Array(250).fill(0));
    expect(d.cap).toBe(100);
    expect(d.count).toBe(100);
    expect(detectorSaysStationary(d, levelNav(), I3, lim)).toBe(true);
  });

  it('too few samples in the window (less than half of it) is not stationary', () => {
    expect(detectorSaysStationary(windowOf(new Array(40).fill(0)), levelNav(), I3, lim)).toBe(false);
  });

  it('a steady acceleration (small spread, mean off gravity by 0.5 m/s²) is not stationary', () => {
    expect(detectorSaysStationary(windowOf(new Array(100).fill(0.5)), levelNav(), I3, lim)).toBe(false);
  });

  it('pulling away in the newest fifth: the whole-window mean is within the limit, the newest quarter is not', () => {
    const fx = [...new Array(80).fill(0), ...new Array(20).fill(0.6)];
    // whole-window mean 0.12 m/s² < 0.2; newest quarter (25 samples) 20·0.6/25 = 0.48 m/s² > 0.2
    expect(detectorSaysStationary(windowOf(fx), levelNav(), I3, lim)).toBe(false);
    // the same samples in the other order (the motion oldest): the newest quarter is still
    expect(detectorSaysStationary(windowOf([...fx].reverse()), levelNav(), I3, lim)).toBe(true);
  });

  it('an estimated speed above the limit is not stationary however still the IMU', () => {
    const x = levelNav();
    x[NAV_V] = 0.6;
    expect(detectorSaysStationary(windowOf(new Array(100).fill(0)), x, I3, lim)).toBe(false);
  });

  it('nothing before the window is sized (no interval seen yet)', () => {
    const d = newStationaryDetector();
    pushDetector(d, new Float64Array([0, 0, 0, GAMMA, 0, 0, 0]), 0);
    expect(d.count).toBe(0);
    expect(detectorSaysStationary(d, levelNav(), I3, lim)).toBe(false);
  });
});
