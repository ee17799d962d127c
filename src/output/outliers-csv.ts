/**
 * <stem>.outliers.csv: every flagged fix with its raw position, the reason, the test statistic and
 * threshold, and its offset from the smoothed track, for the user to review.
 */
import type { SessionResult } from '../session/result.js';
import { ByteChunks, chunksToString } from './byte-chunks.js';
import { textCell } from './csv-format.js';

export const OUTLIER_COLUMNS = [
  'time', 'source_line', 'lat', 'lon', 'height', 'reason', 'statistic', 'threshold', 'offset_m', 'offset_up_m', 'detail',
] as const;

const COMMA = 44;
const NEWLINE = 10;

/** The CSV as UTF-8 chunks of about a megabyte (byte-chunks.ts). */
export function* outliersCsvChunks(r: SessionResult, chunkBytes?: number): Generator<Uint8Array> {
  const out = new ByteChunks(chunkBytes);
  out.ascii(OUTLIER_COLUMNS.join(','));
  out.byte(NEWLINE);
  for (const o of r.outliers) {
    out.isoUtc(o.tSec);
    out.byte(COMMA);
    out.int(o.line);
    out.byte(COMMA);
    out.fixedCell(o.latDeg, 9);
    out.byte(COMMA);
    out.fixedCell(o.lonDeg, 9);
    out.byte(COMMA);
    out.fixedCell(o.heightM, 3);
    out.byte(COMMA);
    out.text(o.reason);
    out.byte(COMMA);
    out.fixedCell(o.statistic, 3);
    out.byte(COMMA);
    out.fixedCell(o.threshold, 3);
    out.byte(COMMA);
    out.fixedCell(o.offsetM, 3);
    out.byte(COMMA);
    out.fixedCell(o.offsetUpM, 3);
    out.byte(COMMA);
    out.text(textCell(o.detail));
    out.byte(NEWLINE);
    if (out.full) yield out.take();
  }
  if (out.length) yield out.take();
}

export function outliersCsv(r: SessionResult): string {
  return chunksToString(outliersCsvChunks(r));
}
