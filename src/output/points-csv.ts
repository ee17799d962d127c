/**
 * <stem>.points.csv: the occupied points of a session (session/survey/occupations.ts), one row each, with
 * the position's uncertainty from the joint smoothing posterior (the correlated fix error counted:
 * see effective_fixes). Columns are documented in docs/survey.md.
 */
import type { SessionResult } from '../session/result/result.js';
import { ByteChunks, chunksToString } from './byte-chunks.js';

export const POINT_COLUMNS = [
  'id', 'start_time', 'end_time', 'duration_s', 'fixes', 'lat', 'lon', 'height',
  'sd_east_m', 'sd_north_m', 'sd_up_m', 'ell95_major_m', 'ell95_minor_m', 'ell95_azimuth_deg', 'effective_fixes',
] as const;

const COMMA = 44;
const NEWLINE = 10;

/** The CSV as UTF-8 chunks (byte-chunks.ts); a header only when there is no occupied point. */
export function* pointsCsvChunks(r: SessionResult, chunkBytes?: number): Generator<Uint8Array> {
  const out = new ByteChunks(chunkBytes);
  out.ascii(POINT_COLUMNS.join(','));
  out.byte(NEWLINE);
  for (const o of r.survey?.occupations ?? []) {
    out.ascii(o.id);
    out.byte(COMMA);
    out.isoUtc(o.startSec);
    out.byte(COMMA);
    out.isoUtc(o.endSec);
    out.byte(COMMA);
    out.fixedCell(o.durationSec, 3);
    out.byte(COMMA);
    out.int(o.fixCount);
    out.byte(COMMA);
    out.fixedCell(o.latDeg, 9);
    out.byte(COMMA);
    out.fixedCell(o.lonDeg, 9);
    out.byte(COMMA);
    out.fixedCell(o.heightM, 3);
    out.byte(COMMA);
    out.fixedCell(o.sdEnu[0], 3);
    out.byte(COMMA);
    out.fixedCell(o.sdEnu[1], 3);
    out.byte(COMMA);
    out.fixedCell(o.sdEnu[2], 3);
    out.byte(COMMA);
    out.fixedCell(o.ell95MajorM, 3);
    out.byte(COMMA);
    out.fixedCell(o.ell95MinorM, 3);
    out.byte(COMMA);
    out.fixedCell(o.ell95AzimuthDeg, 1);
    out.byte(COMMA);
    out.fixedCell(o.effectiveFixes, 2);
    out.byte(NEWLINE);
    if (out.full) yield out.take();
  }
  if (out.length) yield out.take();
}

export function pointsCsv(r: SessionResult): string {
  return chunksToString(pointsCsvChunks(r));
}
