/**
 * Property tests (fast-check, fixed seeds): random and mutated files fed to every reader. Only
 * InputError may come out — never another exception — and what is read satisfies the FixSeries
 * invariants (at least two fixes, strictly increasing finite times, positions in range, source lines
 * within the file, no more fixes than lines). Each call must finish quickly (no hang) and the
 * series is bounded by the input size (no unbounded memory).
 */
import { gzipSync } from 'node:zlib';
import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { InputError } from '../../src/errors.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import type { FixSeries } from '../../src/input/fix-series.js';
import { readGpx } from '../../src/input/gpx.js';
import { readNmea } from '../../src/input/nmea.js';
import { readFixBytes } from '../../src/input/read-log.js';
import { scenarioGpx } from '../../src/simulate/gpx-writer.js';
import { scenarioNmea } from '../../src/simulate/nmea-writer.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

const CONFIGS: HindcastConfig[] = [
  configSchema.parse({}),
  configSchema.parse({ input: { date: '2026-05-12', timeZone: 'Europe/Zurich', angleUnit: 'rad', heightReference: 'msl' } }),
  configSchema.parse({ input: { strict: true, timeUnit: 'ms' } }),
];

/** Per-call time bound (ms) for inputs of a few kB on a shared 2-core machine. */
const CALL_MS = 2000;

function checkSeries(s: FixSeries, text: string | null): void {
  expect(s.n).toBeGreaterThanOrEqual(2);
  // bytes (possibly compressed) give no line count: bound by a generous constant instead
  const lines = text === null ? 1e6 : text.split(/\r\n|\n|\r/).length;
  expect(s.n).toBeLessThanOrEqual(lines);
  for (let i = 0; i < s.n; i++) {
    expect(Number.isFinite(s.tSec[i]!)).toBe(true);
    if (i > 0) expect(s.tSec[i]!).toBeGreaterThan(s.tSec[i - 1]!);
    expect(Math.abs(s.latDeg[i]!)).toBeLessThanOrEqual(90);
    expect(Math.abs(s.lonDeg[i]!)).toBeLessThanOrEqual(180);
    expect(s.line[i]!).toBeGreaterThanOrEqual(1);
    expect(s.line[i]!).toBeLessThanOrEqual(lines);
    if (s.heightM) expect(Number.isNaN(s.heightM[i]!) || Number.isFinite(s.heightM[i]!)).toBe(true);
  }
  for (const w of s.warnings) expect(typeof w.message).toBe('string');
  // bounded warnings: at most a listed few per code plus one count line each
  expect(s.warnings.length).toBeLessThan(400);
}

const outcome = { read: 0, refused: 0 };

/** Run a reader; pass when it returns a valid series or throws InputError; fail on anything else. */
function runReader(read: () => FixSeries, text: string | null): void {
  const t0 = performance.now();
  let s: FixSeries | undefined;
  try {
    s = read();
  } catch (e) {
    if (!(e instanceof InputError)) throw new Error(`not an InputError: ${(e as Error)?.stack ?? String(e)}`);
    outcome.refused++;
    expect(e.message.length).toBeGreaterThan(0);
    expect(e.message).not.toMatch(/\n\s+at /); // no stack in the message
  }
  expect(performance.now() - t0).toBeLessThan(CALL_MS);
  if (s) {
    outcome.read++;
    checkSeries(s, text);
  }
}

// valid base files of a short simulated session (seeded), to be mutated
const sc = simulate(defaultSpec('walk', 5, { durationSec: 40 }));
const BASES: Array<[string, string]> = [
  ['csv', scenarioCsv(sc)],
  ['nmea', scenarioNmea(sc)],
  ['gpx', scenarioGpx(sc)],
  ['csv', scenarioCsv(sc).replace(/,/g, ';').replace(/(\d)\.(\d)/g, '$1,$2')],
];
const READERS = {
  csv: readFixCsv,
  nmea: readNmea,
  gpx: readGpx,
} as const;

/**
 * A position in [0, 1) spread evenly over the file: an unbiased integer scaled down (fast-check's
 * doubles are spread over representable values, i.e. crowded near 0: nearly every mutation would
 * hit the header).
 */
const at = fc.noBias(fc.integer({ min: 0, max: 999_999 })).map((k) => k / 1e6);

/** Mutations of a text: replace, insert, delete a span, duplicate a line, truncate. */
const mutation = fc.oneof(
  fc.record({ kind: fc.constant('replace' as const), at, s: fc.string({ maxLength: 6 }) }),
  fc.record({ kind: fc.constant('insert' as const), at, s: fc.constantFrom('"', ',', ';', '$', '*', '<', '>', '\n', '\r', '\uFEFF', '&#x', '<!--', '<![CDATA[', '0', '-', 'e', 'NaN', '\u0000', 'sep=,') }),
  fc.record({ kind: fc.constant('delete' as const), at, len: fc.integer({ min: 1, max: 200 }) }),
  fc.record({ kind: fc.constant('dupLine' as const), at }),
  fc.record({ kind: fc.constant('truncate' as const), at }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer T> ? T : never;

function mutate(text: string, ms: Mutation[]): string {
  let t = text;
  for (const m of ms) {
    const i = Math.floor(m.at * t.length);
    switch (m.kind) {
      case 'replace':
        t = t.slice(0, i) + m.s + t.slice(i + m.s.length);
        break;
      case 'insert':
        t = t.slice(0, i) + m.s + t.slice(i);
        break;
      case 'delete':
        t = t.slice(0, i) + t.slice(i + m.len);
        break;
      case 'dupLine': {
        const a = t.lastIndexOf('\n', i) + 1;
        const b = t.indexOf('\n', i);
        const line = t.slice(a, b < 0 ? t.length : b + 1);
        t = t.slice(0, a) + line + line + t.slice(b < 0 ? t.length : b + 1);
        break;
      }
      case 'truncate':
        t = t.slice(0, Math.max(1, i));
        break;
    }
  }
  return t;
}

describe('readers never throw anything but InputError', () => {
  test('mutated valid files, each reader and each config', () => {
    outcome.read = outcome.refused = 0;
    let defaultRuns = 0;
    let defaultRead = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: BASES.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 6 }), fc.integer({ min: 0, max: CONFIGS.length - 1 }), (bi, ms, ci) => {
        const [kind, base] = BASES[bi]!;
        const text = mutate(base, ms);
        const before = outcome.read;
        runReader(() => READERS[kind as keyof typeof READERS](text, `m.${kind}`, CONFIGS[ci]!), text);
        if (ci === 0) {
          defaultRuns++;
          if (outcome.read > before) defaultRead++;
        }
      }),
      { seed: 20240512, numRuns: 400 },
    );
    // not vacuous: with the default configuration most mutated files are still read (the rules skip
    // what is damaged); some files are refused (strict mode, radians on degree data, cut headers)
    expect(defaultRead).toBeGreaterThan(0.5 * defaultRuns);
    expect(outcome.refused).toBeGreaterThan(0);
  });

  test('random text to every reader', () => {
    // characters that matter to the formats, plus any unicode
    const piece = fc.oneof(
      fc.constantFrom('$GPGGA,', '$GNRMC,', '$GPGST,', '$GPGSA,', '*', ',', ';', '\t', '"', '\n', '\r\n', '<trkpt lat="1" lon="2">', '<time>', '</time>', '</trkpt>', '<gpx>', 'time,lat,lon\n', '4807.038,N,', '01131.000,E,', '123519,', '230394', '2024-05-12T08:00:00Z', '48.1', '-0', '1e308', ' '),
      fc.string({ maxLength: 8 }),
      fc.string({ unit: 'binary', maxLength: 8 }),
    );
    fc.assert(
      fc.property(fc.array(piece, { maxLength: 120 }), fc.constantFrom('csv', 'nmea', 'gpx'), fc.integer({ min: 0, max: CONFIGS.length - 1 }), (parts, kind, ci) => {
        const text = parts.join('');
        runReader(() => READERS[kind as keyof typeof READERS](text, `r.${kind}`, CONFIGS[ci]!), text);
      }),
      { seed: 7, numRuns: 400 },
    );
  });

  test('random and mutated bytes, plain and gzip, through readFixBytes', () => {
    const enc = new TextEncoder();
    const names = ['b.csv', 'b.nmea', 'b.gpx', 'b.txt', 'b.log', 'b.csv.gz'];
    fc.assert(
      fc.property(
        fc.oneof(
          fc.uint8Array({ maxLength: 3000 }),
          fc.tuple(fc.integer({ min: 0, max: BASES.length - 1 }), fc.array(fc.tuple(fc.noBias(fc.nat()), fc.integer({ min: 0, max: 255 })), { maxLength: 8 })).map(([bi, flips]) => {
            const b = enc.encode(BASES[bi]![1]);
            for (const [p, v] of flips) b[p % b.length] = v;
            return b;
          }),
          fc.tuple(fc.integer({ min: 0, max: BASES.length - 1 }), at, fc.boolean()).map(([bi, cut, utf16]) => {
            const raw = utf16 ? Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(BASES[bi]![1], 'utf16le')]) : Buffer.from(BASES[bi]![1]);
            const gz = gzipSync(raw);
            return new Uint8Array(gz.subarray(0, Math.max(2, Math.floor(cut * gz.length) + 1)));
          }),
        ),
        fc.constantFrom(...names),
        fc.integer({ min: 0, max: CONFIGS.length - 1 }),
        (bytes, name, ci) => {
          runReader(() => readFixBytes(bytes, name, CONFIGS[ci]!), null);
        },
      ),
      { seed: 99, numRuns: 300 },
    );
  });
});

describe('bounded time and memory on large inputs', () => {
  // [what, bytes builder] — 2–4 MB inputs must finish well under the per-test timeout
  const big: Array<[string, string, () => string]> = [
    ['a 4 MB single line (no line breaks)', 'b.gpx', () => '<gpx>' + '<trkpt lat="1" lon="1">'.repeat(170000)],
    ['a 3 MB NMEA file of bad checksums', 'b.nmea', () => '$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*00\n'.repeat(45000)],
    ['3 MB of one quote and commas', 'b.csv', () => 'time,lat,lon\n"' + ',,,,'.repeat(750000)],
  ];
  test.each(big)('%s', (_w, name, make) => {
    const cfg = CONFIGS[0]!;
    const t0 = performance.now();
    const bytes = new TextEncoder().encode(make());
    let err: unknown;
    try {
      readFixBytes(bytes, name, cfg);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    expect(performance.now() - t0).toBeLessThan(15000);
  });
  test('a gzip bomb (60 MB of zeros in 60 kB) stops at the size bound', () => {
    const bomb = gzipSync(Buffer.alloc(60 * 1024 * 1024, 0x30));
    expect(bomb.length).toBeLessThan(200_000);
    expect(() => readFixBytes(bomb, 'bomb.csv.gz', CONFIGS[0]!, { maxBytes: 1024 * 1024 })).toThrow(/exceeds 1 MiB/);
  });
});
