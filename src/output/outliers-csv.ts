/**
 * <stem>.outliers.csv: every flagged fix with its stable id, its raw position, the test that
 * decided (forward gate, backward gate, two-sided review, swap test, excursion test, invalid, user) with that
 * test's statistic, threshold and relative margin, its review statistic against the final track
 * and the re-admission threshold, its offset from the smoothed track, the user's note, and the
 * decision in words, for the user to review. Columns: docs/report-and-layers.md.
 */
import type { SessionResult } from '../session/result/result.js';
import { ByteChunks, chunksToString } from './byte-chunks.js';
import { textCell } from './csv-format.js';

export const OUTLIER_COLUMNS = [
  'id', 'time', 'source_line', 'lat', 'lon', 'height', 'test', 'statistic', 'threshold', 'margin',
  'review_statistic', 'readmit_threshold', 'offset_m', 'offset_up_m', 'note', 'detail',
] as const;

const COMMA = 44;
const NEWLINE = 10;

/** The CSV as UTF-8 chunks of about a megabyte (byte-chunks.ts). */
export function* outliersCsvChunks(r: SessionResult, chunkBytes?: number): Generator<Uint8Array> {
  const out = new ByteChunks(chunkBytes);
  out.ascii(OUTLIER_COLUMNS.join(','));
  out.byte(NEWLINE);
  for (const o of r.outliers) {
    out.text(o.id);
    out.byte(COMMA);
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
    out.text(o.test);
    out.byte(COMMA);
    out.fixedCell(o.testStatistic, 3);
    out.byte(COMMA);
    out.fixedCell(o.testThreshold, 3);
    out.byte(COMMA);
    out.fixedCell(o.margin, 4);
    out.byte(COMMA);
    out.fixedCell(o.statistic, 3);
    out.byte(COMMA);
    out.fixedCell(o.readmitThreshold, 3);
    out.byte(COMMA);
    out.fixedCell(o.offsetM, 3);
    out.byte(COMMA);
    out.fixedCell(o.offsetUpM, 3);
    out.byte(COMMA);
    if (o.note) out.text(textCell(o.note));
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
