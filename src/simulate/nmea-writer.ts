/**
 * Writes simulated fixes as an NMEA 0183 log (GGA and RMC per epoch) for tests and sample data.
 * Field layouts after the NMEA 0183 standard (National Marine Electronics Association), as widely
 * published; checksum = XOR of the bytes between "$" and "*", two upper-case hex digits.
 * Minutes are written with `minuteDecimals` digits (7 ≈ 0.2 mm) so a round trip loses nothing that
 * matters; heights as altitude above mean sea level plus a geoid separation.
 */
import type { Scenario, SimulatedFix } from './scenario.js';

export interface NmeaWriteOptions {
  /** Talker ID (GP, GN, …). */
  talker?: string;
  /** Geoid separation N (m) written in GGA: altitude = ellipsoidal height − N. */
  geoidSeparationM?: number;
  /** Write RMC (with the date) after each GGA. */
  rmc?: boolean;
  /** Decimal digits of minutes. */
  minuteDecimals?: number;
  /** Line ending. */
  eol?: string;
}

function checksumHex(body: string): string {
  let x = 0;
  for (let i = 0; i < body.length; i++) x ^= body.charCodeAt(i);
  return x.toString(16).toUpperCase().padStart(2, '0');
}

/** "$" + body + "*hh". */
export function nmeaSentence(body: string): string {
  return `$${body}*${checksumHex(body)}`;
}

function angle(valueDeg: number, degDigits: number, decimals: number, pos: string, neg: string): string {
  const scale = 10 ** decimals;
  const totalMinUnits = Math.round(Math.abs(valueDeg) * 60 * scale);
  const deg = Math.floor(totalMinUnits / (60 * scale));
  const minUnits = totalMinUnits - deg * 60 * scale;
  const min = (minUnits / scale).toFixed(decimals).padStart(3 + decimals, '0');
  return `${String(deg).padStart(degDigits, '0')}${min},${valueDeg < 0 ? neg : pos}`;
}

function timeAndDate(tSec: number): { hms: string; dmy: string } {
  const cs = Math.round(tSec * 100);
  const d = new Date(Math.floor(cs / 100) * 1000);
  const p2 = (v: number) => String(v).padStart(2, '0');
  const frac = p2(((cs % 100) + 100) % 100);
  return {
    hms: `${p2(d.getUTCHours())}${p2(d.getUTCMinutes())}${p2(d.getUTCSeconds())}.${frac}`,
    dmy: `${p2(d.getUTCDate())}${p2(d.getUTCMonth() + 1)}${p2(d.getUTCFullYear() % 100)}`,
  };
}

export function ggaSentence(f: SimulatedFix, o: Required<NmeaWriteOptions>): string {
  const { hms } = timeAndDate(f.tSec);
  const lat = angle(f.latDeg, 2, o.minuteDecimals, 'N', 'S');
  const lon = angle(f.lonDeg, 3, o.minuteDecimals, 'E', 'W');
  const alt = (f.heightM - o.geoidSeparationM).toFixed(3);
  return nmeaSentence(`${o.talker}GGA,${hms},${lat},${lon},1,${String(f.sats).padStart(2, '0')},${f.hdop.toFixed(1)},${alt},M,${o.geoidSeparationM.toFixed(3)},M,,`);
}

export function rmcSentence(f: SimulatedFix, o: Required<NmeaWriteOptions>): string {
  const { hms, dmy } = timeAndDate(f.tSec);
  const lat = angle(f.latDeg, 2, o.minuteDecimals, 'N', 'S');
  const lon = angle(f.lonDeg, 3, o.minuteDecimals, 'E', 'W');
  return nmeaSentence(`${o.talker}RMC,${hms},A,${lat},${lon},,,${dmy},,,A`);
}

/** The scenario's fixes as NMEA text. */
export function scenarioNmea(sc: Scenario, opts: NmeaWriteOptions = {}): string {
  const o: Required<NmeaWriteOptions> = { talker: 'GP', geoidSeparationM: 47.25, rmc: true, minuteDecimals: 7, eol: '\r\n', ...opts };
  const out: string[] = [];
  for (const f of sc.fixes) {
    out.push(ggaSentence(f, o));
    if (o.rmc) out.push(rmcSentence(f, o));
  }
  return out.join(o.eol) + o.eol;
}
