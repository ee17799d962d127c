/**
 * Reader for fix logs in CSV: a header row, then one fix per row. Times as ISO 8601 (with an offset,
 * or in the configured IANA zone), Unix seconds/milliseconds, or GPS week + time of week columns.
 * Positions in decimal degrees, WGS84; height ellipsoidal (m) when present.
 * Rows with values that cannot be parsed are skipped with a warning naming the line.
 */
import { parse } from 'csv-parse/sync';
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { gpsWeekTowToUnixUtc } from '../time/gps-time.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { matchColumns, MSL_HEIGHT_ALIASES, type ColumnRole } from './columns.js';
import { FixSeriesBuilder, type FixSeries, type QualityColumn } from './fix-series.js';

const QUALITY_ROLES: QualityColumn[] = ['hdop', 'vdop', 'sats', 'fixQuality', 'sdEast', 'sdNorth', 'sdUp'];

/** Choose the delimiter from the header line: the most frequent of , ; tab |. */
export function detectDelimiter(headerLine: string): string {
  let best = ',';
  let bestCount = 0;
  for (const d of [',', ';', '\t', '|']) {
    const c = headerLine.split(d).length - 1;
    if (c > bestCount) {
      best = d;
      bestCount = c;
    }
  }
  return best;
}

/** Parse a number that may use a decimal comma (only when the delimiter is not a comma). */
function num(text: string | undefined, decimalComma: boolean): number {
  if (text === undefined) return NaN;
  const s = text.trim();
  if (s === '') return NaN;
  return Number(decimalComma ? s.replace(',', '.') : s);
}

export function readFixCsv(text: string, file: string, cfg: HindcastConfig): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  const firstNl = body.search(/\r?\n/);
  const headerLine = firstNl < 0 ? body : body.slice(0, firstNl);
  if (headerLine.trim() === '') throw new InputError({ file, line: 1 }, 'empty file or empty header line: a fix CSV needs a header row');
  const delimiter = cfg.input.delimiter ?? detectDelimiter(headerLine);
  const decimalComma = delimiter !== ',';
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(body, {
      delimiter,
      relax_column_count: true,
      skip_empty_lines: true,
      info: true,
      trim: true,
    }) as unknown as { record: string[]; info: { lines: number } }[];
  } catch (e) {
    const err = e as Error & { lines?: number };
    throw new InputError({ file, line: err.lines }, `not readable as CSV: ${err.message.replace(/^Invalid [^:]*:\s*/, '')}`);
  }
  if (records.length === 0) throw new InputError({ file }, 'empty file');
  const header = records[0]!.record;
  const { index, matched } = matchColumns(header, cfg.input.columns);
  const hasWeekTow = index.gpsWeek >= 0 && index.tow >= 0;
  const missing: string[] = [];
  if (index.time < 0 && !hasWeekTow) missing.push('time (or gps_week + tow)');
  if (index.lat < 0) missing.push('lat');
  if (index.lon < 0) missing.push('lon');
  if (missing.length)
    throw new InputError(
      { file, line: 1 },
      `no ${missing.join(', ')} column in the header (${header.join(', ')}); name it in input.columns of a --config file`,
    );
  const qualityPresent = QUALITY_ROLES.filter((r) => index[r] >= 0);
  const b = new FixSeriesBuilder(file, qualityPresent);
  b.meta.format = 'csv';
  if (index.height >= 0 && matched.height && MSL_HEIGHT_ALIASES.has(matched.height)) {
    b.meta.heightReference = 'assumed-ellipsoidal';
    b.warn('height-reference', `column "${header[index.height]}" is read as ellipsoidal height; if it is above mean sea level, heights carry the geoid separation`);
  }
  const zone = cfg.input.timeZone;
  const unit = cfg.input.timeUnit;
  const qv = new Float64Array(qualityPresent.length);
  let skipped = 0;
  let firstSkipped: string | null = null;
  let msNoted = false;
  const skip = (line: number, why: string) => {
    skipped++;
    if (skipped <= 20) b.warn('row-skipped', why, line);
    if (firstSkipped === null) firstSkipped = `line ${line}: ${why}`;
  };
  for (let r = 1; r < records.length; r++) {
    const rec = records[r]!.record;
    const line = records[r]!.info.lines;
    if (rec.length === 1 && rec[0] === '') continue;
    let t: number;
    if (index.time >= 0 && !(hasWeekTow && (rec[index.time] ?? '') === '')) {
      const raw = rec[index.time] ?? '';
      const v = num(raw, false);
      if (Number.isFinite(v)) {
        const ms = unit === 'ms' || (unit === 'auto' && Math.abs(v) > 1e11);
        if (ms && unit === 'auto' && !msNoted) {
          b.warn('time-unit', 'numeric times larger than 1e11 read as Unix milliseconds');
          msNoted = true;
        }
        t = ms ? v / 1000 : v;
      } else {
        t = parseIsoToUnix(raw, zone);
        if (Number.isNaN(t)) {
          skip(line, `time "${raw}" is not ISO 8601 with a zone or offset, nor Unix seconds${zone ? '' : ' (set input.timeZone for local times)'}`);
          continue;
        }
      }
    } else {
      const week = num(rec[index.gpsWeek], false);
      const tow = num(rec[index.tow], decimalComma);
      if (!Number.isInteger(week) || week < 0 || !(tow >= 0 && tow < 604800)) {
        skip(line, `GPS week "${rec[index.gpsWeek]}" / time of week "${rec[index.tow]}" out of range`);
        continue;
      }
      t = gpsWeekTowToUnixUtc(week, tow);
    }
    const lat = num(rec[index.lat], decimalComma);
    const lon = num(rec[index.lon], decimalComma);
    if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) {
      skip(line, `position "${rec[index.lat]}", "${rec[index.lon]}" is not a latitude/longitude in decimal degrees`);
      continue;
    }
    const h = index.height >= 0 ? num(rec[index.height], decimalComma) : NaN;
    for (let i = 0; i < qualityPresent.length; i++) {
      const v = num(rec[index[qualityPresent[i] as ColumnRole]], decimalComma);
      qv[i] = Number.isFinite(v) && v >= 0 ? v : NaN;
    }
    b.add(t, lat, lon, h, line, qv);
  }
  if (skipped > 20) b.warn('row-skipped', `${skipped - 20} more row(s) skipped for the same kinds of reason`);
  if (b.count === 0) {
    if (records.length === 1) throw new InputError({ file, line: 1 }, 'header only: the file has no fix rows');
    throw new InputError({ file }, `no readable fix rows (${skipped} skipped; first: ${firstSkipped})`);
  }
  const s = b.finish();
  if (s.n < 2) throw new InputError({ file }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}
