/**
 * The header row of `<stem>.imu.csv` (input/imu-csv.ts): its delimiter, the columns of the time and
 * of the six axes, and the cell → value slot map of the byte fast path.
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';

const TIME_NAMES = ['time', 't', 'timestamp', 'unix_time', 'utc'];
export const IMU_AXES = ['ax', 'ay', 'az', 'gx', 'gy', 'gz'] as const;

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
  const names = text.split(delimiter).map((s) => s.trim().toLowerCase().replace(/^"|"$/g, ''));
  const iTime = names.findIndex((n) => TIME_NAMES.includes(n));
  const iAx = IMU_AXES.map((a) => names.indexOf(a));
  const missing = [iTime < 0 ? 'time' : '', ...IMU_AXES.filter((_, j) => iAx[j]! < 0)].filter((s) => s);
  if (missing.length) throw new InputError({ file, line: 1 }, `no ${missing.join(', ')} column in the IMU header (${names.join(', ')}); expected time, ax, ay, az, gx, gy, gz`);
  const maxCol = Math.max(iTime, ...iAx);
  const slotOf = new Int8Array(maxCol + 1).fill(-1);
  slotOf[iTime] = 0;
  for (let j = 0; j < 6; j++) slotOf[iAx[j]!] = j + 1;
  const delimByte = delimiter.length === 1 && delimiter.charCodeAt(0) < 128 ? delimiter.charCodeAt(0) : -1;
  return { delimiter, iTime, iAx, slotOf, maxCol, delimByte };
}
