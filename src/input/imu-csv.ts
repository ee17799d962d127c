/**
 * Streaming reader of `<stem>.imu.csv`: a header row, then one IMU sample a row:
 * time (ISO 8601 with a zone/offset, or in input.timeZone, or text in input.timeFormat; or Unix
 * seconds/milliseconds as for fix CSVs; a local time repeated or skipped by a clock change takes the
 * one reading that follows the previous sample within a minute, else the row is skipped), ax, ay, az (specific force), gx, gy, gz (angular rate). Units and the sensor-to-body rotation
 * come from the `imu` config. Rows are read line by line (readline over a file stream) and handed to a
 * callback at once, so memory does not grow with the number of samples.
 * Rows that cannot be parsed are skipped with a warning (the first 20 are listed, all are counted).
 * Fast path: the file is read as bytes and split into lines as readline splits them
 * (\r\n, \n or a lone \r); a data line whose needed cells are plain decimal numbers (sign, digits,
 * one point, an optional exponent; no spaces or quotes) is parsed from the bytes directly, every other
 * line (the header, ISO times, blanks, anything unusual) goes through the general line parser, so
 * warnings, errors and line numbers are the same. A decimal with at most 2⁵³ as its digit string and
 * a power of ten within ±22 is converted as one exact-operand multiplication or division, which IEEE
 * 754 rounds correctly: the same double as Number() (Clinger, "How to read floating point numbers
 * accurately", PLDI 1990, the fast path — from memory); others fall back.
 */
import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import type { HindcastConfig } from '../config/schema.js';
import { InputError, type InputWarning } from '../errors.js';
import { rotationZyx } from '../models/ins/attitude.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { LocalTimeReader } from '../time/local-time.js';

/** ISO text that carries its own offset (read as it is, whatever input.timeZone says). */
const ISO_WITH_OFFSET = /T.*(Z|[+-]\d{2}(:?\d{2})?)$/;

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
  // local times in a zone with clock changes, or a custom format (text times only)
  const local = cfg.input.timeFormat !== undefined || (zone !== undefined && zone !== 'UTC') ? new LocalTimeReader(zone, cfg.input.timeFormat) : null;
  let prevT = -Infinity;
  let clockChangeRows = 0;
  const v = new Float64Array(6);
  // fast path: the cell index of each needed value (slot 0 time, 1..6 the axes), set with the header
  let slotOf = new Int8Array(0);
  let maxCol = -1;
  let delimByte = -1;
  const fv = new Float64Array(7);
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
      maxCol = Math.max(iTime, ...iAx);
      slotOf = new Int8Array(maxCol + 1).fill(-1);
      slotOf[iTime] = 0;
      for (let j = 0; j < 6; j++) slotOf[iAx[j]!] = j + 1;
      delimByte = delimiter.length === 1 && delimiter.charCodeAt(0) < 128 ? delimiter.charCodeAt(0) : -1;
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
    } else {
      const text = tt.replace(/^"|"$/g, '');
      if (local === null || (cfg.input.timeFormat === undefined && ISO_WITH_OFFSET.test(text))) t = parseIsoToUnix(text, zone);
      else {
        const r = local.read(text);
        if (r === null) t = NaN;
        else if (!('kind' in r)) t = r.utcMs / 1000;
        else if (r.kind === 'unique') t = r.utcMs[0]! / 1000;
        else {
          // a clock change: the one reading that follows the previous sample within a minute, else skipped
          const fits = r.utcMs.map((ms) => ms / 1000).filter((x) => x >= prevT && x - prevT <= 60);
          if (fits.length !== 1)
            return skip(`local time "${tt}" ${r.kind === 'ambiguous' ? 'occurs twice' : 'does not exist'} in ${zone} (clock change) and the order of the samples does not decide it; write IMU times with an offset or in UTC`);
          t = fits[0]!;
          clockChangeRows++;
        }
      }
    }
    if (!Number.isFinite(t)) return skip(`time "${tt}" is not an ISO 8601 time with a zone nor a Unix time${cfg.input.timeFormat !== undefined ? ` nor in input.timeFormat "${cfg.input.timeFormat}"` : ''}`);
    for (let j = 0; j < 6; j++) {
      const c = cells[iAx[j]!];
      const x = c === undefined || c.trim() === '' ? NaN : Number(c);
      if (!Number.isFinite(x)) return skip(`${AXES[j]} "${c ?? ''}" is not a number`);
      v[j] = x * (j < 3 ? accelScale : gyroScale);
    }
    emit(t);
  };
  /** Hand the sample in v (sensor axes, SI units) at time t to the sink in the body frame. */
  const emit = (t: number): void => {
    stats.samples++;
    prevT = t;
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
  /**
   * The fast path for the line in bytes [s, e) of buf (no line break): true when it was a sample of
   * plain numbers and has been handled; false, with nothing consumed, when the general parser must
   * take it.
   */
  const fastLine = (buf: Uint8Array, s: number, e: number): boolean => {
    if (!headerDone || delimByte < 0 || s >= e) return false;
    let p = s, col = 0, got = 0;
    for (;;) {
      const slot = col <= maxCol ? slotOf[col]! : -1;
      if (slot >= 0) {
        let c = buf[p];
        let neg = false;
        if (c === 45) {
          neg = true;
          p++;
        } else if (c === 43) p++;
        let m = 0, digits = 0, frac = 0, dot = false;
        while (p < e) {
          c = buf[p]!;
          if (c >= 48 && c <= 57) {
            if (m > 900719925474098) return false; // m·10 + 9 would pass 2⁵³
            m = m * 10 + (c - 48);
            digits++;
            if (dot) frac++;
          } else if (c === 46 && !dot) dot = true;
          else break;
          p++;
        }
        if (digits === 0) return false;
        let ex = 0;
        if (p < e && (buf[p] === 101 || buf[p] === 69)) {
          p++;
          let eneg = false;
          if (buf[p] === 45) {
            eneg = true;
            p++;
          } else if (buf[p] === 43) p++;
          let ed = 0;
          while (p < e && buf[p]! >= 48 && buf[p]! <= 57) {
            if (ex > 1000) return false;
            ex = ex * 10 + (buf[p]! - 48);
            ed++;
            p++;
          }
          if (ed === 0) return false;
          if (eneg) ex = -ex;
        }
        if (p < e && buf[p] !== delimByte) return false;
        const pw = ex - frac;
        let x = m;
        if (pw > 0) {
          if (pw > 22) return false;
          x = m * POW10[pw]!;
        } else if (pw < 0) {
          if (pw < -22) return false;
          x = m / POW10[-pw]!;
        }
        fv[slot] = neg ? -x : x;
        if (++got === 7) break;
      } else while (p < e && buf[p] !== delimByte) p++;
      if (p >= e) return false;
      p++;
      col++;
    }
    lineNo++;
    let t = fv[0]!;
    if (unit === 'ms' || (unit === 'auto' && Math.abs(t) > 1e11)) {
      t /= 1000;
      if (unit === 'auto' && !msNoted) {
        msNoted = true;
        stats.warnings.push({ file, code: 'time-unit', message: 'numeric IMU times larger than 1e11 read as Unix milliseconds' });
      }
    }
    for (let j = 0; j < 6; j++) v[j] = fv[j + 1]! * (j < 3 ? accelScale : gyroScale);
    emit(t);
    return true;
  };
  const finish = (): ImuReadStats => {
    if (!headerDone) throw new InputError({ file }, 'empty IMU file');
    if (stats.skipped > 20) stats.warnings.push({ file, code: 'row-skipped', message: `${stats.skipped} IMU rows skipped in all (first 20 listed)` });
    if (clockChangeRows > 0)
      stats.warnings.push({ file, code: 'local-time-clock-change', message: `${clockChangeRows} IMU row(s) at local times repeated or skipped by a clock change in ${zone}, read by the order of the samples` });
    return stats;
  };
  return { line, fastLine, finish };
}

/** Exact powers of ten (10²² is the largest exactly representable as a double). */
const POW10 = Array.from({ length: 23 }, (_, i) => Number(`1e${i}`));

/**
 * Read an IMU CSV file as a stream, calling `sink` for every sample in file order: bytes split into
 * lines as readline splits them, plain numeric lines by the fast path, the rest by the line parser.
 * `chunkBytes` is the read size (tests use small ones to cross chunk boundaries).
 */
export async function streamImuCsv(path: string, displayName: string, cfg: HindcastConfig, sink: ImuSampleSink, chunkBytes = 1 << 20): Promise<ImuReadStats> {
  const p = makeImuLineParser(displayName, cfg, sink);
  const input = createReadStream(path, { highWaterMark: chunkBytes });
  const opened = new Promise<void>((resolve, reject) => {
    input.once('open', () => resolve());
    input.once('error', (e) => reject(new InputError({ file: displayName }, `cannot read: ${(e as NodeJS.ErrnoException).code ?? e.message}`)));
  });
  await opened;
  const handle = (buf: Buffer, s: number, e: number): void => {
    if (!p.fastLine(buf, s, e)) p.line(buf.toString('utf8', s, e));
  };
  // the unfinished last line of a chunk is moved to the front of `work` and the next chunk copied after it
  let work = Buffer.allocUnsafe(0);
  let carry = 0;
  for await (const chunk of input as AsyncIterable<Buffer>) {
    let buf: Buffer = chunk;
    if (carry > 0) {
      if (work.length < carry + chunk.length) {
        const w = Buffer.allocUnsafe(2 * (carry + chunk.length));
        work.copy(w, 0, 0, carry);
        work = w;
      }
      chunk.copy(work, carry);
      buf = work.subarray(0, carry + chunk.length);
    }
    const n = buf.length;
    let s = 0;
    if (buf.indexOf(13) < 0) {
      // no \r in the chunk: split at \n with the native search
      for (let i = buf.indexOf(10, s); i >= 0; i = buf.indexOf(10, s)) {
        handle(buf, s, i);
        s = i + 1;
      }
    } else {
      let i = 0;
      while (i < n) {
        const c = buf[i]!;
        if (c === 10) {
          handle(buf, s, i);
          s = ++i;
        } else if (c === 13) {
          // \r\n is one break, a lone \r another; a \r ending the chunk waits for the next byte
          if (i + 1 >= n) break;
          handle(buf, s, i);
          i += buf[i + 1] === 10 ? 2 : 1;
          s = i;
        } else i++;
      }
    }
    carry = n - s;
    if (carry > 0) {
      if (buf === work) work.copy(work, 0, s, n);
      else {
        if (work.length < carry) work = Buffer.allocUnsafe(Math.max(2 * carry, 1024));
        buf.copy(work, 0, s, n);
      }
    }
  }
  if (carry > 0) {
    // the last line: without a break, or ending in a lone \r
    handle(work, 0, work[carry - 1] === 13 ? carry - 1 : carry);
  }
  return p.finish();
}

/** The general reader alone (readline over a text stream, every line through the line parser): the reference of the fast path's tests. */
export async function streamImuCsvLines(path: string, displayName: string, cfg: HindcastConfig, sink: ImuSampleSink): Promise<ImuReadStats> {
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
