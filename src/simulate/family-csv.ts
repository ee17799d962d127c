/**
 * The written form of a family log: a fix CSV in one of several header spellings, delimiters and
 * time representations (ISO 8601 with Z, with an offset, local time without an offset for a
 * configured IANA zone, Unix seconds, Unix milliseconds), plus the configuration a user would give
 * for it (only the time zone, for local times). Quality columns are written only when the log has
 * them. Everything here is read by the normal CSV reader (src/input/csv-fixes.ts).
 */
import { DateTime } from 'luxon';
import type { FamilyFix } from './family-errors.js';
import type { FamilyLogSpec } from './family-spec.js';

/** Header spellings (built-in aliases of src/input/columns.ts) and delimiters. */
const HEADERS: Array<{ d: string; time: string; unixTime: string; cols: [string, string, string, string, string] }> = [
  { d: ',', time: 'time', unixTime: 'time', cols: ['lat', 'lon', 'height', 'hdop', 'sats'] },
  { d: ',', time: 'timestamp', unixTime: 'unix_time', cols: ['latitude', 'longitude', 'h_ell', 'HDOP', 'num_sats'] },
  { d: ';', time: 'utc', unixTime: 'epoch', cols: ['lat_deg', 'lon_deg', 'height (m)', 'hdop', 'satellites'] },
  { d: '\t', time: 'Time (UTC)', unixTime: 'unix', cols: ['Latitude [deg]', 'Longitude [deg]', 'Ellipsoidal height [m]', 'HDOP', 'Satellites'] },
];

const pad = (x: number, w = 2) => String(x).padStart(w, '0');

function isoWall(ms: number): string {
  return new Date(ms).toISOString().slice(0, 23);
}

function timeText(tSec: number, time: FamilyLogSpec['time']): string {
  const ms = Math.round(tSec * 1000);
  switch (time.format) {
    case 'iso-z':
      return new Date(ms).toISOString();
    case 'iso-offset': {
      const off = time.offsetMin ?? 0;
      const a = Math.abs(off);
      return `${isoWall(ms + off * 60000)}${off < 0 ? '-' : '+'}${pad(Math.floor(a / 60))}:${pad(a % 60)}`;
    }
    case 'local':
      return DateTime.fromMillis(ms, { zone: time.zone! }).toFormat("yyyy-MM-dd'T'HH:mm:ss.SSS");
    case 'unix-s':
      return (ms / 1000).toFixed(3);
    case 'unix-ms':
      return String(ms);
  }
}

export interface WrittenLog {
  fileName: string;
  text: string;
  /** The configuration a user would set for this file (merged over the defaults). */
  config: { input?: { timeZone?: string } };
}

export function writeFamilyCsv(spec: FamilyLogSpec, fixes: FamilyFix[]): WrittenLog {
  const H = HEADERS[spec.header % HEADERS.length]!;
  const withQ = spec.quality.mode !== 'absent';
  const numeric = spec.time.format === 'unix-s' || spec.time.format === 'unix-ms';
  const head = [numeric ? H.unixTime : H.time, H.cols[0], H.cols[1], H.cols[2], ...(withQ ? [H.cols[3], H.cols[4]] : [])];
  const rows = [head.join(H.d)];
  for (const f of fixes) {
    const pos = f.empty ? ['', '', ''] : [f.latDeg.toFixed(9), f.lonDeg.toFixed(9), f.heightM.toFixed(3)];
    const q = withQ ? [f.hdop.toFixed(1), String(f.sats)] : [];
    rows.push([timeText(f.tSec, spec.time), ...pos, ...q].join(H.d));
  }
  return {
    fileName: `${spec.id}.csv`,
    text: rows.join('\n') + '\n',
    config: spec.time.format === 'local' ? { input: { timeZone: spec.time.zone! } } : {},
  };
}
