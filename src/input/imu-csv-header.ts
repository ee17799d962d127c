/**
 * The header row of `<stem>.imu.csv` (input/imu-csv.ts): its delimiter, the columns of the time and
 * of the six axes, and the cell → value slot map of the byte fast path.
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';

const TIME_NAMES = ['time', 't', 'timestamp', 'unix_time', 'utc', 'time_utc', 'utc_time', 'unix', 'epoch', 'unix_s', 'unix_ms', 'time_s', 'time_ms', 'timestamp_ms'];
export const IMU_AXES = ['ax', 'ay', 'az', 'gx', 'gy', 'gz'] as const;

/** Header names of each axis column beside the canonical ax … gz (after normalizeImuName; common logger and phone-app spellings). */
const AXIS_ALIASES: string[][] = (['x', 'y', 'z'] as const)
  .map((c) => [`a${c}`, `acc_${c}`, `acc${c}`, `accel_${c}`, `accel${c}`, `a_${c}`, `accelerometer_${c}`, `acceleration_${c}`, `f_${c}`, `f${c}`])
  .concat((['x', 'y', 'z'] as const).map((c) => [`g${c}`, `gyro_${c}`, `gyro${c}`, `gyr_${c}`, `gyr${c}`, `g_${c}`, `w${c}`, `w_${c}`, `omega_${c}`, `gyroscope_${c}`, `rate_${c}`, `angular_rate_${c}`, `angular_velocity_${c}`]));

/** Units a header may state for the accelerometer and gyro columns, in brackets or as a name suffix. */
const ACCEL_UNITS: Array<[RegExp, 'mps2' | 'g']> = [
  [/^(m\/s\^?2|m\/s²|m_s2|m_s_2|mps2|ms2|m\/s\/s|m_s\^?-2)$/, 'mps2'],
  [/^(g|gs|g0|g_0)$/, 'g'],
];
const GYRO_UNITS: Array<[RegExp, 'radps' | 'degps']> = [
  [/^(rad\/s|rad_s|radps|rads|rad_s\^?-1|rad\/sec)$/, 'radps'],
  [/^(deg\/s|°\/s|dps|degps|deg_s|deg\/sec|deg_s\^?-1)$/, 'degps'],
];
const UNIT_SUFFIX = /_(mps2|ms2|g|radps|rads|rad_s|dps|degps|deg_s)$/;

/** A header cell's name (lower case, units in brackets or as a suffix taken off, separators "_") and the unit it states, if any. */
export function normalizeImuName(cell: string): { name: string; unit: string | undefined } {
  let t = cell.trim().replace(/^"|"$/g, '').toLowerCase();
  let unit: string | undefined;
  const br = /[([{]([^)\]}]*)[)\]}]/.exec(t);
  if (br) {
    unit = br[1]!.trim().replace(/\s+/g, '_');
    t = t.replace(br[0], '');
  }
  let name = t.trim().replace(/[^a-z0-9]+/g, '_').replace(/^_+|_+$/g, '');
  const suf = UNIT_SUFFIX.exec(name);
  if (suf && !unit && name.length > suf[0].length) {
    unit = suf[1];
    name = name.slice(0, -suf[0].length);
  }
  return { name, unit };
}

function unitOf<U extends string>(unit: string | undefined, table: Array<[RegExp, U]>): U | undefined {
  if (unit === undefined) return undefined;
  for (const [re, u] of table) if (re.test(unit)) return u;
  return undefined;
}

export interface ImuCsvLayout {
  delimiter: string;
  /** Cell index of the time and of ax … gz. */
  iTime: number;
  iAx: number[];
  /** Fast path: the value slot of each cell up to maxCol (0 time, 1..6 the axes, −1 unused). */
  slotOf: Int8Array;
  maxCol: number;
  /** The delimiter as one ASCII byte, −1 when it is not one (no fast path). */
  delimByte: number;
  /** Units the header states for the accelerometer and the gyro columns (all three alike), if it states them. */
  units: { accel?: 'mps2' | 'g'; gyro?: 'radps' | 'degps' };
}

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

/** The layout of header line `text` (line `lineNo`, BOM removed); throws when a column is missing. */
export function readImuHeader(text: string, file: string, cfg: HindcastConfig, lineNo: number): ImuCsvLayout {
  if (text.trim() === '') throw new InputError({ file, line: lineNo }, 'empty header line: an IMU CSV needs a header row');
  const delimiter = cfg.input.delimiter ?? detect(text);
  const cells = text.split(delimiter).map(normalizeImuName);
  const names = cells.map((c) => c.name);
  const iTime = names.findIndex((n) => TIME_NAMES.includes(n));
  const iAx = AXIS_ALIASES.map((al) => {
    for (const a of al) {
      const i = names.indexOf(a);
      if (i >= 0) return i;
    }
    return -1;
  });
  const missing = [iTime < 0 ? 'time' : '', ...IMU_AXES.filter((_, j) => iAx[j]! < 0)].filter((s) => s);
  if (missing.length) throw new InputError({ file, line: 1 }, `no ${missing.join(', ')} column in the IMU header (${text.split(delimiter).map((c) => c.trim()).join(', ')}); expected time, ax, ay, az, gx, gy, gz (or acc_x …, gyro_x …)`);
  // a unit the header states for all three axes of a sensor
  const stated = <U extends string>(js: number[], table: Array<[RegExp, U]>): U | undefined => {
    const us = js.map((j) => unitOf(cells[iAx[j]!]!.unit, table));
    return us.every((u) => u !== undefined && u === us[0]) ? us[0] : undefined;
  };
  const units = { accel: stated([0, 1, 2], ACCEL_UNITS), gyro: stated([3, 4, 5], GYRO_UNITS) };
  const maxCol = Math.max(iTime, ...iAx);
  const slotOf = new Int8Array(maxCol + 1).fill(-1);
  slotOf[iTime] = 0;
  for (let j = 0; j < 6; j++) slotOf[iAx[j]!] = j + 1;
  const delimByte = delimiter.length === 1 && delimiter.charCodeAt(0) < 128 ? delimiter.charCodeAt(0) : -1;
  return { delimiter, iTime, iAx, slotOf, maxCol, delimByte, units };
}
