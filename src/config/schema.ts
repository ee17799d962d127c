/**
 * The configuration: one schema (zod) for profiles, --config files and library callers.
 * Every field has a default, so an empty object is a valid configuration.
 */
import { z } from 'zod';
import { formatHasZone, timeFormatProblem, zoneProblem } from '../time/zones.js';

/** Default of gate.reacquireAfterSec (s). */
export const REACQUIRE_AFTER_SEC = 5.5;

/** Default of noise.localScaleWindowSec (s). */
export const LOCAL_SCALE_WINDOW_SEC = 60;

/** Default of noise.correlatedFloorRatio (session/check/correlated-floor.ts; measured in docs/noise-model.md). */
export const CORRELATED_FLOOR_RATIO = { horizontal: 1.25, vertical: 1.25 } as const;

const positive = z.number().positive();

export const columnsSchema = z
  .object({
    time: z.string(),
    /** A calendar date column, when the time column holds only the time of day. */
    date: z.string(),
    gpsWeek: z.string(),
    tow: z.string(),
    lat: z.string(),
    lon: z.string(),
    /** Hemisphere letter columns (N/S, E/W) beside unsigned latitude and longitude. */
    latHemisphere: z.string(),
    lonHemisphere: z.string(),
    height: z.string(),
    hdop: z.string(),
    vdop: z.string(),
    sats: z.string(),
    fixQuality: z.string(),
    sdEast: z.string(),
    sdNorth: z.string(),
    sdUp: z.string(),
    /** A horizontal accuracy column (m, the 68% radius as phones write it), read as reported sigmas where there are no sd columns. */
    hAccuracy: z.string(),
  })
  .partial()
  .strict();

export const configSchema = z
  .object({
    /** Name of the profile this configuration came from (informational). */
    profile: z.string().default('default'),
    input: z
      .object({
        /** Header names for columns the built-in aliases do not recognise. */
        columns: columnsSchema.default({}),
        /** IANA zone for ISO times written without an offset (e.g. "Europe/Berlin"). */
        timeZone: z
          .string()
          .superRefine((v, ctx) => {
            const p = zoneProblem(v);
            if (p) ctx.addIssue({ code: 'custom', message: p });
          })
          .optional(),
        /** Format of the CSV time column in luxon tokens (e.g. "dd.MM.yyyy HH:mm:ss"), read in timeZone unless it has an offset token. */
        timeFormat: z
          .string()
          .superRefine((v, ctx) => {
            const p = timeFormatProblem(v);
            if (p) ctx.addIssue({ code: 'custom', message: p });
          })
          .optional(),
        /** Unit of numeric times: seconds, milliseconds, or decided from the magnitude. */
        timeUnit: z.enum(['s', 'ms', 'auto']).default('auto'),
        /** CSV delimiter; detected from the header line when absent. */
        delimiter: z.string().length(1).optional(),
        /**
         * Unit of CSV latitude/longitude columns: decimal degrees, radians, or degrees and decimal
         * minutes as NMEA writes them ('dm': DDMM.mmmm, DDDMM.mmmm; read so on their own where
         * hemisphere columns stand beside angles beyond ±90 / ±180). NMEA and GPX are always read
         * as their standards say.
         */
        angleUnit: z.enum(['deg', 'rad', 'dm']).default('deg'),
        /**
         * Date ("YYYY-MM-DD") of the first fix of logs that carry no date: NMEA without RMC (a UTC
         * date; later fixes roll over at UTC midnight; ignored when the log has RMC dates), and CSV
         * times of day written alone (the date in the times' own zone; a day later each time the
         * clock goes back past midnight).
         */
        date: z
          .string()
          .regex(/^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])$/, 'a UTC date as YYYY-MM-DD')
          .optional(),
        /**
         * Height reference of the fix heights (and so of the output heights). Absent: per format —
         * CSV "ellipsoidal", NMEA "ellipsoidal" (GGA altitude + geoid separation), GPX "msl"
         * (GPX 1.1 `ele` is usually above mean sea level). For NMEA "msl" keeps the GGA altitude;
         * for CSV and GPX it states what the file holds (no geoid model is applied).
         */
        heightReference: z.enum(['ellipsoidal', 'msl']).optional(),
        /** Treat any reader warning (skipped row, bad checksum, duplicate, …) as a failure of the file. */
        strict: z.boolean().default(false),
      })
      .strict()
      .superRefine((v, ctx) => {
        if (v.timeFormat !== undefined && v.timeZone === undefined && !formatHasZone(v.timeFormat))
          ctx.addIssue({ code: 'custom', path: ['timeFormat'], message: 'a time format without an offset needs input.timeZone (e.g. "Europe/Berlin", or "UTC")' });
      })
      .default({ columns: {}, timeUnit: 'auto', angleUnit: 'deg', strict: false }),
    model: z
      .object({
        /** Kinematic model per axis: constant velocity or constant acceleration. */
        motion: z.enum(['cv', 'ca']).default('cv'),
        /** Spectral density of the white acceleration (cv, m²/s³) or jerk (ca, m²/s⁵), horizontal axes. */
        qHorizontal: positive.default(0.5),
        /** The same for the vertical axis. */
        qVertical: positive.default(0.1),
        /** Prior speed scale (m/s) and acceleration scale (m/s²) for the first epoch. */
        priorSpeedMps: positive.default(30),
        priorAccelMps2: positive.default(5),
        /** Check whether the motion model is too stiff for the log and re-model it with more process noise (docs/adequacy.md). */
        adequacyCheck: z.boolean().default(true),
      })
      .strict()
      .default({ motion: 'cv', qHorizontal: 0.5, qVertical: 0.1, priorSpeedMps: 30, priorAccelMps2: 5, adequacyCheck: true }),
    noise: z
      .object({
        /** White fix noise, 1-sigma per horizontal axis (m), at the session's median quality. */
        horizontalSigmaM: positive.default(2),
        /** White fix noise, 1-sigma vertical (m). */
        verticalSigmaM: positive.default(4),
        /** Time-correlated (first-order Gauss–Markov) fix error, 1-sigma horizontal per axis (m); 0 for none. */
        correlatedHorizontalSigmaM: z.number().min(0).default(1.5),
        correlatedVerticalSigmaM: z.number().min(0).default(3),
        /** Its correlation time (s), horizontal (east and north share it). */
        correlationTimeSec: positive.default(60),
        /** The vertical correlated error's own correlation time (s); correlationTimeSec when absent. */
        verticalCorrelationTimeSec: positive.optional(),
        /**
         * Whether the calibration estimates the vertical correlation time on its own ('own') or
         * keeps it equal to the horizontal one ('shared', the default; docs/noise-model.md has the
         * measurements behind the default).
         */
        verticalCorrelationTime: z.enum(['shared', 'own']).default('shared'),
        /**
         * Where the prior of the horizontal correlated sigma is centred: on the profile value
         * ('profile', the default), or half-way (in log) between it and the vertical estimate times
         * the profile's horizontal-to-vertical ratio, with a floor on the vertical process noise
         * relative to the horizontal one ('vertical'); docs/noise-model.md has the measurements.
         */
        correlatedSigmaPrior: z.enum(['profile', 'vertical']).default('profile'),
        /** Multiplier of reported per-fix sigmas (sd_east, sd_north, sd_up) when the log has them. */
        reportedSigmaScale: positive.default(1),
        /**
         * Window (s) of the local noise scale: the fixes' variance is multiplied by a slowly varying
         * factor estimated from their scatter about the smoothed track within this window
         * (session/classify/local-noise-scale.ts); 0 turns it off.
         */
        localScaleWindowSec: z.number().min(0).default(LOCAL_SCALE_WINDOW_SEC),
        /**
         * The reported uncertainty assumes a correlated fix error of at least this many times the
         * calibrated white sigma, horizontal and vertical (session/check/correlated-floor.ts); 0 turns
         * the floor off on that axis group.
         */
        correlatedFloorRatio: z
          .object({ horizontal: z.number().min(0).default(CORRELATED_FLOOR_RATIO.horizontal), vertical: z.number().min(0).default(CORRELATED_FLOOR_RATIO.vertical) })
          .strict()
          .default({ ...CORRELATED_FLOOR_RATIO }),
      })
      .strict()
      .default({
        horizontalSigmaM: 2,
        verticalSigmaM: 4,
        correlatedHorizontalSigmaM: 1.5,
        correlatedVerticalSigmaM: 3,
        correlationTimeSec: 60,
        verticalCorrelationTime: 'shared',
        correlatedSigmaPrior: 'profile',
        reportedSigmaScale: 1,
        localScaleWindowSec: LOCAL_SCALE_WINDOW_SEC,
        correlatedFloorRatio: { ...CORRELATED_FLOOR_RATIO },
      }),
    gate: z
      .object({
        /** Probability of the chi-square gate on the normalized innovation squared. */
        probability: z.number().gt(0.5).lt(1).default(0.9995),
        /** Consecutive rejections after which the filter re-acquires the track. */
        reacquireAfter: z.number().int().min(2).default(6),
        /**
         * The run of rejections must also have lasted this long (s) before the filter re-acquires,
         * so that the rule means the same time at every fix rate (a burst of many fixes at 10 Hz is
         * not a lost track). 0: the count alone.
         */
        reacquireAfterSec: z.number().min(0).default(REACQUIRE_AFTER_SEC),
        /**
         * Widen the gate to the tails of the log's own errors (heavier than Gaussian: the same
         * threshold would reject clean fixes more often than 1 − probability); see
         * docs/noise-model.md "Gate fitted to the tails". false: the Gaussian threshold.
         */
        fitTails: z.boolean().default(true),
        /**
         * Look for runs of fixes that leave the track and come back to it (a multipath offset that
         * grows over seconds) and leave them out; see docs/outliers.md "Excursion test". false: off.
         */
        excursionTest: z.boolean().default(true),
      })
      .strict()
      .default({ probability: 0.9995, reacquireAfter: 6, reacquireAfterSec: REACQUIRE_AFTER_SEC, fitTails: true, excursionTest: true }),
    segments: z
      .object({
        /** Gaps longer than this (s) split the track into segments; shorter gaps are bridged. */
        maxGapSec: positive.default(60),
        /** A gap is bridged with rows at the nominal interval when longer than this many intervals. */
        bridgeFactor: z.number().gt(1).default(1.5),
      })
      .strict()
      .default({ maxGapSec: 60, bridgeFactor: 1.5 }),
    batch: z
      .object({
        /**
         * One noise calibration for each group of logs taken with the same receiver
         * (session/calibrate/pooled.ts): 'none' (default, every log alone), 'folder' (the logs of
         * one folder are one receiver's) or 'pattern' (logs whose relative path matches
         * poolPattern alike: its first capture group, or the whole match, names the group). The
         * fix noise is shared; each log keeps its own process noise. 'column' (poolColumn): CSV logs
         * whose first value in that column is the same.
         */
        pool: z.enum(['none', 'folder', 'pattern', 'column']).default('none'),
        /** Regular expression (JavaScript syntax) over the log's "/"-separated path relative to the input folder, for pool 'pattern'. */
        poolPattern: z.string().optional(),
        /** A CSV column naming the receiver (e.g. "receiver"), for pool 'column': logs whose first value in it is the same form a group. */
        poolColumn: z.string().min(1).optional(),
      })
      .strict()
      .superRefine((v, ctx) => {
        if (v.pool === 'column' && v.poolColumn === undefined) ctx.addIssue({ code: 'custom', path: ['poolColumn'], message: 'batch.pool "column" needs batch.poolColumn (the name of the column naming the receiver)' });
        if (v.pool === 'pattern' && v.poolPattern === undefined) ctx.addIssue({ code: 'custom', path: ['poolPattern'], message: 'batch.pool "pattern" needs batch.poolPattern (a regular expression over the log\'s relative path)' });
        if (v.poolPattern !== undefined)
          try {
            new RegExp(v.poolPattern);
          } catch (e) {
            ctx.addIssue({ code: 'custom', path: ['poolPattern'], message: `not a regular expression: ${(e as Error).message}` });
          }
      })
      .default({ pool: 'none' }),
    output: z
      .object({
        /** Decimal places of degrees in GeoJSON coordinates (RFC 7946 §11.2: 6 ≈ 0.1 m). */
        geojsonDecimals: z.number().int().min(0).max(12).default(7),
        /** Also write every epoch of the smoothed track as a GeoJSON Point carrying sd and 95% ellipse (--points). */
        points: z.boolean().default(false),
        /** Also write <stem>.gpx (GPX 1.1) with the smoothed track. */
        gpx: z.boolean().default(false),
        /** Write report.html (the offline review report) at the end of a batch. */
        report: z.boolean().default(true),
        /** Most epochs per session drawn in the report's plots; flagged fixes are always drawn on top of this. */
        reportMaxPoints: z.number().int().min(200).max(200000).default(2000),
        /** Shortest stand-still (s) reported as an occupied point (<stem>.points.csv). */
        occupationMinSec: positive.default(15),
        /** Whole tracks drawn from the smoothing posterior for lengths, areas and distances with uncertainty (0: none). */
        surveyDraws: z.number().int().min(0).max(100000).default(200),
        /** Seed of those draws (the same seed, the same figures). */
        surveySeed: z.number().int().min(0).default(1),
      })
      .strict()
      .default({ geojsonDecimals: 7, points: false, gpx: false, report: true, reportMaxPoints: 2000, occupationMinSec: 15, surveyDraws: 200, surveySeed: 1 }),
    imu: z
      .object({
        /** Unit of the accelerometer columns ax, ay, az: m/s² or standard gravities (9.80665 m/s²). */
        accelUnit: z.enum(['mps2', 'g']).default('mps2'),
        /** Unit of the gyro columns gx, gy, gz: rad/s or deg/s. */
        gyroUnit: z.enum(['radps', 'degps']).default('radps'),
        /** Rotation from the sensor axes to the body axes (x forward, y left, z up): C_bs = Rz(yaw)·Ry(pitch)·Rx(roll), degrees. */
        sensorToBodyDeg: z
          .object({ roll: z.number().default(0), pitch: z.number().default(0), yaw: z.number().default(0) })
          .strict()
          .default({ roll: 0, pitch: 0, yaw: 0 }),
        /** GNSS antenna position relative to the IMU in the body frame (x forward, y left, z up), m. */
        leverArmM: z.tuple([z.number(), z.number(), z.number()]).default([0, 0, 0]),
        /** Accelerometer white noise density (m/s²/√Hz = m/s/√s, velocity random walk). */
        accelNoiseDensity: positive.default(0.004),
        /** Gyro white noise density (rad/s/√Hz = rad/√s, angle random walk). */
        gyroNoiseDensity: positive.default(0.0004),
        /** Initial accelerometer bias uncertainty, 1-sigma per axis (m/s²). */
        accelBiasSigmaMps2: positive.default(0.1),
        /** Initial gyro bias uncertainty, 1-sigma per axis (rad/s). */
        gyroBiasSigmaRadps: positive.default(0.006),
        /** Random-walk density of the accelerometer bias (m/s²/√s). */
        accelBiasWalk: positive.default(2e-4),
        /** Random-walk density of the gyro bias (rad/s/√s). */
        gyroBiasWalk: positive.default(2e-5),
        /** Model the Earth's rotation (gyro sensing and Coriolis) in the mechanization. */
        earthRotation: z.boolean().default(true),
        /** Zero-velocity and zero-angular-rate updates while the IMU shows the vehicle stationary. */
        zupt: z.boolean().default(true),
        /** Non-holonomic constraint: no sideways or vertical velocity in the body frame (ground vehicles). */
        nhc: z.boolean().default(false),
        /** 1-sigma of the zero-velocity pseudo-measurement (m/s), for updates at least staticWindowSec apart; closer ones get a variance larger by staticWindowSec / interval. */
        zuptSigmaMps: positive.default(0.02),
        /** 1-sigma of the non-holonomic pseudo-measurement, per axis (m/s). */
        nhcSigmaMps: positive.default(0.15),
        /** Stationary detector: window (s), accelerometer sd limit over the window (m/s², the three axes together; an idling engine shakes the sensor by 0.1–0.3), rate limit (rad/s), estimated-speed limit (m/s). */
        staticWindowSec: positive.default(1),
        staticAccelSdMps2: positive.default(0.5),
        staticGyroRadps: positive.default(0.02),
        staticMaxSpeedMps: positive.default(1),
        /** Stationary detector: largest departure of the window's mean specific force from gravity (m/s²); steady braking or pulling away exceeds it. */
        staticAccelMeanMps2: positive.default(0.3),
        /** Longest accelerometer averaging for the initial levelling (s). */
        alignSec: positive.default(5),
        /** Ground speed (m/s) of the GNSS track that counts as the first motion for the initial heading. */
        headingSpeedMps: positive.default(3),
        /** Longest step of the error-covariance propagation between IMU samples (s); 1 s agrees with per-sample propagation within 0.5% through hard turns (test/imu/propagation.test.ts). */
        propagationStepSec: positive.default(1),
      })
      .strict()
      .default({
        accelUnit: 'mps2',
        gyroUnit: 'radps',
        sensorToBodyDeg: { roll: 0, pitch: 0, yaw: 0 },
        leverArmM: [0, 0, 0],
        accelNoiseDensity: 0.004,
        gyroNoiseDensity: 0.0004,
        accelBiasSigmaMps2: 0.1,
        gyroBiasSigmaRadps: 0.006,
        accelBiasWalk: 2e-4,
        gyroBiasWalk: 2e-5,
        earthRotation: true,
        zupt: true,
        nhc: false,
        zuptSigmaMps: 0.02,
        nhcSigmaMps: 0.15,
        staticWindowSec: 1,
        staticAccelSdMps2: 0.5,
        staticGyroRadps: 0.02,
        staticMaxSpeedMps: 1,
        staticAccelMeanMps2: 0.3,
        alignSec: 5,
        headingSpeedMps: 3,
        propagationStepSec: 1,
      }),
  })
  .strict();

export type HindcastConfig = z.infer<typeof configSchema>;
export type ColumnMapping = z.infer<typeof columnsSchema>;
/** A partial configuration as written in a profile or --config file. */
export type ConfigOverrides = z.input<typeof configSchema>;
