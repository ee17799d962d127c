/**
 * <stem>.track.csv: one row per epoch (fix epochs and bridged epochs) of the smoothed track.
 * Columns and units are listed in docs/formats.md ("Outputs").
 */
import { STATUS_NAMES, type SessionResult } from '../session/result/result.js';
import { ByteChunks, chunksToString, utf8 } from './byte-chunks.js';

export const TRACK_COLUMNS = [
  'time', 'lat', 'lon', 'height', 'v_east', 'v_north', 'v_up', 'sd_east', 'sd_north', 'sd_up',
  'ell95_major_m', 'ell95_minor_m', 'ell95_azimuth_deg', 'status', 'segment',
] as const;

/** Columns added after TRACK_COLUMNS when the session carries attitude (IMU-aided sessions). */
export const ATTITUDE_COLUMNS = ['roll_deg', 'pitch_deg', 'heading_deg', 'sd_roll_deg', 'sd_pitch_deg', 'sd_heading_deg'] as const;

const COMMA = 44;
const NEWLINE = 10;
const STATUS_BYTES = STATUS_NAMES.map(utf8);

/**
 * The CSV as UTF-8 chunks of about a megabyte (byte-chunks.ts), so million-epoch tracks are
 * streamed to their file and never held as one string. Cells are `toFixed` text (empty where a value
 * is missing), times ISO 8601 UTC with milliseconds.
 */
export function* trackCsvChunks(r: SessionResult, chunkBytes?: number): Generator<Uint8Array> {
  const att = r.attitudeDeg;
  const attSd = r.attitudeSdDeg;
  const out = new ByteChunks(chunkBytes);
  out.ascii((att ? [...TRACK_COLUMNS, ...ATTITUDE_COLUMNS] : TRACK_COLUMNS).join(','));
  out.byte(NEWLINE);
  const h = r.hasHeight;
  const { tSec, latDeg, lonDeg, heightM, ell95MajorM, ell95MinorM, ell95AzimuthDeg, status, segment } = r;
  const [vE, vN, vU] = r.velEnu;
  const [sE, sN, sU] = r.sdEnu;
  for (let j = 0; j < r.N; j++) {
    out.isoUtc(tSec[j]!);
    out.byte(COMMA);
    out.fixedCell(latDeg[j]!, 9);
    out.byte(COMMA);
    out.fixedCell(lonDeg[j]!, 9);
    out.byte(COMMA);
    if (h) out.fixedCell(heightM[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(vE[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(vN[j]!, 3);
    out.byte(COMMA);
    if (h) out.fixedCell(vU[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(sE[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(sN[j]!, 3);
    out.byte(COMMA);
    if (h) out.fixedCell(sU[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(ell95MajorM[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(ell95MinorM[j]!, 3);
    out.byte(COMMA);
    out.fixedCell(ell95AzimuthDeg[j]!, 1);
    out.byte(COMMA);
    out.bytes(STATUS_BYTES[status[j]!]!);
    out.byte(COMMA);
    out.int(segment[j]! + 1);
    if (att) {
      out.byte(COMMA);
      out.fixedCell(att.roll[j]!, 2);
      out.byte(COMMA);
      out.fixedCell(att.pitch[j]!, 2);
      out.byte(COMMA);
      out.fixedCell(att.heading[j]!, 2);
      out.byte(COMMA);
      if (attSd) out.fixedCell(attSd.roll[j]!, 2);
      out.byte(COMMA);
      if (attSd) out.fixedCell(attSd.pitch[j]!, 2);
      out.byte(COMMA);
      if (attSd) out.fixedCell(attSd.heading[j]!, 2);
    }
    out.byte(NEWLINE);
    if (out.full) yield out.take();
  }
  if (out.length) yield out.take();
}

export function trackCsv(r: SessionResult): string {
  return chunksToString(trackCsvChunks(r));
}
