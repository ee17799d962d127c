/**
 * Stationary handling of the IMU-aided path (zero-velocity and zero-angular-rate updates) on delivery
 * rounds: parked with the engine idling at the start, legs of driving each ending in a 4 s braking
 * (nearly constant deceleration, a short jerk at the stop) and a stop, fixes with 0.6 m white and
 * 0.8 m correlated error (time constant 60 s), a 100 Hz IMU with biases at the top of consumer grade
 * (accelerometer 0.05–0.1 m/s², gyro 0.2–0.35 °/s), engine vibration, three 25–35 s outages. The
 * family varies the fix rate (10 Hz, 1 Hz), stop lengths, vibration (0.01–0.05 and 0.1–0.25 m/s²
 * per axis), bias levels, the profile (with and without the non-holonomic constraint) and the IMU's
 * mounting.
 * A steady braking has a small accelerometer sd over the detector's window, so a detector on the sd
 * alone applied zero-velocity updates at up to 1.4 m/s before each stop; on the quiet logs the track
 * then sat 3–5 m off for whole stops and drives (fix epochs 4.1–4.9 m against 1.0–1.3 m fixes-only,
 * 95% coverage 0.16–0.54, outages bridged at 3–6 m), while on the rough ones the sd limit never let
 * a stop be detected. The figures printed here are the ones in docs/imu.md.
 */
import { beforeAll, describe, expect, it, test } from 'vitest';
import { processSession } from '../../src/session/process-session.js';
import { prepareSession } from '../../src/session/prepare/prepare.js';
import { axisParamsFromConfig } from '../../src/session/prepare/axis-params.js';
import { calibratedFixesOnly } from '../../src/session/calibrate/calibrated-params.js';
import { imuGnssParams, initFromTrack, insEpochs, insOptions, processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { InsSmoother } from '../../src/estimation/ins/ins-filter.js';
import { Rng } from '../../src/simulate/rng.js';
import type { ImuScenarioSpec } from '../../src/simulate/imu.js';
import { BRIDGED, KEPT, makeImuCase, score, type Score } from './helpers.js';

const D = Math.PI / 180;

interface Habit {
  seed: number;
  rateHz: number;
  profile: string;
  stopSec: [number, number];
  /** Scale of the biases (1: the top of consumer grade). */
  biasScale: number;
  mountDeg?: [number, number, number];
  label: string;
}

const FAMILY: Habit[] = [
  { seed: 1, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 1, label: '10 Hz' },
  { seed: 2, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 1, label: '10 Hz' },
  { seed: 3, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 1, label: '10 Hz' },
  { seed: 4, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 0.3, label: '10 Hz, smaller biases' },
  { seed: 5, rateHz: 1, profile: 'default', stopSec: [20, 70], biasScale: 1, label: '1 Hz' },
  { seed: 6, rateHz: 1, profile: 'default', stopSec: [20, 70], biasScale: 1, label: '1 Hz' },
  { seed: 7, rateHz: 10, profile: 'vehicle', stopSec: [20, 70], biasScale: 1, label: '10 Hz, vehicle profile (NHC)' },
  { seed: 8, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 1, mountDeg: [2, -1.5, 3], label: '10 Hz, IMU mounted 2/-1.5/3 deg off' },
  { seed: 9, rateHz: 10, profile: 'default', stopSec: [6, 20], biasScale: 1, label: '10 Hz, short stops' },
];

/** Starts from rest of a delivery round (parked start and every stop): speed 0 followed by motion. */
function countStarts(sc: { spec: ImuScenarioSpec; truthAt(t: number): { vel: [number, number, number] } }): number {
  let n = 0, wasStill = false;
  for (let t = 0; t < sc.spec.durationSec; t += 0.5) {
    const v = sc.truthAt(sc.spec.startUnixSec + t).vel;
    const still = Math.hypot(v[0], v[1], v[2]) === 0;
    if (wasStill && !still) n++;
    wasStill = still;
  }
  return n;
}

/** The delivery round of a habit: biases, vibration and outage times drawn from its seed. */
function vanSpec(h: Habit): Partial<ImuScenarioSpec> {
  const rng = new Rng(h.seed * 97 + 5);
  const sgn = () => (rng.next() < 0.5 ? -1 : 1);
  const b = h.biasScale;
  const ab = () => sgn() * b * rng.uniform(0.05, 0.1);
  const gb = () => sgn() * b * rng.uniform(0.2, 0.35) * D;
  const durationSec = 600;
  const gaps: Array<[number, number]> = [
    [rng.uniform(120, 160), 25],
    [rng.uniform(300, 340), 35],
    [rng.uniform(460, 500), rng.uniform(25, 35)],
  ];
  return {
    durationSec,
    fixRateHz: h.rateHz,
    errors: { whiteSigmaHM: 0.6, whiteSigmaVM: 1.0, gmSigmaHM: 0.8, gmSigmaVM: 1.4, gmTauSec: 60, burstsPer100: 0, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps, nullIslandRows: 0, varyHdop: true },
    drive: { kind: 'delivery', parkedStartSec: 30, stopSec: h.stopSec, brakeSec: 4, pullAwaySec: 6, legSec: [30, 90] },
    // odd seeds a quiet, well-damped mounting; even seeds a rough idle
    vibration: { accelSdMps2: h.seed % 2 ? rng.uniform(0.01, 0.05) : rng.uniform(0.1, 0.25), gyroSdRadps: rng.uniform(0.001, 0.004), freqHz: rng.uniform(20, 35) },
    imu: { accelBias: [ab(), ab(), ab()], gyroBias: [gb(), gb(), gb()], accelNoiseSd: 0.05, gyroNoiseSd: 0.15 * D },
    mountDeg: h.mountDeg,
  };
}

interface Pool {
  n: number;
  s2: number;
  inside: number;
}
const pool = (): Pool => ({ n: 0, s2: 0, inside: 0 });
const add = (p: Pool, s: Score) => {
  p.n += s.n;
  p.s2 += s.rmseH * s.rmseH * s.n;
  p.inside += s.coverage95 * s.n;
};
const rms = (p: Pool) => Math.sqrt(p.s2 / p.n);
const cov = (p: Pool) => p.inside / p.n;

describe('IMU-aided delivery rounds (parked start, braked stops, idling engine), nine logs pooled', () => {
  const imuKept = pool(), foKept = pool(), imuGap = pool(), foGap = pool();
  const perLog: Array<{ label: string; imu: Score; fo: Score; gap: Score; foGapS: Score }> = [];
  let movingZupts = 0, maxZuptSpeed = 0, starts = 0, stillEpochs = 0, stillZupts = 0;
  beforeAll(async () => {
    for (const h of FAMILY) {
      const c = makeImuCase(h.seed, vanSpec(h), {}, h.profile);
      const fo = processSession(c.series, c.cfg, 'van');
      const im = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'van');
      const a = score(im, c.sc, KEPT), b = score(fo, c.sc, KEPT), g = score(im, c.sc, BRIDGED), gf = score(fo, c.sc, BRIDGED);
      add(imuKept, a);
      add(foKept, b);
      add(imuGap, g);
      add(foGap, gf);
      perLog.push({ label: `seed ${h.seed} (${h.label})`, imu: a, fo: b, gap: g, foGapS: gf });
      console.log(`seed ${h.seed} (${h.label}): fix epochs IMU ${a.rmseH.toFixed(2)} m (95% ${a.coverage95.toFixed(3)}), fixes-only ${b.rmseH.toFixed(2)} m (${b.coverage95.toFixed(3)}); outages IMU ${g.rmseH.toFixed(2)} m (95% ${g.coverage95.toFixed(3)}, n ${g.n}), fixes-only ${gf.rmseH.toFixed(2)} m`);
      if (h.seed === 1 || h.seed === 5) {
        // the forward filter alone: where did it apply zero-velocity updates?
        const ps = prepareSession(c.series, c.cfg);
        const { result: base, cal } = calibratedFixesOnly(ps, c.cfg, 'van');
        const ep = insEpochs(ps, c.cfg, cal.params);
        const opt = insOptions(ps, c.cfg, imuGnssParams(cal.params));
        const engine = new InsSmoother(ep, initFromTrack(base, c.cfg), opt);
        c.sc.forEachSample((t, fx, fy, fz, wx, wy, wz) => engine.addSample(t, fx, fy, fz, wx, wy, wz));
        engine.finishStream();
        starts += c.sc.spec.drive ? countStarts(c.sc) : 0;
        for (let k = 0; k < ep.N; k++) {
          const v = c.sc.truthAt(ep.tSec[k]!).vel;
          const speed = Math.hypot(v[0], v[1], v[2]);
          if (speed > 0.01 && engine.products.stationary[k]) {
            movingZupts++;
            maxZuptSpeed = Math.max(maxZuptSpeed, speed);
          }
          if (speed === 0) {
            stillEpochs++;
            if (engine.products.stationary[k]) stillZupts++;
          }
        }
      }
    }
    console.log(`pooled: fix epochs IMU ${rms(imuKept).toFixed(3)} m (95% ${cov(imuKept).toFixed(3)} of ${imuKept.n}), fixes-only ${rms(foKept).toFixed(3)} m (${cov(foKept).toFixed(3)}); outages IMU ${rms(imuGap).toFixed(3)} m (95% ${cov(imuGap).toFixed(3)} of ${imuGap.n}), fixes-only ${rms(foGap).toFixed(3)} m`);
    console.log(`zero-velocity updates: ${movingZupts} while moving faster than 0.01 m/s (fastest ${maxZuptSpeed.toFixed(3)} m/s; ${starts} starts from rest); ${stillZupts} of ${stillEpochs} still epochs`);
  }, 900_000);

  test('no zero-velocity update while the vehicle moves faster than 0.1 m/s (braking, pulling away); most still epochs get one', () => {
    // the detector's window looks back: pulling away, the first 0.1 s (a few cm/s) can still get one
    expect(maxZuptSpeed).toBeLessThan(0.1);
    expect(movingZupts).toBeLessThanOrEqual(starts);
    // the detector needs a full window of stillness after the jerk of the stop (1 s of each 6–70 s stop)
    expect(stillZupts / stillEpochs).toBeGreaterThan(0.85);
  });

  // Pooled, the IMU-aided track is level with the fixes-only one or better (1.19 against 1.20 m here;
  // 1.10 against 1.14 m on seeds 11–19). Per log it scatters (0.72–1.12 ×; 0.62–1.31 × on seeds 11–19):
  // the correlated fix error's calibrated time constant (200–320 s for the simulated 60 s) lets the
  // stiff track of a log with long stops keep minute-long offsets from the fixes. With the simulated
  // values put in, the IMU track was 0.83–0.96 × fixes-only on the logs tried (scratch run).
  test('fix epochs: the IMU-aided track no worse than the fixes-only run (pooled RMS); no log worse by more than 35%', () => {
    expect(rms(imuKept)).toBeLessThanOrEqual(rms(foKept));
    for (const l of perLog) expect(l.imu.rmseH, l.label).toBeLessThanOrEqual(1.35 * l.fo.rmseH);
  });

  test('25–35 s outages bridged at ≤ 3 m RMS and ≤ 0.3 × the fixes-only bridge (pooled and per log)', () => {
    expect(imuGap.n).toBeGreaterThan(2000);
    expect(rms(imuGap)).toBeLessThanOrEqual(3);
    expect(rms(imuGap)).toBeLessThanOrEqual(0.3 * rms(foGap));
    for (const l of perLog) {
      expect(l.gap.rmseH, l.label).toBeLessThanOrEqual(3);
      expect(l.gap.rmseH, l.label).toBeLessThanOrEqual(0.3 * l.foGapS.rmseH);
    }
  });

  test('outages: at least 85% of the bridged epochs inside their 95% ellipse (pooled)', () => {
    expect(cov(imuGap)).toBeGreaterThanOrEqual(0.85);
  });

  test('fix epochs: 95% horizontal coverage at least 0.90 pooled, no log below 0.80', () => {
    expect(cov(imuKept)).toBeGreaterThanOrEqual(0.9);
    for (const l of perLog) expect(l.imu.coverage95, l.label).toBeGreaterThanOrEqual(0.8);
  });

  // The regions are not too wide: with the profile's 1.5 m as a floor on the correlated sigma (for
  // the simulated 0.8 m) they held the truth 0.995 of the time at fix epochs and 1.000 in outages;
  // with the calibrated sigma and the correlated-error floor 0.97 and 0.96.
  test('fix epochs: 95% horizontal coverage at most 0.99 pooled', () => {
    expect(cov(imuKept)).toBeLessThanOrEqual(0.99);
  });
});

describe('IMU-aided delivery round that pulls away within the levelling time', () => {
  it('the alignment is not taken as static (the fixes-only track moves during the levelling time), and the track stays level with the fixes-only one', async () => {
    const h: Habit = { seed: 21, rateHz: 10, profile: 'default', stopSec: [20, 70], biasScale: 1, label: 'no parked start' };
    const spec = vanSpec(h);
    // a steady 8 s pull-away from the first fix on: over the 5 s of levelling the accelerometer sd stays small
    const c = makeImuCase(h.seed, { ...spec, drive: { ...spec.drive!, parkedStartSec: 0.05, pullAwaySec: 8 } }, {}, h.profile);
    const fo = processSession(c.series, c.cfg, 'van');
    const im = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'van');
    const al = (im.info.imu as { alignments: Array<{ static: boolean; pitchDeg: number }> }).alignments[0]!;
    const a = score(im, c.sc, KEPT), b = score(fo, c.sc, KEPT);
    console.log(`pull-away start: alignment static ${al.static}, pitch ${al.pitchDeg.toFixed(2)}°; fix epochs IMU ${a.rmseH.toFixed(2)} m (95% ${a.coverage95.toFixed(3)}), fixes-only ${b.rmseH.toFixed(2)} m`);
    expect(al.static).toBe(false);
    expect(a.rmseH).toBeLessThanOrEqual(1.35 * b.rmseH);
  }, 120_000);
});
