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
 * warnings, errors and line numbers are the same. The numbers are
 * converted as Number() converts them (input/plain-decimal-bytes.ts); others fall back.
 */
import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import type { HindcastConfig } from '../config/schema.js';
import { InputError, type InputWarning } from '../errors.js';
import { rotationZyx } from '../models/ins/attitude.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { LocalTimeReader } from '../time/local-time.js';
import { IMU_AXES, readImuHeader, type ImuCsvLayout } from './imu-csv-header.js';
import { scanPlainDecimal } from './plain-decimal-bytes.js';

/** ISO text that carries its own offset (read as it is, whatever input.timeZone says). */
const ISO_WITH_OFFSET = /T.*(Z|[+-]\d{2}(:?\d{2})?)$/;

/** Standard gravity (m/s² per g), the conventional unit of accelerometers (CGPM 1901). */
export const STANDARD_GRAVITY_MPS2 = 9.80665;

/** Skipped rows listed one by one (all are counted). */
const LISTED_SKIPS = 20;

export interface ImuReadStats {
  samples: number;
  skipped: number;
  warnings: InputWarning[];
}

/** Receives one sample: UTC Unix seconds, specific force (m/s²) and angular rate (rad/s) in the body frame. */
export type ImuSampleSink = (tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number) => void;

/** A line parser for a given header, config and sink (exported for tests and in-memory use). */
export function makeImuLineParser(file: string, cfg: HindcastConfig, sink: ImuSampleSink): ImuLineParser {
  return new ImuLineParser(file, cfg, sink);
}

/** Lines in, samples out: the header first, then one sample a line (text, or bytes by the fast path). */
class ImuLineParser {
  private readonly stats: ImuReadStats = { samples: 0, skipped: 0, warnings: [] };
  private accelScale: number;
  private gyroScale: number;
  /** Sensor → body rotation; `identity`: none. */
  private readonly Cbs: Float64Array;
  private readonly identity: boolean;
  private readonly zone: string | undefined;
  private readonly unit: HindcastConfig['input']['timeUnit'];
  /** Local times in a zone with clock changes, or a custom format (text times only). */
  private readonly local: LocalTimeReader | null;
  /** The header's layout, null until the header line is read. */
  private layout: ImuCsvLayout | null = null;
  private lineNo = 0;
  private msNoted = false;
  private prevT = -Infinity;
  private clockChangeRows = 0;
  /** The sample being read: sensor axes, SI units. */
  private readonly v = new Float64Array(6);
  /** Fast path: the values by slot (0 time, 1..6 the axes, as read). */
  private readonly fv = new Float64Array(7);

  constructor(private readonly file: string, private readonly cfg: HindcastConfig, private readonly sink: ImuSampleSink) {
    const imu = cfg.imu;
    this.accelScale = imu.accelUnit === 'g' ? STANDARD_GRAVITY_MPS2 : 1;
    this.gyroScale = imu.gyroUnit === 'degps' ? Math.PI / 180 : 1;
    const d2r = Math.PI / 180;
    this.Cbs = rotationZyx(imu.sensorToBodyDeg.roll * d2r, imu.sensorToBodyDeg.pitch * d2r, imu.sensorToBodyDeg.yaw * d2r, new Float64Array(9));
    this.identity = this.Cbs[0] === 1 && this.Cbs[4] === 1 && this.Cbs[8] === 1;
    this.zone = cfg.input.timeZone;
    this.unit = cfg.input.timeUnit;
    this.local = cfg.input.timeFormat !== undefined || (this.zone !== undefined && this.zone !== 'UTC') ? new LocalTimeReader(this.zone, cfg.input.timeFormat) : null;
  }

  private skip(why: string): void {
    this.stats.skipped++;
    if (this.stats.warnings.length < LISTED_SKIPS) this.stats.warnings.push({ file: this.file, line: this.lineNo, code: 'row-skipped', message: why });
  }

  /**
   * Units the header states (e.g. "ax [g]", "gyro_x (deg/s)") win over imu.accelUnit / imu.gyroUnit,
   * with a note where they differ: the file says what it holds.
   */
  private headerUnits(layout: ImuCsvLayout): void {
    const { accel, gyro } = layout.units;
    const imu = this.cfg.imu;
    if (accel && accel !== imu.accelUnit) {
      this.accelScale = accel === 'g' ? STANDARD_GRAVITY_MPS2 : 1;
      this.stats.warnings.push({ file: this.file, line: 1, code: 'imu-unit', message: `accelerometer read in ${accel === 'g' ? 'g' : 'm/s²'} as the header states (imu.accelUnit is "${imu.accelUnit}")` });
    }
    if (gyro && gyro !== imu.gyroUnit) {
      this.gyroScale = gyro === 'degps' ? Math.PI / 180 : 1;
      this.stats.warnings.push({ file: this.file, line: 1, code: 'imu-unit', message: `gyro read in ${gyro === 'degps' ? 'deg/s' : 'rad/s'} as the header states (imu.gyroUnit is "${imu.gyroUnit}")` });
    }
  }

  /** The general parser: one line of text (the header, or a sample). */
  line(raw: string): void {
    this.lineNo++;
    const text = this.lineNo === 1 ? raw.replace(/^\uFEFF/, '') : raw;
    const layout = this.layout;
    if (!layout) {
      this.layout = readImuHeader(text, this.file, this.cfg, this.lineNo);
      this.headerUnits(this.layout);
      return;
    }
    if (text.trim() === '') return;
    const cells = text.split(layout.delimiter);
    const tt = (cells[layout.iTime] ?? '').trim();
    const t = this.cellTime(tt);
    if (t === null) return;
    if (!Number.isFinite(t)) return this.skip(`time "${tt}" is not an ISO 8601 time with a zone nor a Unix time${this.cfg.input.timeFormat !== undefined ? ` nor in input.timeFormat "${this.cfg.input.timeFormat}"` : ''}`);
    const v = this.v;
    for (let j = 0; j < 6; j++) {
      const c = cells[layout.iAx[j]!];
      const x = c === undefined || c.trim() === '' ? NaN : Number(c);
      if (!Number.isFinite(x)) return this.skip(`${IMU_AXES[j]} "${c ?? ''}" is not a number`);
      v[j] = x * (j < 3 ? this.accelScale : this.gyroScale);
    }
    this.emit(t);
  }

  /** The time cell (trimmed) as UTC Unix seconds; NaN when unreadable; null when the row was skipped already. */
  private cellTime(tt: string): number | null {
    if (tt === '') return NaN;
    const t = Number(tt);
    if (Number.isFinite(t)) return this.numericTime(t);
    const text = tt.replace(/^"|"$/g, '');
    const local = this.local;
    if (local === null || (this.cfg.input.timeFormat === undefined && ISO_WITH_OFFSET.test(text))) return parseIsoToUnix(text, this.zone);
    const r = local.read(text);
    if (r === null) return NaN;
    if (!('kind' in r)) return r.utcMs / 1000;
    if (r.kind === 'unique') return r.utcMs[0]! / 1000;
    // a clock change: the one reading that follows the previous sample within a minute, else skipped
    const prevT = this.prevT;
    const fits = r.utcMs.map((ms) => ms / 1000).filter((x) => x >= prevT && x - prevT <= 60);
    if (fits.length !== 1) {
      this.skip(`local time "${tt}" ${r.kind === 'ambiguous' ? 'occurs twice' : 'does not exist'} in ${this.zone} (clock change) and the order of the samples does not decide it; write IMU times with an offset or in UTC`);
      return null;
    }
    this.clockChangeRows++;
    return fits[0]!;
  }

  /** A numeric time in Unix seconds (milliseconds by input.timeUnit, or guessed above 1e11 with a note). */
  private numericTime(t: number): number {
    const unit = this.unit;
    if (unit === 'ms' || (unit === 'auto' && Math.abs(t) > 1e11)) {
      t /= 1000;
      if (unit === 'auto' && !this.msNoted) {
        this.msNoted = true;
        this.stats.warnings.push({ file: this.file, code: 'time-unit', message: 'numeric IMU times larger than 1e11 read as Unix milliseconds' });
      }
    }
    return t;
  }

  /** Hand the sample in v (sensor axes, SI units) at time t to the sink in the body frame. */
  private emit(t: number): void {
    const v = this.v;
    this.stats.samples++;
    this.prevT = t;
    if (this.identity) this.sink(t, v[0]!, v[1]!, v[2]!, v[3]!, v[4]!, v[5]!);
    else {
      // body = C_bs · sensor
      const C = this.Cbs;
      this.sink(
        t,
        C[0]! * v[0]! + C[1]! * v[1]! + C[2]! * v[2]!,
        C[3]! * v[0]! + C[4]! * v[1]! + C[5]! * v[2]!,
        C[6]! * v[0]! + C[7]! * v[1]! + C[8]! * v[2]!,
        C[0]! * v[3]! + C[1]! * v[4]! + C[2]! * v[5]!,
        C[3]! * v[3]! + C[4]! * v[4]! + C[5]! * v[5]!,
        C[6]! * v[3]! + C[7]! * v[4]! + C[8]! * v[5]!,
      );
    }
  }

  /**
   * The fast path for the line in bytes [s, e) of buf (no line break): true when it was a sample of
   * plain numbers and has been handled; false, with nothing consumed, when the general parser must
   * take it.
   */
  fastLine(buf: Uint8Array, s: number, e: number): boolean {
    const layout = this.layout;
    if (!layout || layout.delimByte < 0 || s >= e) return false;
    const { slotOf, maxCol, delimByte } = layout;
    const fv = this.fv;
    let p = s, col = 0, got = 0;
    for (;;) {
      const slot = col <= maxCol ? slotOf[col]! : -1;
      if (slot >= 0) {
        p = scanPlainDecimal(buf, p, e, delimByte, fv, slot);
        if (p < 0) return false;
        if (++got === 7) break;
      } else while (p < e && buf[p] !== delimByte) p++;
      if (p >= e) return false;
      p++;
      col++;
    }
    this.lineNo++;
    const t = this.numericTime(fv[0]!);
    const v = this.v;
    for (let j = 0; j < 6; j++) v[j] = fv[j + 1]! * (j < 3 ? this.accelScale : this.gyroScale);
    this.emit(t);
    return true;
  }

  finish(): ImuReadStats {
    const stats = this.stats;
    if (!this.layout) throw new InputError({ file: this.file }, 'empty IMU file');
    if (stats.skipped > LISTED_SKIPS) stats.warnings.push({ file: this.file, code: 'row-skipped', message: `${stats.skipped} IMU rows skipped in all (first 20 listed)` });
    if (this.clockChangeRows > 0)
      stats.warnings.push({ file: this.file, code: 'local-time-clock-change', message: `${this.clockChangeRows} IMU row(s) at local times repeated or skipped by a clock change in ${this.zone}, read by the order of the samples` });
    return stats;
  }
}

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
