/**
 * Reader for NMEA 0183 logs (National Marine Electronics Association, NMEA 0183 Standard for
 * Interfacing Marine Electronic Devices; sentence layouts as widely published).
 *
 * Sentences used: GGA (time, position, fix quality, satellites, HDOP, altitude above mean sea level,
 * geoid separation), RMC (time, status, position, date), GST (1-sigma latitude, longitude and
 * altitude errors, m), GSA (HDOP, VDOP). Any two-letter talker (GP, GN, GL, GA, GB, BD, GQ, …).
 * Other sentences (GSV, VTG, GLL, TXT, proprietary $P…) are ignored.
 *
 * Rules (documented in docs/formats.md):
 * - checksum: two hex digits after "*", the XOR of every byte strictly between "$" and "*". A
 *   sentence whose checksum is wrong is skipped and counted. When no sentence of the file carries a
 *   checksum at all, sentences are read unverified (one warning); otherwise a sentence without one is
 *   treated as damaged and skipped.
 * - epochs: consecutive sentences with the same UTC time of day form one fix; GSA (which has no time)
 *   belongs to the epoch of the sentence before it. The position comes from GGA, else from RMC.
 * - date: from RMC (two-digit year: 80–99 → 19xx, 00–79 → 20xx, common practice); epochs without an
 *   RMC take the date of the nearest dated epoch, rolling over at UTC midnight (a time of day more
 *   than 12 h earlier than the previous one is the next day). A log without any RMC date needs
 *   `input.date` (the UTC date of its first fix), or it fails.
 * - height: ellipsoidal = GGA altitude + geoid separation (default), or the altitude above mean sea
 *   level with `input.heightReference: "msl"`. When no GGA of the file has a geoid separation, the
 *   altitude is used and the series is marked "msl" (with a warning).
 * - fix quality from GGA (0 = no fix: such fixes are kept and flagged invalid by the session);
 *   an RMC-only epoch with status V has quality 0. Epochs without any position are skipped.
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { FixSeriesBuilder, type FixSeries, type QualityColumn } from './fix-series.js';
import { epochDays, SECONDS_PER_DAY } from './nmea-dates.js';
import { collectNmeaEpochs, type NmeaEpoch, type NmeaScan } from './nmea-epochs.js';
import { RowWarnings } from './row-warnings.js';

export { nmeaChecksum, splitNmeaSentence, type NmeaSplit } from './nmea-sentence.js';
export {
  decodeGga,
  decodeGsa,
  decodeGst,
  decodeRmc,
  nmeaAngleDeg,
  nmeaDateDays,
  nmeaTimeOfDaySec,
  type Decoded,
  type GgaFix,
  type GsaDop,
  type GstFix,
  type RmcFix,
} from './nmea-decode.js';
export { assignDays } from './nmea-dates.js';

/** Heights outside this range (m) are dropped from a fix (the fix is kept). */
export const HEIGHT_RANGE_M: [number, number] = [-12000, 100000];

/** Which quality values the log has at all (a column each, in the series). */
interface NmeaQualityPresent {
  hdop: boolean;
  vdop: boolean;
  sats: boolean;
  fixQuality: boolean;
  sd: boolean;
}

export function readNmea(text: string, file: string, cfg: HindcastConfig): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  const scan = collectNmeaEpochs(body);
  if (scan.used === 0) throw noUsableSentenceError(scan, file);
  const { epochs } = scan;
  const { days, anyRmcDate } = epochDays(epochs, cfg, file);

  const wantMsl = cfg.input.heightReference === 'msl';
  let anySeparation = false;
  for (const e of epochs) if (e.gga && Number.isFinite(e.gga.geoidSeparationM)) anySeparation = true;
  const heightMsl = wantMsl || !anySeparation;

  const has = qualityPresent(epochs);
  const b = new FixSeriesBuilder(file, qualityColumns(has));
  const w = new RowWarnings(b);
  b.meta.format = 'nmea';
  b.meta.talkers = [...scan.talkers].sort().join(',');
  b.meta.heightReference = heightMsl ? 'msl' : 'ellipsoidal';
  if (!anyRmcDate) {
    b.meta.dateFrom = 'input.date';
    b.warn('date-from-config', `no RMC date in the log: the first fix is dated ${cfg.input.date} from input.date`, epochs[0]!.line);
  }
  for (const p of scan.tally.problems) w.add(p.code, p.message, p.line);
  if (!scan.fileHasChecksums) w.add('nmea-no-checksum', 'no sentence of the file has a checksum: sentences were read unverified');
  if (!wantMsl && !anySeparation && epochs.some((e) => e.gga && Number.isFinite(e.gga.altitudeMslM)))
    b.warn('height-reference', 'no GGA sentence has a geoid separation: heights are the altitude above mean sea level (marked "msl")');

  addEpochFixes(b, w, epochs, days, has, heightMsl);
  w.finish();
  return finishNmeaSeries(b, scan, file);
}

/** The error for a log without one usable GGA or RMC sentence, naming the likeliest cause. */
function noUsableSentenceError(scan: NmeaScan, file: string): InputError {
  const { bad, problems, sentences, firstBadLine } = scan.tally;
  if (bad.checksum > 0 && bad.checksum + bad.noChecksum >= sentences - bad.malformed)
    return new InputError({ file, line: firstBadLine || undefined }, `no usable NMEA sentence: all ${bad.checksum + bad.noChecksum} sentence(s) failed the checksum`);
  return new InputError(
    { file, line: problems[0]?.line },
    sentences === 0
      ? 'no NMEA sentences ("$…") found: not an NMEA 0183 log'
      : `no usable GGA or RMC sentence among ${sentences} sentence(s)${problems[0] ? ` (first problem, line ${problems[0].line}: ${problems[0].message})` : ''}`,
  );
}

function qualityPresent(epochs: NmeaEpoch[]): NmeaQualityPresent {
  const has = { hdop: false, vdop: false, sats: false, fixQuality: false, sd: false };
  for (const e of epochs) {
    if ((e.gga && Number.isFinite(e.gga.hdop)) || (e.gsa && Number.isFinite(e.gsa.hdop))) has.hdop = true;
    if (e.gsa && Number.isFinite(e.gsa.vdop)) has.vdop = true;
    if (e.gga && Number.isFinite(e.gga.sats)) has.sats = true;
    if ((e.gga && Number.isFinite(e.gga.quality)) || (e.rmc && (e.rmc.status === 'V' || e.rmc.mode === 'N'))) has.fixQuality = true;
    if (e.gst) has.sd = true;
  }
  return has;
}

function qualityColumns(has: NmeaQualityPresent): QualityColumn[] {
  const cols: QualityColumn[] = [];
  if (has.hdop) cols.push('hdop');
  if (has.vdop) cols.push('vdop');
  if (has.sats) cols.push('sats');
  if (has.fixQuality) cols.push('fixQuality');
  if (has.sd) cols.push('sdEast', 'sdNorth', 'sdUp');
  return cols;
}

/** One fix per epoch with a position (GGA, else RMC); epochs without one are skipped with a warning. */
function addEpochFixes(b: FixSeriesBuilder, w: RowWarnings, epochs: NmeaEpoch[], days: Float64Array, has: NmeaQualityPresent, heightMsl: boolean): void {
  const qv = new Float64Array(b.qualityColumns.length);
  for (let i = 0; i < epochs.length; i++) {
    const e = epochs[i]!;
    const g = e.gga;
    let lat = NaN, lon = NaN, line = e.line;
    if (g && !Number.isNaN(g.latDeg)) {
      lat = g.latDeg;
      lon = g.lonDeg;
      line = e.ggaLine!;
    } else if (e.rmc && !Number.isNaN(e.rmc.latDeg)) {
      lat = e.rmc.latDeg;
      lon = e.rmc.lonDeg;
      line = e.rmcLine!;
    }
    if (Number.isNaN(lat)) {
      w.add('no-position', 'epoch without a position (receiver had no fix) skipped', e.ggaLine ?? e.rmcLine ?? e.line);
      continue;
    }
    let h = NaN;
    if (g && !Number.isNaN(g.latDeg)) {
      h = heightMsl ? g.altitudeMslM : g.altitudeMslM + g.geoidSeparationM;
      if (Number.isFinite(h) && (h < HEIGHT_RANGE_M[0] || h > HEIGHT_RANGE_M[1])) {
        w.add('height-out-of-range', `height ${h.toFixed(1)} m outside ${HEIGHT_RANGE_M[0]}…${HEIGHT_RANGE_M[1]} m dropped (fix kept)`, line);
        h = NaN;
      }
    }
    fillEpochQuality(qv, e, has);
    b.add(days[i]! * SECONDS_PER_DAY + e.todSec, lat, lon, h, line, qv);
  }
}

/** The quality values of one epoch into `qv`, in the order of qualityColumns. */
function fillEpochQuality(qv: Float64Array, e: NmeaEpoch, has: NmeaQualityPresent): void {
  const g = e.gga;
  let k = 0;
  if (has.hdop) qv[k++] = g && Number.isFinite(g.hdop) ? g.hdop : e.gsa ? e.gsa.hdop : NaN;
  if (has.vdop) qv[k++] = e.gsa ? e.gsa.vdop : NaN;
  if (has.sats) qv[k++] = g ? g.sats : NaN;
  if (has.fixQuality) {
    let q = NaN;
    if (g && !Number.isNaN(g.latDeg) && Number.isFinite(g.quality)) q = g.quality;
    else if (e.rmc && (e.rmc.status === 'V' || e.rmc.mode === 'N')) q = 0;
    qv[k++] = q;
  }
  if (has.sd) {
    qv[k++] = e.gst ? e.gst.sdLonM : NaN;
    qv[k++] = e.gst ? e.gst.sdLatM : NaN;
    qv[k++] = e.gst ? e.gst.sdAltM : NaN;
  }
}

/** The sentence counts into the metadata, and the finished series (at least two fixes). */
function finishNmeaSeries(b: FixSeriesBuilder, scan: NmeaScan, file: string): FixSeries {
  const { bad } = scan.tally;
  const { epochs } = scan;
  const skippedSentences = bad.checksum + bad.malformed + bad.decode + bad.noChecksum;
  if (skippedSentences > 0) b.meta.skippedSentences = skippedSentences;
  if (bad.checksum + bad.noChecksum > 0) b.meta.badChecksums = bad.checksum + bad.noChecksum;
  if (b.count === 0) throw new InputError({ file, line: epochs[0]!.line }, `no epoch with a position (${epochs.length} epoch(s) without a fix)`);
  const s = b.finish();
  if (s.n < 2) throw new InputError({ file, line: s.line[0] }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}
