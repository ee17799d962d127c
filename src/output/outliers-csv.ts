/**
 * <stem>.outliers.csv: every flagged fix with its raw position, the reason, the test statistic and
 * threshold, and its offset from the smoothed track, for the user to review.
 */
import { formatIsoUtc } from '../time/parse-time.js';
import type { SessionResult } from '../session/result.js';
import { fmt, textCell } from './csv-format.js';

export const OUTLIER_COLUMNS = [
  'time', 'source_line', 'lat', 'lon', 'height', 'reason', 'statistic', 'threshold', 'offset_m', 'offset_up_m', 'detail',
] as const;

export function outliersCsv(r: SessionResult): string {
  const rows = [OUTLIER_COLUMNS.join(',')];
  for (const o of r.outliers) {
    rows.push(
      [
        formatIsoUtc(o.tSec),
        String(o.line),
        fmt(o.latDeg, 9),
        fmt(o.lonDeg, 9),
        fmt(o.heightM, 3),
        o.reason,
        fmt(o.statistic, 3),
        fmt(o.threshold, 3),
        fmt(o.offsetM, 3),
        fmt(o.offsetUpM, 3),
        textCell(o.detail),
      ].join(','),
    );
  }
  return rows.join('\n') + '\n';
}
