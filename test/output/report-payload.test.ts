import { describe, expect, test } from 'vitest';
import { deserialize, serialize } from 'node:v8';
import { reportPayload } from '../../src/output/report/index.js';
import { calibratedNoise, calibrationLine } from '../../src/output/report/payload.js';
import { plotEpochs } from '../../src/output/report/decimate.js';
import { collectExtensions, type ReportExtension } from '../../src/output/report/extensions.js';
import { STATUS } from '../../src/session/result/result.js';
import { session, withImu } from './fixtures.js';

const drone = () => session('drone', 5, { durationSec: 300 }).result;
const vehicle = () => session('vehicle', 7, { durationSec: 300 }).result;

describe('report payload', () => {
  test('survives structured clone and v8 serialization unchanged (plain data and typed arrays)', () => {
    const p = reportPayload(vehicle());
    expect(structuredClone(p)).toEqual(p);
    expect(deserialize(serialize(p))).toEqual(p);
  });

  test('is small: a long session is thinned', () => {
    const r = drone();
    expect(r.N).toBeGreaterThan(1400);
    const p = reportPayload(r, { maxPoints: 400 });
    expect(p.plot.tSec.length).toBeLessThan(r.N / 2);
    expect(serialize(p).length).toBeLessThan(200_000);
  });

  test.each([300, 600, 2000])('thinning to %i keeps every flagged fix, decision and bridged-span end, and the sd peak', (maxPoints) => {
    const r = drone();
    const idx = plotEpochs(r, maxPoints);
    const set = new Set(idx);
    for (let j = 1; j < idx.length; j++) expect(idx[j]).toBeGreaterThan(idx[j - 1]!);
    let flagged = 0;
    let always = 0;
    for (let j = 0; j < r.N; j++) {
      const st = r.status[j]!;
      const isFlagged = st === STATUS.outlier || st === STATUS.userKept || st === STATUS.userRejected;
      const spanEnd = st === STATUS.bridged && (r.status[j - 1] !== STATUS.bridged || r.status[j + 1] !== STATUS.bridged);
      const segEnd = j === 0 || j === r.N - 1 || r.segment[j] !== r.segment[j - 1] || r.segment[j] !== r.segment[j + 1];
      if (isFlagged) flagged++;
      if (isFlagged || spanEnd || segEnd) {
        always++;
        expect(set.has(j)).toBe(true);
      }
    }
    expect(flagged).toBeGreaterThan(0);
    // at most three a bucket (≈ maxPoints in all) plus the ones always kept; everything when it fits
    if (r.N <= maxPoints) expect(idx.length).toBe(r.N);
    else expect(idx.length).toBeLessThanOrEqual(maxPoints + 3 + always);
    let peak = 0, jPeak = 0;
    for (let j = 0; j < r.N; j++) {
      const v = r.sdEnu[0][j]! ** 2 + r.sdEnu[1][j]! ** 2;
      if (v > peak) [peak, jPeak] = [v, j];
    }
    expect(set.has(jPeak)).toBe(true);
  });

  test('bridged spans: one per run of bridged epochs, from the fix before to the fix after', () => {
    const r = vehicle();
    const p = reportPayload(r);
    let runs = 0;
    for (let j = 0; j < r.N; j++) if (r.status[j] === STATUS.bridged && r.status[j - 1] !== STATUS.bridged) runs++;
    expect(runs).toBeGreaterThan(0);
    expect(p.bridgedSpans).toHaveLength(runs);
    // a 25 s gap at 1 Hz: 24 bridged epochs, 26 s from the fix before to the fix after
    expect(p.bridgedSec).toBeCloseTo(p.bridgedSpans.reduce((a, [t0, t1]) => a + t1 - t0, 0), 9);
    expect(p.bridgedSec).toBeGreaterThan(r.metrics.bridgedCount * r.metrics.nominalIntervalSec);
  });

  test('residuals are raw minus smoothed, NaN where there is no fix', () => {
    const r = vehicle();
    const p = reportPayload(r);
    for (let k = 0; k < p.plot.tSec.length; k += 17) {
      const j = p.plot.epoch[k]!;
      if (r.fix[j]! < 0) expect(p.plot.resEast[k]).toBeNaN();
      else expect(p.plot.resEast[k]).toBeCloseTo(r.rawEnu![0][j]! - r.posEnu[0][j]!, 4);
    }
  });

  test('ellipses at intervals, the worst one among them', () => {
    const r = vehicle();
    const p = reportPayload(r);
    expect(p.ellipses.length).toBeGreaterThanOrEqual(20);
    expect(Math.max(...p.ellipses.map((e) => e.majorM))).toBeCloseTo(r.metrics.worstEll95MajorM, 9);
  });

  test.each([
    [{}, null],
    [{ calibration: { status: 'fallback', estimates: {} } }, null],
    [{ calibration: { status: 'estimated', estimates: { sigmaHorizontalM: { value: 1.3, se: 0.1 }, sigmaVerticalM: { value: 2.5, se: 0.2 } }, reportedSigmaScale: false } }, { horizontal: 1.3, vertical: 2.5, unit: 'm' }],
    [{ calibration: { status: 'estimated', estimates: { sigmaHorizontalM: { value: 0.9 } }, reportedSigmaScale: true } }, { horizontal: 0.9, vertical: NaN, unit: '× reported sd' }],
    [{ calibration: { params: { sigmaHorizontalM: 1.1, sigmaVerticalM: 2 } } }, { horizontal: 1.1, vertical: 2, unit: 'm' }],
  ])('calibrated noise from info %j', (info, want) => expect(calibratedNoise(info)).toEqual(want));

  test.each([
    [
      {
        calibration: {
          status: 'estimated', epochsUsed: 810, reportedSigmaScale: false,
          estimates: {
            sigmaHorizontalM: { value: 1.5700605, se: 0.0372223, atBound: false }, sigmaVerticalM: { value: 3.4124184, se: 0.0971338, atBound: false },
            gmHorizontalSigmaM: { value: 1.3947482, se: 0.3442129, atBound: false }, gmVerticalSigmaM: { value: 2.902909, se: 0.6133315, atBound: false },
            gmTauSec: { value: 62.820851, se: 31.232066, atBound: false },
            qHorizontal: { value: 1.5127867, se: 0.1079958, atBound: false }, qVertical: { value: 5.86057e-5, se: 5.7001e-5, atBound: false },
          },
        },
      },
      'white 1.57 ± 0.037 / 3.41 ± 0.097 m; correlated 1.39 ± 0.34 / 2.9 ± 0.61 m, time constant 62.8 ± 31.2 s; process noise 1.51 ± 0.11 / 5.9e-5 ± 5.7e-5 m²/s³ (horizontal / vertical; ± standard error; 810 epochs)',
    ],
    [
      { calibration: { status: 'estimated', reportedSigmaScale: true, estimates: { sigmaHorizontalM: { value: 0.9, se: 0.05 }, qHorizontal: { value: 1e-6, se: NaN, atBound: true } } } },
      'white 0.9 ± 0.05 × reported sd; process noise 1.0e-6 (at its bound) m²/s³ (horizontal / vertical; ± standard error)',
    ],
    [
      { calibration: { status: 'estimated', estimates: { sigmaHorizontalM: { value: 0.9, se: 0.05 } } }, tailGate: { fixes: 3000, quantileRatio: 2.39, clustering: 0.04, shape: 0.8, factor: 2, probability: 0.99999990 } },
      'white 0.9 ± 0.05 m (horizontal / vertical; ± standard error); white errors heavier-tailed than Gaussian (shape 0.80, 2 = Gaussian): outlier thresholds widened ×2.00',
    ],
    [
      { calibration: { status: 'estimated', estimates: { sigmaHorizontalM: { value: 0.9, se: 0.05 } } }, tailGate: { fixes: 3000, quantileRatio: 1.7, clustering: 0.05, shape: 2, factor: 1, probability: 0.9995 } },
      'white 0.9 ± 0.05 m (horizontal / vertical; ± standard error)',
    ],
    [{ calibration: { status: 'fallback', reason: 'only 40 usable fixes (needs 120)' } }, 'profile values (only 40 usable fixes (needs 120))'],
    [{}, null],
  ])('calibration line from info %#', (info, want) => expect(calibrationLine(info as Record<string, unknown>)).toBe(want));

  test('a calibrated session carries its calibration line into the payload', () => {
    const p = reportPayload(vehicle());
    expect(p.calibrationLine).toMatch(/^white \S+ ± \S+ \/ \S+ ± \S+ m; correlated .* time constant .* s; process noise .* m²\/s³ \(horizontal \/ vertical; ± standard error; \d+ epochs\); quality-column exponents DOP \S+( ± \S+| \(at its bound\)), satellite count \S+( ± \S+| \(at its bound\)) \(0 ignored, 1 proportional\)$/);
  });

  test('the IMU extension picks the plotted epochs of attitude and biases (gyro in deg/h)', () => {
    const r = withImu(vehicle());
    const p = reportPayload(r);
    expect(reportPayload(vehicle()).extensions).toEqual({});
    const d = p.extensions.imu!;
    const k = 77, j = p.plot.epoch[k]!;
    expect((d.rollDeg as Float32Array)[k]).toBeCloseTo(r.attitudeDeg!.roll[j]!, 4);
    expect((d.headingDeg as Float32Array)[k]).toBeCloseTo(r.attitudeDeg!.heading[j]!, 3);
    expect((d.gyroxDegph as Float32Array)[k]).toBeCloseTo(1e-4 * (180 / Math.PI) * 3600, 3);
    expect(structuredClone(p)).toEqual(p);
  });

  test('extensions: data is collected only when the optional fields are there', () => {
    const r = vehicle();
    const ext: ReportExtension = {
      id: 'fake-imu',
      title: 'Attitude',
      collect: (res, epochs) => {
        const yaw = (res as unknown as { yawDeg?: Float64Array }).yawDeg;
        return yaw ? { yawDeg: Float64Array.from(epochs, (j) => yaw[j]!) } : undefined;
      },
      charts: () => [],
    };
    const idx = plotEpochs(r, 2000);
    expect(collectExtensions(r, idx, [ext])).toEqual({});
    const withYaw = { ...r, yawDeg: Float64Array.from({ length: r.N }, (_, j) => j) };
    const got = collectExtensions(withYaw, idx, [ext]);
    expect(Array.from(got['fake-imu']!.yawDeg as Float64Array)).toEqual(Array.from(idx));
  });
});
