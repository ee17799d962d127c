/**
 * Decoding of the NMEA 0183 sentences used (GGA, RMC, GST, GSA) and of their fields (time of day,
 * angles, dates); each decoder returns the values or the reason the sentence cannot be used.
 */

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

/** Days since 1970-01-01 of a calendar date (UTC); NaN when it is not one. */
export function calendarDays(y: number, mo: number, d: number): number {
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
