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
import { RowWarnings } from './row-warnings.js';

/** XOR of the character codes of `body` (the text strictly between "$" and "*"), 0–255. */
export function nmeaChecksum(body: string): number {
  let x = 0;
  for (let i = 0; i < body.length; i++) x ^= body.charCodeAt(i) & 0xff;
  return x;
}

export type NmeaSplit =
  | { ok: true; talker: string; type: string; fields: string[]; checksum: 'valid' | 'absent' }
  | { ok: false; reason: string; code: 'nmea-checksum' | 'nmea-malformed' };

/** Split one sentence ("$GPGGA,…*47", without line ending) into talker, type and fields, checking the sum. */
export function splitNmeaSentence(raw: string): NmeaSplit {
  const s = raw.trim();
  if (s[0] !== '$') return { ok: false, code: 'nmea-malformed', reason: 'does not start with "$"' };
  const star = s.lastIndexOf('*');
  let body: string;
  let checksum: 'valid' | 'absent' = 'absent';
  if (star >= 0) {
    body = s.slice(1, star);
    const hex = s.slice(star + 1);
    if (!/^[0-9A-Fa-f]{2}$/.test(hex)) return { ok: false, code: 'nmea-checksum', reason: `checksum "${hex.slice(0, 8)}" is not two hex digits` };
    const want = parseInt(hex, 16);
    const got = nmeaChecksum(body);
    if (want !== got)
      return { ok: false, code: 'nmea-checksum', reason: `checksum ${hex.toUpperCase()} does not match the sentence (computed ${got.toString(16).toUpperCase().padStart(2, '0')})` };
    checksum = 'valid';
  } else body = s.slice(1);
  const fields = body.split(',');
  const addr = fields[0]!;
  if (!/^[A-Z][A-Z0-9]{4,5}$/.test(addr)) return { ok: false, code: 'nmea-malformed', reason: `address field "${addr.slice(0, 12)}" is not a talker and sentence type` };
  // proprietary sentences ($P + maker code) are reported with talker "P"
  if (addr[0] === 'P') return { ok: true, talker: 'P', type: addr.slice(1), fields, checksum };
  return { ok: true, talker: addr.slice(0, addr.length - 3), type: addr.slice(-3), fields, checksum };
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)$/;

/** A plain decimal field; NaN when empty or not a number. */
function dec(f: string | undefined): number {
  if (f === undefined || !DECIMAL.test(f)) return NaN;
  return Number(f);
}

/** UTC time of day "hhmmss(.sss)" in seconds; NaN when malformed or out of range. */
export function nmeaTimeOfDaySec(f: string | undefined): number {
  if (f === undefined) return NaN;
  const m = /^(\d{2})(\d{2})(\d{2}(?:\.\d+)?)$/.exec(f);
  if (!m) return NaN;
  const h = +m[1]!, mi = +m[2]!, s = +m[3]!;
  if (h > 23 || mi > 59 || !(s < 60)) return NaN;
  return h * 3600 + mi * 60 + s;
}

/**
 * Latitude "ddmm.mmmm" with hemisphere N/S, or longitude "dddmm.mmmm" with E/W, to signed degrees;
 * NaN when malformed or out of range. The last two integer digits are minutes.
 */
export function nmeaAngleDeg(f: string | undefined, hemi: string | undefined, kind: 'lat' | 'lon'): number {
  if (f === undefined || hemi === undefined) return NaN;
  const m = /^(\d{1,3})(\d{2}(?:\.\d*)?)$/.exec(f);
  if (!m) return NaN;
  const deg = +m[1]!;
  const min = +m[2]!;
  if (!(min < 60)) return NaN;
  const v = deg + min / 60;
  const pos = kind === 'lat' ? 'N' : 'E';
  const neg = kind === 'lat' ? 'S' : 'W';
  if (hemi !== pos && hemi !== neg) return NaN;
  if (v > (kind === 'lat' ? 90 : 180)) return NaN;
  return hemi === neg ? -v : v;
}

/** RMC date "ddmmyy" as days since 1970-01-01 (UTC); NaN when malformed or not a calendar date. */
export function nmeaDateDays(f: string | undefined): number {
  if (f === undefined) return NaN;
  const m = /^(\d{2})(\d{2})(\d{2})$/.exec(f);
  if (!m) return NaN;
  const d = +m[1]!, mo = +m[2]!, yy = +m[3]!;
  const y = yy >= 80 ? 1900 + yy : 2000 + yy;
  return calendarDays(y, mo, d);
}

function calendarDays(y: number, mo: number, d: number): number {
  if (mo < 1 || mo > 12 || d < 1 || d > 31) return NaN;
  const ms = Date.UTC(y, mo - 1, d);
  const back = new Date(ms);
  if (back.getUTCFullYear() !== y || back.getUTCMonth() !== mo - 1 || back.getUTCDate() !== d) return NaN;
  return ms / 86400000;
}

export interface GgaFix {
  todSec: number;
  /** NaN when the sentence has no position (no fix). */
  latDeg: number;
  lonDeg: number;
  quality: number;
  sats: number;
  hdop: number;
  altitudeMslM: number;
  geoidSeparationM: number;
}

export interface RmcFix {
  todSec: number;
  /** "A" valid, "V" void. */
  status: string;
  latDeg: number;
  lonDeg: number;
  speedKn: number;
  courseDeg: number;
  /** Days since 1970-01-01 (UTC), NaN when absent. */
  dateDays: number;
  /** Mode indicator (NMEA 2.3+: A autonomous, D differential, E estimated, N not valid …), "" when absent. */
  mode: string;
}

export interface GstFix {
  todSec: number;
  sdLatM: number;
  sdLonM: number;
  sdAltM: number;
}

export interface GsaDop {
  pdop: number;
  hdop: number;
  vdop: number;
}

/** A decoded sentence, or the reason it cannot be used. */
export type Decoded<T> = T | string;

const nonNeg = (v: number) => (v >= 0 ? v : NaN);

/** GGA: 1 time, 2–3 lat, 4–5 lon, 6 quality, 7 satellites, 8 HDOP, 9–10 altitude (M), 11–12 geoid separation (M). */
export function decodeGga(f: string[]): Decoded<GgaFix> {
  const todSec = nmeaTimeOfDaySec(f[1]);
  if (Number.isNaN(todSec)) return `time "${f[1] ?? ''}" is not hhmmss.ss`;
  const quality = f[6] === '' || f[6] === undefined ? NaN : dec(f[6]);
  if (f[6] !== '' && f[6] !== undefined && !(Number.isInteger(quality) && quality >= 0 && quality <= 9)) return `fix quality "${f[6]}" is not 0–9`;
  let latDeg = NaN, lonDeg = NaN;
  if ((f[2] ?? '') !== '' || (f[4] ?? '') !== '') {
    latDeg = nmeaAngleDeg(f[2], f[3], 'lat');
    lonDeg = nmeaAngleDeg(f[4], f[5], 'lon');
    if (Number.isNaN(latDeg) || Number.isNaN(lonDeg)) return `position "${f[2]},${f[3]},${f[4]},${f[5]}" is not ddmm.mm,N|S,dddmm.mm,E|W`;
  }
  const alt = dec(f[9]);
  const sep = dec(f[11]);
  return {
    todSec,
    latDeg,
    lonDeg,
    quality,
    sats: nonNeg(dec(f[7])),
    hdop: nonNeg(dec(f[8])),
    altitudeMslM: (f[10] === 'M' || f[10] === '' || f[10] === undefined) ? alt : NaN,
    geoidSeparationM: (f[12] === 'M' || f[12] === '' || f[12] === undefined) ? sep : NaN,
  };
}

/** RMC: 1 time, 2 status, 3–4 lat, 5–6 lon, 7 speed (kn), 8 course (°true), 9 date ddmmyy, 10–11 variation, 12 mode. */
export function decodeRmc(f: string[]): Decoded<RmcFix> {
  const todSec = nmeaTimeOfDaySec(f[1]);
  if (Number.isNaN(todSec)) return `time "${f[1] ?? ''}" is not hhmmss.ss`;
  const status = f[2] ?? '';
  let latDeg = NaN, lonDeg = NaN;
  if ((f[3] ?? '') !== '' || (f[5] ?? '') !== '') {
    latDeg = nmeaAngleDeg(f[3], f[4], 'lat');
    lonDeg = nmeaAngleDeg(f[5], f[6], 'lon');
    if (Number.isNaN(latDeg) || Number.isNaN(lonDeg)) return `position "${f[3]},${f[4]},${f[5]},${f[6]}" is not ddmm.mm,N|S,dddmm.mm,E|W`;
  }
  return { todSec, status, latDeg, lonDeg, speedKn: nonNeg(dec(f[7])), courseDeg: dec(f[8]), dateDays: nmeaDateDays(f[9]), mode: f[12] ?? '' };
}

/** GST: 1 time, 2 RMS, 3 semi-major σ, 4 semi-minor σ, 5 orientation, 6 latitude σ (m), 7 longitude σ (m), 8 altitude σ (m). */
export function decodeGst(f: string[]): Decoded<GstFix> {
  const todSec = nmeaTimeOfDaySec(f[1]);
  if (Number.isNaN(todSec)) return `time "${f[1] ?? ''}" is not hhmmss.ss`;
  return { todSec, sdLatM: nonNeg(dec(f[6])), sdLonM: nonNeg(dec(f[7])), sdAltM: nonNeg(dec(f[8])) };
}

/** GSA: 1 mode, 2 fix type, 3–14 satellite ids, 15 PDOP, 16 HDOP, 17 VDOP (18 system id in NMEA 4.1). */
export function decodeGsa(f: string[]): Decoded<GsaDop> {
  if (f.length < 18) return `${f.length - 1} fields, GSA has at least 17`;
  return { pdop: nonNeg(dec(f[15])), hdop: nonNeg(dec(f[16])), vdop: nonNeg(dec(f[17])) };
}

interface Epoch {
  todSec: number;
  line: number;
  gga?: GgaFix;
  ggaLine?: number;
  rmc?: RmcFix;
  rmcLine?: number;
  gst?: GstFix;
  gsa?: GsaDop;
}

/** Heights outside this range (m) are dropped from a fix (the fix is kept). */
export const HEIGHT_RANGE_M: [number, number] = [-12000, 100000];

const SECONDS_PER_DAY = 86400;

/** The configured `input.date` as days since 1970-01-01, or NaN. */
function configDateDays(date: string | undefined): number {
  if (date === undefined) return NaN;
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(date);
  return m ? calendarDays(+m[1]!, +m[2]!, +m[3]!) : NaN;
}

/**
 * Assign a UTC day to each epoch (see the file header); returns days per epoch, or null when no
 * epoch has a date and none is configured.
 */
export function assignDays(todSec: ArrayLike<number>, dateDays: ArrayLike<number>, firstDayFallback: number): Float64Array | null {
  const n = todSec.length;
  const day = new Float64Array(n).fill(NaN);
  let firstDated = -1;
  for (let i = 0; i < n; i++)
    if (Number.isFinite(dateDays[i]!)) {
      firstDated = i;
      break;
    }
  if (firstDated < 0) {
    if (!Number.isFinite(firstDayFallback) || n === 0) return null;
    day[0] = firstDayFallback;
    firstDated = 0;
  } else day[firstDated] = dateDays[firstDated]!;
  const half = SECONDS_PER_DAY / 2;
  // forward from the first dated epoch
  for (let i = firstDated + 1; i < n; i++) {
    if (Number.isFinite(dateDays[i]!)) {
      day[i] = dateDays[i]!;
      continue;
    }
    let d = day[i - 1]!;
    const dt = todSec[i]! - todSec[i - 1]!;
    if (dt < -half) d += 1;
    else if (dt > half) d -= 1;
    day[i] = d;
  }
  // backward before it
  for (let i = firstDated - 1; i >= 0; i--) {
    let d = day[i + 1]!;
    const dt = todSec[i + 1]! - todSec[i]!;
    if (dt < -half) d -= 1;
    else if (dt > half) d += 1;
    day[i] = d;
  }
  return day;
}

function splitLines(text: string): string[] {
  return text.split(/\r\n|\n|\r/);
}

export function readNmea(text: string, file: string, cfg: HindcastConfig): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  // any "*hh" at the end of a sentence anywhere in the file: then checksums are required
  const fileHasChecksums = /\*[0-9A-Fa-f]{2}\s*(\r|\n|$)/.test(body);
  const lines = splitLines(body);
  const epochs: Epoch[] = [];
  let cur: Epoch | null = null;
  let pendingGsa: GsaDop | undefined;
  const bad = { checksum: 0, malformed: 0, decode: 0, noChecksum: 0, garbage: 0 };
  const problems: Array<{ code: string; message: string; line: number }> = [];
  const note = (code: string, message: string, line: number) => {
    if (problems.length < 100000) problems.push({ code, message, line });
  };
  let sentences = 0;
  let used = 0;
  let firstBadLine = 0;
  const talkers = new Set<string>();

  const timed = (todSec: number, line: number): Epoch => {
    if (cur && cur.todSec === todSec) return cur;
    cur = { todSec, line };
    if (pendingGsa) {
      cur.gsa = pendingGsa;
      pendingGsa = undefined;
    }
    epochs.push(cur);
    return cur;
  };

  for (let li = 0; li < lines.length; li++) {
    const lineNo = li + 1;
    const rawLine = lines[li]!;
    if (rawLine.trim() === '') continue;
    const dollar = rawLine.indexOf('$');
    if (dollar < 0) {
      bad.garbage++;
      note('nmea-malformed', `not an NMEA sentence: "${rawLine.trim().slice(0, 40)}"`, lineNo);
      continue;
    }
    // one line may hold more than one sentence when a line ending was lost
    const pieces = rawLine.slice(dollar).split('$');
    for (let pi = 1; pi < pieces.length; pi++) {
      const raw = '$' + pieces[pi]!;
      if (raw.trim() === '$') continue;
      sentences++;
      const sp = splitNmeaSentence(raw);
      if (!sp.ok) {
        if (sp.code === 'nmea-checksum') bad.checksum++;
        else bad.malformed++;
        if (!firstBadLine) firstBadLine = lineNo;
        note(sp.code, `sentence skipped: ${sp.reason}`, lineNo);
        continue;
      }
      if (sp.checksum === 'absent' && fileHasChecksums) {
        bad.noChecksum++;
        if (!firstBadLine) firstBadLine = lineNo;
        note('nmea-checksum', 'sentence skipped: no checksum (other sentences of the file have one; likely damaged)', lineNo);
        continue;
      }
      if (sp.talker === 'P') continue;
      const f = sp.fields;
      let r: Decoded<unknown> | null = null;
      switch (sp.type) {
        case 'GGA': {
          const d = decodeGga(f);
          r = d;
          if (typeof d !== 'string') {
            const e = timed(d.todSec, lineNo);
            if (!e.gga) {
              e.gga = d;
              e.ggaLine = lineNo;
            }
          }
          break;
        }
        case 'RMC': {
          const d = decodeRmc(f);
          r = d;
          if (typeof d !== 'string') {
            const e = timed(d.todSec, lineNo);
            if (!e.rmc) {
              e.rmc = d;
              e.rmcLine = lineNo;
            }
          }
          break;
        }
        case 'GST': {
          const d = decodeGst(f);
          r = d;
          if (typeof d !== 'string') {
            const e = timed(d.todSec, lineNo);
            if (!e.gst) e.gst = d;
          }
          break;
        }
        case 'GSA': {
          const d = decodeGsa(f);
          r = d;
          if (typeof d !== 'string') {
            const open = cur as Epoch | null;
            if (open) {
              if (!open.gsa) open.gsa = d;
            } else pendingGsa = d;
          }
          break;
        }
        default:
          continue;
      }
      if (typeof r === 'string') {
        bad.decode++;
        note('row-skipped', `${sp.talker}${sp.type} sentence skipped: ${r}`, lineNo);
        continue;
      }
      used++;
      talkers.add(sp.talker);
    }
  }

  if (used === 0) {
    if (bad.checksum > 0 && bad.checksum + bad.noChecksum >= sentences - bad.malformed)
      throw new InputError({ file, line: firstBadLine || undefined }, `no usable NMEA sentence: all ${bad.checksum + bad.noChecksum} sentence(s) failed the checksum`);
    throw new InputError(
      { file, line: problems[0]?.line },
      sentences === 0
        ? 'no NMEA sentences ("$…") found: not an NMEA 0183 log'
        : `no usable GGA or RMC sentence among ${sentences} sentence(s)${problems[0] ? ` (first problem, line ${problems[0].line}: ${problems[0].message})` : ''}`,
    );
  }

  // dates
  const tod = new Float64Array(epochs.length);
  const dates = new Float64Array(epochs.length).fill(NaN);
  let anyRmcDate = false;
  for (let i = 0; i < epochs.length; i++) {
    tod[i] = epochs[i]!.todSec;
    const dd = epochs[i]!.rmc?.dateDays;
    if (dd !== undefined && Number.isFinite(dd)) {
      dates[i] = dd;
      anyRmcDate = true;
    }
  }
  const cfgDay = configDateDays(cfg.input.date);
  const days = assignDays(tod, dates, cfgDay);
  if (!days)
    throw new InputError(
      { file, line: epochs[0]!.line },
      'the log has no date (no RMC sentence with a date): set input.date ("YYYY-MM-DD", the UTC date of the first fix) in a --config file',
    );

  // heights
  const wantMsl = cfg.input.heightReference === 'msl';
  let anySeparation = false;
  for (const e of epochs) if (e.gga && Number.isFinite(e.gga.geoidSeparationM)) anySeparation = true;
  const heightMsl = wantMsl || !anySeparation;

  // quality columns present
  const has = { hdop: false, vdop: false, sats: false, fixQuality: false, sd: false };
  for (const e of epochs) {
    if ((e.gga && Number.isFinite(e.gga.hdop)) || (e.gsa && Number.isFinite(e.gsa.hdop))) has.hdop = true;
    if (e.gsa && Number.isFinite(e.gsa.vdop)) has.vdop = true;
    if (e.gga && Number.isFinite(e.gga.sats)) has.sats = true;
    if ((e.gga && Number.isFinite(e.gga.quality)) || (e.rmc && (e.rmc.status === 'V' || e.rmc.mode === 'N'))) has.fixQuality = true;
    if (e.gst) has.sd = true;
  }
  const cols: QualityColumn[] = [];
  if (has.hdop) cols.push('hdop');
  if (has.vdop) cols.push('vdop');
  if (has.sats) cols.push('sats');
  if (has.fixQuality) cols.push('fixQuality');
  if (has.sd) cols.push('sdEast', 'sdNorth', 'sdUp');
  const b = new FixSeriesBuilder(file, cols);
  const w = new RowWarnings(b);
  b.meta.format = 'nmea';
  b.meta.talkers = [...talkers].sort().join(',');
  b.meta.heightReference = heightMsl ? 'msl' : 'ellipsoidal';
  if (!anyRmcDate) {
    b.meta.dateFrom = 'input.date';
    b.warn('date-from-config', `no RMC date in the log: the first fix is dated ${cfg.input.date} from input.date`, epochs[0]!.line);
  }
  for (const p of problems) w.add(p.code, p.message, p.line);
  if (!fileHasChecksums) w.add('nmea-no-checksum', 'no sentence of the file has a checksum: sentences were read unverified');
  if (!wantMsl && !anySeparation && epochs.some((e) => e.gga && Number.isFinite(e.gga.altitudeMslM)))
    b.warn('height-reference', 'no GGA sentence has a geoid separation: heights are the altitude above mean sea level (marked "msl")');

  const qv = new Float64Array(cols.length);
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
    b.add(days[i]! * SECONDS_PER_DAY + e.todSec, lat, lon, h, line, qv);
  }
  w.finish();
  const skippedSentences = bad.checksum + bad.malformed + bad.decode + bad.noChecksum;
  if (skippedSentences > 0) b.meta.skippedSentences = skippedSentences;
  if (bad.checksum + bad.noChecksum > 0) b.meta.badChecksums = bad.checksum + bad.noChecksum;
  if (b.count === 0) throw new InputError({ file, line: epochs[0]!.line }, `no epoch with a position (${epochs.length} epoch(s) without a fix)`);
  const s = b.finish();
  if (s.n < 2) throw new InputError({ file, line: s.line[0] }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}
