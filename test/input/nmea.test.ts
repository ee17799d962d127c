/**
 * NMEA 0183 reader: checksums and sentence decoding against published example sentences, and the
 * reader's epoch, date, height and bad-sentence rules.
 * Source of the sentences: NMEA 0183 standard (National Marine Electronics Association); the example
 * sentences are the ones widely published in NMEA tutorials and receiver manuals, quoted from memory
 * (their checksums agree with their text, which is what the first table checks).
 */
import { describe, expect, test } from 'vitest';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { InputError } from '../../src/errors.js';
import { assignDays, decodeGga, decodeGsa, decodeGst, decodeRmc, nmeaAngleDeg, nmeaChecksum, nmeaDateDays, nmeaTimeOfDaySec, readNmea, splitNmeaSentence } from '../../src/input/nmea.js';
import { nmeaSentence } from '../../src/simulate/nmea-writer.js';

const cfg = (input: Record<string, unknown> = {}): HindcastConfig => configSchema.parse({ input });
const utc = (iso: string) => Date.parse(iso) / 1000;

const GGA_PUB = '$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*47';
const RMC_PUB = '$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A';
const RMC_PUB2 = '$GPRMC,155123.000,A,4043.8432,N,07359.7653,W,0.15,83.25,200407,,*28';
// GST example as printed in receiver manuals (from memory); GSA example as in NMEA tutorials (from memory)
const GST_PUB = '$GPGST,172814.0,0.006,0.023,0.020,273.6,0.023,0.020,0.031*6A';
const GSA_PUB = '$GPGSA,A,3,04,05,,09,12,,,24,,,,,2.5,1.3,2.1*39';

describe('checksum (XOR of the bytes strictly between "$" and "*")', () => {
  // [sentence, published checksum] — NMEA 0183, example sentences as widely published
  const table: Array<[string, number]> = [
    [GGA_PUB, 0x47],
    [RMC_PUB, 0x6a],
    [RMC_PUB2, 0x28],
    [GST_PUB, 0x6a],
    [GSA_PUB, 0x39],
  ];
  test.each(table)('%s → %i', (s, want) => {
    expect(nmeaChecksum(s.slice(1, s.indexOf('*')))).toBe(want);
    const sp = splitNmeaSentence(s);
    expect(sp.ok && sp.checksum).toBe('valid');
  });
  test.each(table)('one changed character fails the check: %s', (s) => {
    // change a digit of the body: 4807 → 4808 etc. (first digit after the first comma)
    const i = s.indexOf(',') + 1;
    const c = s[i]!;
    const bad = s.slice(0, i) + (c === '9' ? '8' : String.fromCharCode(c.charCodeAt(0) + 1)) + s.slice(i + 1);
    const sp = splitNmeaSentence(bad);
    expect(sp.ok).toBe(false);
    if (!sp.ok) expect(sp.code).toBe('nmea-checksum');
  });
  test('lower-case hex digits are accepted; a non-hex checksum is refused', () => {
    expect(splitNmeaSentence(RMC_PUB.replace('*6A', '*6a')).ok).toBe(true);
    expect(splitNmeaSentence(RMC_PUB.replace('*6A', '*6G')).ok).toBe(false);
  });
});

describe('field decoding', () => {
  test('GGA published example: 12:35:19 UTC, 48°07.038′ N 11°31.000′ E, quality 1, 8 sats, HDOP 0.9, 545.4 m MSL, N 46.9 m', () => {
    const sp = splitNmeaSentence(GGA_PUB);
    if (!sp.ok) throw new Error(sp.reason);
    expect(sp.talker).toBe('GP');
    expect(sp.type).toBe('GGA');
    const g = decodeGga(sp.fields);
    if (typeof g === 'string') throw new Error(g);
    expect(g.todSec).toBe(12 * 3600 + 35 * 60 + 19);
    expect(g.latDeg).toBeCloseTo(48.1173, 9); // 48 + 7.038/60, exact to 1e-9
    expect(g.lonDeg).toBeCloseTo(11 + 31 / 60, 9); // 11.516667
    expect(g.quality).toBe(1);
    expect(g.sats).toBe(8);
    expect(g.hdop).toBe(0.9);
    expect(g.altitudeMslM).toBe(545.4);
    expect(g.geoidSeparationM).toBe(46.9);
  });
  test('RMC published example: 22.4 kn, course 84.4°, 23 March 1994', () => {
    const sp = splitNmeaSentence(RMC_PUB);
    if (!sp.ok) throw new Error(sp.reason);
    const r = decodeRmc(sp.fields);
    if (typeof r === 'string') throw new Error(r);
    expect(r.status).toBe('A');
    expect(r.latDeg).toBeCloseTo(48.1173, 9);
    expect(r.lonDeg).toBeCloseTo(11.516667, 6);
    expect(r.speedKn).toBe(22.4);
    expect(r.courseDeg).toBe(84.4);
    expect(r.dateDays).toBe(Date.UTC(1994, 2, 23) / 86400000);
  });
  test('RMC second published example: 15:51:23 UTC, 40°43.8432′ N 73°59.7653′ W, 20 April 2007', () => {
    const sp = splitNmeaSentence(RMC_PUB2);
    if (!sp.ok) throw new Error(sp.reason);
    const r = decodeRmc(sp.fields);
    if (typeof r === 'string') throw new Error(r);
    expect(r.todSec).toBe(15 * 3600 + 51 * 60 + 23);
    expect(r.latDeg).toBeCloseTo(40 + 43.8432 / 60, 9);
    expect(r.lonDeg).toBeCloseTo(-(73 + 59.7653 / 60), 9);
    expect(r.speedKn).toBe(0.15);
    expect(r.courseDeg).toBe(83.25);
    expect(r.dateDays).toBe(Date.UTC(2007, 3, 20) / 86400000);
  });
  test('GST example: σlat 0.023 m, σlon 0.020 m, σalt 0.031 m', () => {
    const sp = splitNmeaSentence(GST_PUB);
    if (!sp.ok) throw new Error(sp.reason);
    const g = decodeGst(sp.fields);
    if (typeof g === 'string') throw new Error(g);
    expect(g.todSec).toBe(17 * 3600 + 28 * 60 + 14);
    expect([g.sdLatM, g.sdLonM, g.sdAltM]).toEqual([0.023, 0.02, 0.031]);
  });
  test('GSA example: PDOP 2.5, HDOP 1.3, VDOP 2.1', () => {
    const sp = splitNmeaSentence(GSA_PUB);
    if (!sp.ok) throw new Error(sp.reason);
    expect(decodeGsa(sp.fields)).toEqual({ pdop: 2.5, hdop: 1.3, vdop: 2.1 });
  });
  // [field, hemisphere, kind, expected degrees or NaN] — ddmm.mmmm / dddmm.mmmm layout of NMEA 0183
  const angles: Array<[string, string, 'lat' | 'lon', number]> = [
    ['4807.038', 'N', 'lat', 48.1173],
    ['4807.038', 'S', 'lat', -48.1173],
    ['01131.000', 'W', 'lon', -11.516666666666667],
    ['0000.0000', 'N', 'lat', 0],
    ['9000.0000', 'N', 'lat', 90],
    ['9000.0001', 'N', 'lat', NaN], // beyond the pole
    ['18000.000', 'E', 'lon', 180],
    ['4860.000', 'N', 'lat', NaN], // minutes must be < 60
    ['4807.038', 'E', 'lat', NaN], // wrong hemisphere letter
    ['48O7.038', 'N', 'lat', NaN], // letter O for zero
    ['', 'N', 'lat', NaN],
  ];
  test.each(angles)('angle %s %s (%s) → %f', (f, h, k, want) => {
    const v = nmeaAngleDeg(f, h, k);
    if (Number.isNaN(want)) expect(v).toBeNaN();
    else expect(v).toBeCloseTo(want, 9);
  });
  // [field, seconds of day or NaN]
  const times: Array<[string, number]> = [
    ['123519', 45319],
    ['000000.00', 0],
    ['235959.99', 86399.99],
    ['240000', NaN],
    ['126019', NaN],
    ['1235', NaN],
  ];
  test.each(times)('time %s → %f', (f, want) => {
    const v = nmeaTimeOfDaySec(f);
    if (Number.isNaN(want)) expect(v).toBeNaN();
    else expect(v).toBeCloseTo(want, 6);
  });
  // [ddmmyy, ISO date or null] — two-digit years 80–99 → 19xx, 00–79 → 20xx (common practice)
  const dates: Array<[string, string | null]> = [
    ['230394', '1994-03-23'],
    ['200407', '2007-04-20'],
    ['010180', '1980-01-01'],
    ['311279', '2079-12-31'],
    ['290200', '2000-02-29'],
    ['290201', null], // 2001 is not a leap year
    ['320194', null],
  ];
  test.each(dates)('date %s → %s', (f, want) => {
    const v = nmeaDateDays(f);
    if (want === null) expect(v).toBeNaN();
    else expect(v * 86400).toBe(utc(`${want}T00:00:00Z`));
  });
});

describe('readNmea', () => {
  const two = (s: string) => [s, nmeaSentence(s.slice(1, s.indexOf('*')).replace('123519', '123520'))];
  test('in a file with checksums, a sentence without one is treated as damaged and skipped', () => {
    const noSum = GGA_PUB.replace('123519', '123521').replace('*47', '');
    const s = readNmea([RMC_PUB, ...two(GGA_PUB), noSum, ''].join('\r\n'), 'a.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.warnings.find((w) => w.code === 'nmea-checksum')?.line).toBe(4);
  });
  test('two epochs: times, positions, heights, quality columns', () => {
    const text = [...two(GGA_PUB), RMC_PUB].join('\n');
    // GGA 123519, GGA 123520, RMC 123519 (out of order: the RMC starts a third epoch at 123519 → dated, duplicate time)
    const s = readNmea(text, 'a.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.tSec[0]).toBe(utc('1994-03-23T12:35:19Z'));
    expect(s.tSec[1]).toBe(utc('1994-03-23T12:35:20Z'));
    expect(s.heightM![0]).toBeCloseTo(592.3, 9); // 545.4 + 46.9
    expect(s.quality.hdop![0]).toBe(0.9);
    expect(s.quality.sats![0]).toBe(8);
    expect(s.quality.fixQuality![0]).toBe(1);
    expect(s.meta.heightReference).toBe('ellipsoidal');
    expect(s.warnings.some((w) => w.code === 'duplicate-time')).toBe(true);
  });
  test('input.heightReference "msl" keeps the GGA altitude 545.4 m', () => {
    const s = readNmea([RMC_PUB, ...two(GGA_PUB)].join('\n'), 'a.nmea', cfg({ heightReference: 'msl' }));
    expect(s.heightM![0]).toBe(545.4);
    expect(s.meta.heightReference).toBe('msl');
  });
  test.each(['GN', 'GL', 'GA', 'GB', 'BD', 'GQ'])('talker %s is read like GP', (talker) => {
    const re = (s: string) => nmeaSentence(s.slice(1, s.indexOf('*')).replace(/^GP/, talker));
    const text = [re(RMC_PUB), ...two(GGA_PUB).map(re)].join('\n');
    const s = readNmea(text, 'a.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.latDeg[0]).toBeCloseTo(48.1173, 9);
    expect(s.meta.talkers).toBe(talker);
  });
  test('a sentence with a wrong checksum is skipped and listed with its line', () => {
    const bad = GGA_PUB.replace('*47', '*48').replace('123519', '123521');
    const text = [RMC_PUB, ...two(GGA_PUB), bad].join('\n');
    const s = readNmea(text, 'a.nmea', cfg());
    expect(s.n).toBe(2);
    const w = s.warnings.filter((x) => x.code === 'nmea-checksum');
    expect(w).toHaveLength(1);
    expect(w[0]!.line).toBe(4);
    expect(s.meta.badChecksums).toBe(1);
  });
  test('GST sigmas become sdEast (longitude σ), sdNorth (latitude σ), sdUp; GSA gives VDOP', () => {
    const gga1 = nmeaSentence('GPGGA,172814.0,4807.038,N,01131.000,E,4,12,0.8,545.4,M,46.9,M,1.0,0000');
    const gga2 = nmeaSentence('GPGGA,172815.0,4807.039,N,01131.001,E,4,12,0.8,545.5,M,46.9,M,1.0,0000');
    const rmc = nmeaSentence('GPRMC,172814.0,A,4807.038,N,01131.000,E,0.1,0.0,010125,,,R');
    const text = [gga1, GSA_PUB, GST_PUB, rmc, gga2].join('\n');
    const s = readNmea(text, 'g.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.quality.sdNorth![0]).toBe(0.023);
    expect(s.quality.sdEast![0]).toBe(0.02);
    expect(s.quality.sdUp![0]).toBe(0.031);
    expect(s.quality.vdop![0]).toBe(2.1);
    expect(s.quality.hdop![0]).toBe(0.8); // GGA HDOP wins over GSA's
    expect(s.quality.fixQuality![0]).toBe(4);
    expect(s.quality.sdEast![1]).toBeNaN(); // no GST for the second epoch
    expect(s.tSec[0]).toBe(utc('2025-01-01T17:28:14Z'));
  });
  test('GGA-only log: date from input.date, rollover at UTC midnight', () => {
    const text = ['235958', '235959', '000000', '000001'].map((t) => nmeaSentence(`GNGGA,${t}.00,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,`)).join('\n');
    expect(() => readNmea(text, 'd.nmea', cfg())).toThrow(/input\.date/);
    const s = readNmea(text, 'd.nmea', cfg({ date: '2024-02-28' }));
    expect(Array.from(s.tSec)).toEqual([utc('2024-02-28T23:59:58Z'), utc('2024-02-28T23:59:59Z'), utc('2024-02-29T00:00:00Z'), utc('2024-02-29T00:00:01Z')]);
    expect(s.warnings.some((w) => w.code === 'date-from-config')).toBe(true);
  });
  test('epochs before the first RMC take its date, stepping back over midnight', () => {
    const gga = (t: string) => nmeaSentence(`GPGGA,${t},4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,`);
    const text = [gga('235959'), gga('000000'), nmeaSentence('GPRMC,000001,A,4807.038,N,01131.000,E,,,010324,,,A'), gga('000002')].join('\n');
    const s = readNmea(text, 'r.nmea', cfg());
    expect(Array.from(s.tSec)).toEqual([utc('2024-02-29T23:59:59Z'), utc('2024-03-01T00:00:00Z'), utc('2024-03-01T00:00:01Z'), utc('2024-03-01T00:00:02Z')]);
  });
  test('assignDays table: forward, backward and fallback', () => {
    // [time of day, RMC day or NaN] → days; rollover when the time of day falls by more than 12 h
    expect(Array.from(assignDays([86000, 100, 200], [NaN, 10, NaN], NaN)!)).toEqual([9, 10, 10]);
    expect(Array.from(assignDays([86399, 0, 43000, 86000, 10], [NaN, NaN, NaN, NaN, NaN], 5)!)).toEqual([5, 6, 6, 6, 7]);
    // a time of day more than 12 h later than the previous one is a row from the day before (out of order)
    expect(Array.from(assignDays([10, 86390], [NaN, NaN], 5)!)).toEqual([5, 4]);
    expect(assignDays([1, 2], [NaN, NaN], NaN)).toBeNull();
  });
  test('GGA with fix quality 0 and a position is kept (the session flags it); without a position it is skipped', () => {
    const text = [
      RMC_PUB,
      GGA_PUB,
      nmeaSentence('GPGGA,123520,4807.040,N,01131.000,E,0,00,,,M,,M,,'),
      nmeaSentence('GPGGA,123521,,,,,0,00,,,M,,M,,'),
      nmeaSentence('GPGGA,123522,4807.042,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,'),
    ].join('\n');
    const s = readNmea(text, 'q.nmea', cfg());
    expect(s.n).toBe(3);
    expect(s.quality.fixQuality![1]).toBe(0);
    expect(s.heightM![1]).toBeNaN();
    expect(s.warnings.find((w) => w.code === 'no-position')?.line).toBe(4);
  });
  test('a log without any checksum is read unverified with one warning', () => {
    const strip = (x: string) => x.slice(0, x.indexOf('*'));
    const text = [strip(RMC_PUB), strip(GGA_PUB), strip(GGA_PUB).replace('123519', '123520')].join('\n');
    const s = readNmea(text, 'n.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.warnings.filter((w) => w.code === 'nmea-no-checksum')).toHaveLength(1);
  });
  test('two sentences run together on one line: the intact one is read, the cut one counted', () => {
    const gga2 = nmeaSentence(GGA_PUB.slice(1, GGA_PUB.indexOf('*')).replace('123519', '123520'));
    const text = [RMC_PUB, GGA_PUB.slice(0, 30) + gga2].join('\n');
    const s = readNmea(text, 'j.nmea', cfg());
    expect(s.n).toBe(2);
    expect(s.warnings.some((w) => w.line === 2 && w.code.startsWith('nmea-'))).toBe(true);
  });
  // [case, text, message pattern] — files that cannot be a session fail with a reason and a line
  const failing: Array<[string, string, RegExp]> = [
    ['empty', '', /empty file/],
    ['not NMEA', 'time,lat,lon\n1,2,3\n', /no NMEA sentences/],
    ['all checksums bad', [GGA_PUB.replace('*47', '*00'), RMC_PUB.replace('*6A', '*00')].join('\n'), /checksum/],
    ['one fix', [GGA_PUB, RMC_PUB].join('\n'), /only 1 fix/],
    ['only GSV', nmeaSentence('GPGSV,1,1,01,01,40,083,46') + '\n', /no usable GGA or RMC/],
  ];
  test.each(failing)('%s → InputError', (_c, text, re) => {
    let err: unknown;
    try {
      readNmea(text, 'f.nmea', cfg());
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).file).toBe('f.nmea');
    expect((err as Error).message).toMatch(re);
  });
});
