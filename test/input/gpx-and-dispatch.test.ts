/**
 * GPX 1.1 reader (GPX 1.1 Schema Documentation, Topografix; XML 1.0 for entities and CDATA), text
 * decoding (Unicode byte-order marks, Unicode Standard §23.8), and read-log dispatch by name and
 * content (gzip magic 1F 8B, RFC 1952 §2.3.1).
 */
import { gzipSync } from 'node:zlib';
import { describe, expect, test } from 'vitest';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { InputError } from '../../src/errors.js';
import { decodeLogBytes } from '../../src/input/decode-text.js';
import { decodeXmlText, readGpx } from '../../src/input/gpx.js';
import { formatFromName, isFixLogName, readFixBytes, sessionStem, sniffFormat } from '../../src/input/read-log.js';

const cfg = (input: Record<string, unknown> = {}): HindcastConfig => configSchema.parse({ input });

const doc = (body: string) => `<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="t" xmlns="http://www.topografix.com/GPX/1/1">\n${body}\n</gpx>\n`;

describe('readGpx', () => {
  test('track points: lat, lon, ele, time, hdop, vdop, sat, fix; two segments; zoneless time is UTC', () => {
    const text = doc(`<trk><trkseg>
<trkpt lat="48.1173" lon="11.5167"><ele>520.5</ele><time>2024-05-12T08:00:00Z</time><fix>3d</fix><sat>9</sat><hdop>0.9</hdop><vdop>1.4</vdop></trkpt>
<trkpt lat='48.1174' lon='11.5168'><ele>520.6</ele><time>2024-05-12T08:00:01</time><fix>none</fix><sat>0</sat><hdop>9.9</hdop></trkpt>
</trkseg><trkseg>
<trkpt lat="-33.5" lon="-70.25"><time>2024-05-12T10:00:02+02:00</time><fix>dgps</fix></trkpt>
</trkseg></trk>`);
    const s = readGpx(text, 't.gpx', cfg());
    expect(s.n).toBe(3);
    const t0 = Date.UTC(2024, 4, 12, 8, 0, 0) / 1000;
    expect(Array.from(s.tSec)).toEqual([t0, t0 + 1, t0 + 2]);
    expect(Array.from(s.latDeg)).toEqual([48.1173, 48.1174, -33.5]);
    expect(s.heightM![0]).toBe(520.5);
    expect(s.heightM![2]).toBeNaN();
    expect(Array.from(s.quality.fixQuality!)).toEqual([1, 0, 2]); // 3d → 1, none → 0, dgps → 2
    expect(s.quality.sats![1]).toBe(0);
    expect(s.quality.vdop![0]).toBe(1.4);
    expect(Array.from(s.line)).toEqual([4, 5, 7]);
    expect(s.meta.heightReference).toBe('msl');
  });
  test('namespace prefixes, comments, CDATA, entities, extensions and waypoints', () => {
    const text = `<?xml version="1.0"?>
<!DOCTYPE gpx [ <!ENTITY x "y"> ]>
<g:gpx xmlns:g="http://www.topografix.com/GPX/1/1" version="1.1">
<g:wpt lat="1" lon="1"><g:time>2024-05-12T07:00:00Z</g:time></g:wpt>
<!-- <trkpt lat="5" lon="5"><time>2024-05-12T07:00:00Z</time></trkpt> -->
<g:trk><g:trkseg>
<g:trkpt lat="48.1" lon="11.5"><g:time><![CDATA[2024-05-12T08:00:00Z]]></g:time><g:extensions><g:time>1999-01-01T00:00:00Z</g:time></g:extensions></g:trkpt>
<g:trkpt lat="&#52;8.2" lon="11.6"><g:ele>1&#x30;</g:ele><g:time>2024-05-12T08:00:01Z</g:time></g:trkpt>
</g:trkseg></g:trk></g:gpx>`;
    const s = readGpx(text, 'n.gpx', cfg());
    expect(s.n).toBe(2);
    expect(Array.from(s.latDeg)).toEqual([48.1, 48.2]); // &#52; is "4"
    expect(s.heightM![1]).toBe(10);
    expect(s.tSec[0]).toBe(Date.UTC(2024, 4, 12, 8, 0, 0) / 1000); // not the <extensions> time
  });
  test('points with bad coordinates or times are skipped by line; bad ele keeps the point', () => {
    const text = doc(`<trk><trkseg>
<trkpt lat="48.1" lon="11.5"><time>2024-05-12T08:00:00Z</time></trkpt>
<trkpt lat="91" lon="11.5"><time>2024-05-12T08:00:01Z</time></trkpt>
<trkpt lat="48.1" lon="11.5"><time>yesterday</time></trkpt>
<trkpt lat="48.1" lon="11.5"><ele>high</ele><time>2024-05-12T08:00:03Z</time></trkpt>
<trkpt lon="11.5"><time>2024-05-12T08:00:04Z</time></trkpt>
</trkseg></trk>`);
    const s = readGpx(text, 'b.gpx', cfg());
    expect(s.n).toBe(2);
    const lines = s.warnings.filter((w) => w.code === 'row-skipped').map((w) => w.line);
    expect(lines).toEqual([5, 6, 8]);
    expect(s.warnings.find((w) => w.code === 'height-out-of-range')?.line).toBe(7);
  });
  test('decodeXmlText: the five predefined entities and character references (XML 1.0 §4.6, §4.1)', () => {
    expect(decodeXmlText('&lt;&gt;&amp;&quot;&apos;&#65;&#x42;&unknown;')).toBe(`<>&"'AB&unknown;`);
  });
  // [case, text, message]
  const failing: Array<[string, string, RegExp]> = [
    ['not XML at all', 'time,lat,lon\n', /no <gpx> element/],
    ['no track', doc('<rte><rtept lat="1" lon="1"/></rte>'), /no track points.*1 route or waypoint/],
    ['one point', doc('<trk><trkseg><trkpt lat="1" lon="1"><time>2024-05-12T08:00:00Z</time></trkpt></trkseg></trk>'), /only 1 fix/],
  ];
  test.each(failing)('%s → InputError', (_c, text, re) => {
    expect(() => readGpx(text, 'f.gpx', cfg())).toThrow(re);
    expect(() => readGpx(text, 'f.gpx', cfg())).toThrow(InputError);
  });
});

describe('decodeLogBytes', () => {
  const ascii = 'time,lat,lon\n';
  const le = Buffer.from(ascii, 'utf16le');
  const be = Buffer.from(le).swap16();
  // [case, bytes, text or error pattern, encoding]
  const table: Array<[string, Uint8Array, string | RegExp, string?]> = [
    ['UTF-8', Buffer.from(ascii), ascii, 'utf-8'],
    ['UTF-8 with BOM (EF BB BF)', Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(ascii)]), ascii, 'utf-8'],
    ['UTF-16 LE with BOM (FF FE)', Buffer.concat([Buffer.from([0xff, 0xfe]), le]), ascii, 'utf-16le'],
    ['UTF-16 BE with BOM (FE FF)', Buffer.concat([Buffer.from([0xfe, 0xff]), be]), ascii, 'utf-16be'],
    ['UTF-16 LE without BOM (NUL every other byte)', le, ascii, 'utf-16le'],
    ['UTF-32 LE BOM (FF FE 00 00)', Buffer.from([0xff, 0xfe, 0, 0, 0x74, 0, 0, 0]), /UTF-32/],
    ['NUL bytes', Buffer.from('time\u0000,lat,lon\n'), /binary content/],
    ['mostly control bytes', Buffer.from(Array.from({ length: 200 }, (_, i) => (i % 3 === 0 ? 0x01 : 0x41))), /binary content/],
    ['empty', new Uint8Array(0), /empty file/],
    ['Latin-1 degree sign in a header is tolerated (U+FFFD)', Buffer.from([...Buffer.from('lat ('), 0xb0, ...Buffer.from('),lon\n')]), /^lat \(\uFFFD\),lon\n$/, 'utf-8'],
  ];
  test.each(table)('%s', (_c, bytes, want, enc) => {
    if (want instanceof RegExp && enc === undefined) {
      expect(() => decodeLogBytes(bytes, 'x')).toThrow(want);
      expect(() => decodeLogBytes(bytes, 'x')).toThrow(InputError);
      return;
    }
    const d = decodeLogBytes(bytes, 'x');
    if (want instanceof RegExp) expect(d.text).toMatch(want);
    else expect(d.text).toBe(want);
    if (enc) expect(d.encoding).toBe(enc);
  });
});

describe('names and dispatch', () => {
  // [file name, is a fix log, format from the name, session stem]
  const names: Array<[string, boolean, string, string]> = [
    ['walk.csv', true, 'csv', 'walk'],
    ['walk.CSV.GZ', true, 'csv', 'walk'],
    ['boat.nmea', true, 'nmea', 'boat'],
    ['boat.nma.gz', true, 'nmea', 'boat'],
    ['hike.gpx', true, 'gpx', 'hike'],
    ['hike.gpx.gz', true, 'gpx', 'hike'],
    ['logger.txt', true, 'sniff', 'logger'],
    ['logger.log.gz', true, 'sniff', 'logger'],
    ['walk.imu.csv', false, 'csv', 'walk'], // companion, owned by the IMU reader
    ['walk.imu.csv.gz', false, 'csv', 'walk'],
    ['walk.decisions.csv', false, 'csv', 'walk'], // companion, owned by the review loop
    ['.hidden.csv', false, 'csv', '.hidden.csv'],
    ['photo.jpg', false, 'sniff', 'photo'],
    ['archive.gz', false, 'sniff', 'archive'],
  ];
  test.each(names)('%s', (n, isLog, fmt, stem) => {
    expect(isFixLogName(n)).toBe(isLog);
    expect(formatFromName(n)).toBe(fmt);
    expect(sessionStem(n)).toBe(stem);
  });
  // [text start, sniffed format]
  const sniff: Array<[string, string]> = [
    ['<?xml version="1.0"?><gpx>', 'gpx'],
    ['\uFEFF  <gpx version="1.1">', 'gpx'],
    ['$GPGGA,123519,4807.038,N\n$GPRMC,123519,A\n', 'nmea'],
    ['# header\n$GNGGA,1\n$GNRMC,2\n', 'nmea'],
    ['2024-05-12 08:00:00 $GPGGA,1,2\n', 'nmea'],
    ['time,lat,lon\n1,2,3\n', 'csv'],
    ['', 'csv'],
  ];
  test.each(sniff)('sniff %j → %s', (t, f) => expect(sniffFormat(t)).toBe(f));
  test('gzip recognised by its magic bytes whatever the name', () => {
    const text = 'time,lat,lon\n2024-05-12T08:00:00Z,48.1,11.5\n2024-05-12T08:00:01Z,48.1,11.5\n';
    expect(readFixBytes(gzipSync(Buffer.from(text)), 'plain.csv', cfg()).n).toBe(2);
    expect(() => readFixBytes(gzipSync(Buffer.alloc(0)), 'e.csv.gz', cfg())).toThrow(/empty file/);
  });
});
