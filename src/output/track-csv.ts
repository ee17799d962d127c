/**
 * <stem>.track.csv: one row per epoch (fix epochs and bridged epochs) of the smoothed track.
 * Columns and units are listed in README ("Outputs").
 */
import { formatIsoUtc } from '../time/parse-time.js';
import { STATUS_NAMES, type SessionResult } from '../session/result.js';
import { fmt } from './csv-format.js';

export const TRACK_COLUMNS = [
  'time', 'lat', 'lon', 'height', 'v_east', 'v_north', 'v_up', 'sd_east', 'sd_north', 'sd_up',
  'ell95_major_m', 'ell95_minor_m', 'ell95_azimuth_deg', 'status', 'segment',
] as const;

/** The CSV text, produced in chunks so million-epoch tracks do not build one giant string at once. */
/** Columns added after TRACK_COLUMNS when the session carries attitude (IMU-aided sessions). */
export const ATTITUDE_COLUMNS = ['roll_deg', 'pitch_deg', 'heading_deg', 'sd_roll_deg', 'sd_pitch_deg', 'sd_heading_deg'] as const;

export function* trackCsvChunks(r: SessionResult, rowsPerChunk = 20000): Generator<string> {
  const att = r.attitudeDeg;
  const attSd = r.attitudeSdDeg;
  let buf: string[] = [att ? [...TRACK_COLUMNS, ...ATTITUDE_COLUMNS].join(',') : TRACK_COLUMNS.join(',')];
  const h = r.hasHeight;
  for (let j = 0; j < r.N; j++) {
    const attCells = att
      ? [fmt(att.roll[j]!, 2), fmt(att.pitch[j]!, 2), fmt(att.heading[j]!, 2), attSd ? fmt(attSd.roll[j]!, 2) : '', attSd ? fmt(attSd.pitch[j]!, 2) : '', attSd ? fmt(attSd.heading[j]!, 2) : '']
      : [];
    buf.push(
      [
        formatIsoUtc(r.tSec[j]!),
        fmt(r.latDeg[j]!, 9),
        fmt(r.lonDeg[j]!, 9),
        h ? fmt(r.heightM[j]!, 3) : '',
        fmt(r.velEnu[0][j]!, 3),
        fmt(r.velEnu[1][j]!, 3),
        h ? fmt(r.velEnu[2][j]!, 3) : '',
        fmt(r.sdEnu[0][j]!, 3),
        fmt(r.sdEnu[1][j]!, 3),
        h ? fmt(r.sdEnu[2][j]!, 3) : '',
        fmt(r.ell95MajorM[j]!, 3),
        fmt(r.ell95MinorM[j]!, 3),
        fmt(r.ell95AzimuthDeg[j]!, 1),
        STATUS_NAMES[r.status[j]!],
        String(r.segment[j]! + 1),
        ...attCells,
      ].join(','),
    );
    if (buf.length >= rowsPerChunk) {
      yield buf.join('\n') + '\n';
      buf = [];
    }
  }
  if (buf.length) yield buf.join('\n') + '\n';
}

export function trackCsv(r: SessionResult): string {
  return Array.from(trackCsvChunks(r)).join('');
}
