/**
 * Streaming reader of `<stem>.imu.csv`: a header row, then one IMU sample a row:
 * time (ISO 8601 with a zone/offset, or in input.timeZone; or Unix seconds/milliseconds as for fix
 * CSVs), ax, ay, az (specific force), gx, gy, gz (angular rate). Units and the sensor-to-body rotation
 * come from the `imu` config. Rows are read line by line (readline over a file stream) and handed to a
 * callback at once, so memory does not grow with the number of samples.
 * Rows that cannot be parsed are skipped with a warning (the first 20 are listed, all are counted).
 */
import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import type { HindcastConfig } from '../config/schema.js';
import { InputError, type InputWarning } from '../errors.js';
import { rotationZyx } from '../models/ins/attitude.js';
import { parseIsoToUnix } from '../time/parse-time.js';

/** Standard gravity (m/s² per g), the conventional unit of accelerometers (CGPM 1901). */
export const STANDARD_GRAVITY_MPS2 = 9.80665;

const TIME_NAMES = ['time', 't', 'timestamp', 'unix_time', 'utc'];
const AXES = ['ax', 'ay', 'az', 'gx', 'gy', 'gz'] as const;

export interface ImuReadStats {
  samples: number;
  skipped: number;
  warnings: InputWarning[];
}

/** Receives one sample: UTC Unix seconds, specific force (m/s²) and angular rate (rad/s) in the body frame. */
export type ImuSampleSink = (tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number) => void;

function detect(header: string): string {
  let best = ',';
  let count = 0;
  for (const d of [',', ';', '\t', '|']) {
    const c = header.split(d).length - 1;
    if (c > count) {
      best = d;
      count = c;
    }
  }
  return best;
}

/** A line parser for a given header, config and sink (exported for tests and in-memory use). */
export function makeImuLineParser(file: string, cfg: HindcastConfig, sink: ImuSampleSink) {
  const imu = cfg.imu;
  const accelScale = imu.accelUnit === 'g' ? STANDARD_GRAVITY_MPS2 : 1;
  const gyroScale = imu.gyroUnit === 'degps' ? Math.PI / 180 : 1;
  const d2r = Math.PI / 180;
  const Cbs = rotationZyx(imu.sensorToBodyDeg.roll * d2r, imu.sensorToBodyDeg.pitch * d2r, imu.sensorToBodyDeg.yaw * d2r, new Float64Array(9));
  const identity = Cbs[0] === 1 && Cbs[4] === 1 && Cbs[8] === 1;
  const stats: ImuReadStats = { samples: 0, skipped: 0, warnings: [] };
  let delimiter = cfg.input.delimiter ?? ',';
  let iTime = -1;
  const iAx = [-1, -1, -1, -1, -1, -1];
  let lineNo = 0;
  let headerDone = false;
  let msNoted = false;
  const zone = cfg.input.timeZone;
  const unit = cfg.input.timeUnit;
  const v = new Float64Array(6);
  const skip = (why: string) => {
    stats.skipped++;
    if (stats.warnings.length < 20) stats.warnings.push({ file, line: lineNo, code: 'row-skipped', message: why });
  };
  const line = (raw: string): void => {
    lineNo++;
    const text = lineNo === 1 ? raw.replace(/^\uFEFF/, '') : raw;
    if (!headerDone) {
      if (text.trim() === '') throw new InputError({ file, line: lineNo }, 'empty header line: an IMU CSV needs a header row');
      delimiter = cfg.input.delimiter ?? detect(text);
      const names = text.split(delimiter).map((s) => s.trim().toLowerCase().replace(/^"|"$/g, ''));
      iTime = names.findIndex((n) => TIME_NAMES.includes(n));
      AXES.forEach((a, j) => (iAx[j] = names.indexOf(a)));
      const missing = [iTime < 0 ? 'time' : '', ...AXES.filter((_, j) => iAx[j]! < 0)].filter((s) => s);
      if (missing.length) throw new InputError({ file, line: 1 }, `no ${missing.join(', ')} column in the IMU header (${names.join(', ')}); expected time, ax, ay, az, gx, gy, gz`);
      headerDone = true;
      return;
    }
    if (text.trim() === '') return;
    const cells = text.split(delimiter);
    const tt = (cells[iTime] ?? '').trim();
    let t = Number(tt);
    if (tt === '') t = NaN;
    else if (Number.isFinite(t)) {
      const ms = unit === 'ms' || (unit === 'auto' && Math.abs(t) > 1e11);
      if (ms) {
        t /= 1000;
        if (unit === 'auto' && !msNoted) {
          msNoted = true;
          stats.warnings.push({ file, code: 'time-unit', message: 'numeric IMU times larger than 1e11 read as Unix milliseconds' });
        }
      }
    } else t = parseIsoToUnix(tt.replace(/^"|"$/g, ''), zone);
    if (!Number.isFinite(t)) return skip(`time "${tt}" is not an ISO 8601 time with a zone nor a Unix time`);
    for (let j = 0; j < 6; j++) {
      const c = cells[iAx[j]!];
      const x = c === undefined || c.trim() === '' ? NaN : Number(c);
      if (!Number.isFinite(x)) return skip(`${AXES[j]} "${c ?? ''}" is not a number`);
      v[j] = x * (j < 3 ? accelScale : gyroScale);
    }
    stats.samples++;
    if (identity) sink(t, v[0]!, v[1]!, v[2]!, v[3]!, v[4]!, v[5]!);
    else {
      // body = C_bs · sensor
      const C = Cbs;
      sink(
        t,
        C[0]! * v[0]! + C[1]! * v[1]! + C[2]! * v[2]!,
        C[3]! * v[0]! + C[4]! * v[1]! + C[5]! * v[2]!,
        C[6]! * v[0]! + C[7]! * v[1]! + C[8]! * v[2]!,
        C[0]! * v[3]! + C[1]! * v[4]! + C[2]! * v[5]!,
        C[3]! * v[3]! + C[4]! * v[4]! + C[5]! * v[5]!,
        C[6]! * v[3]! + C[7]! * v[4]! + C[8]! * v[5]!,
      );
    }
  };
  const finish = (): ImuReadStats => {
    if (!headerDone) throw new InputError({ file }, 'empty IMU file');
    if (stats.skipped > 20) stats.warnings.push({ file, code: 'row-skipped', message: `${stats.skipped} IMU rows skipped in all (first 20 listed)` });
    return stats;
  };
  return { line, finish };
}

/** Read an IMU CSV file as a stream, calling `sink` for every sample in file order. */
export async function streamImuCsv(path: string, displayName: string, cfg: HindcastConfig, sink: ImuSampleSink): Promise<ImuReadStats> {
  const p = makeImuLineParser(displayName, cfg, sink);
  const input = createReadStream(path, { encoding: 'utf8', highWaterMark: 1 << 20 });
  const opened = new Promise<void>((resolve, reject) => {
    input.once('open', () => resolve());
    input.once('error', (e) => reject(new InputError({ file: displayName }, `cannot read: ${(e as NodeJS.ErrnoException).code ?? e.message}`)));
  });
  await opened;
  const rl = createInterface({ input, crlfDelay: Infinity });
  for await (const l of rl) p.line(l);
  return p.finish();
}

/** Parse IMU CSV text in memory (tests, small files). */
export function parseImuCsvText(text: string, displayName: string, cfg: HindcastConfig, sink: ImuSampleSink): ImuReadStats {
  const p = makeImuLineParser(displayName, cfg, sink);
  for (const l of text.split(/\r?\n/)) p.line(l);
  return p.finish();
}
