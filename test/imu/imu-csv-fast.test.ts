/**
 * The IMU reader's byte-level fast path (src/input/imu-csv.ts) against the general reader
 * (readline + the line parser, `streamImuCsvLines`): the same samples bit for bit (Object.is), the
 * same counts, warnings (with their lines) and errors, on the sample data, on awkward IMU files, on
 * every awkward fix fixture read as an IMU file, across chunk boundaries, and on random files
 * (fast-check, fixed seed).
 */
import { mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { HindcastConfig } from '../../src/config/schema.js';
import { streamImuCsv, streamImuCsvLines, type ImuReadStats } from '../../src/input/imu-csv.js';

type Outcome = { rows: number[][]; stats?: ImuReadStats; error?: string };

async function run(read: (sink: (...v: number[]) => void) => Promise<ImuReadStats>): Promise<Outcome> {
  const rows: number[][] = [];
  try {
    const stats = await read((...v) => rows.push(v));
    return { rows, stats };
  } catch (e) {
    return { rows, error: `${(e as Error).name}: ${(e as Error).message}` };
  }
}

/** Both readers on one file (the fast one with the given chunk sizes); every outcome must equal the general one. */
async function expectSame(path: string, cfg: HindcastConfig, chunks: number[] = [1 << 20]): Promise<Outcome> {
  const ref = await run((sink) => streamImuCsvLines(path, 'x.imu.csv', cfg, sink));
  for (const c of chunks) {
    const fast = await run((sink) => streamImuCsv(path, 'x.imu.csv', cfg, sink, c));
    expect(fast.error).toEqual(ref.error);
    expect(fast.stats).toEqual(ref.stats);
    expect(fast.rows.length).toBe(ref.rows.length);
    for (let i = 0; i < ref.rows.length; i++)
      for (let j = 0; j < 7; j++) if (!Object.is(fast.rows[i]![j], ref.rows[i]![j])) expect([i, j, fast.rows[i]![j]]).toEqual([i, j, ref.rows[i]![j]]);
  }
  return ref;
}

const dir = mkdtempSync(join(tmpdir(), 'hindcast-imucsv-fast-'));
let fileNo = 0;
function file(text: string | Buffer): string {
  const p = join(dir, `f${fileNo++}.imu.csv`);
  writeFileSync(p, text);
  return p;
}

const H = 'time,ax,ay,az,gx,gy,gz';

describe('IMU CSV fast path = general reader', () => {
  it('the sample data (urban-test-car.imu.csv), also in 4 kB and 61-byte chunks', async () => {
    const ref = await expectSame('sample-data/urban-test-car.imu.csv', loadConfig({ profile: 'vehicle' }), [1 << 20, 4096, 61]);
    expect(ref.rows.length).toBeGreaterThan(10000);
  });

  const awkward: Array<[string, string | Buffer]> = [
    ['CRLF and a BOM', '\uFEFF' + H + '\r\n1000.00,0.1,0.2,9.8,0.01,0.02,0.03\r\n1000.01,0.1,0.2,9.8,0.01,0.02,0.03\r\n'],
    ['lone CR line breaks', H + '\r1000.00,0.1,0.2,9.8,0,0,0\r1000.01,0.1,0.2,9.8,0,0,1\r'],
    ['mixed breaks and blank lines', H + '\n\n1000,1,2,3,4,5,6\r\n\r\n1001,1,2,3,4,5,6\r1002,1,2,3,4,5,6\n\n'],
    ['no final line break', H + '\n1000,1,2,3,4,5,6\n1001,1,2,3,4,5,7'],
    ['semicolons, tabs in another file', 'time;ax;ay;az;gx;gy;gz\n1000;1;2;3;4;5;6\n'],
    ['tabs', 'time\tax\tay\taz\tgx\tgy\tgz\n1000\t1\t2\t3\t4\t5\t6\n'],
    ['ISO times among Unix times', H + '\n2026-05-13T09:30:00.010Z,0.1,0.2,9.8,0.01,0.02,0.03\n1778664600.02,0,0,9.81,0,0,0.5\n'],
    ['quoted and spaced cells', H + '\n"1000",1,2,3,4,5,6\n1001, 1,2,3,4,5,6\n1002,1 ,2,3,4,5,6\n 1003,1,2,3,4,5,6\n'],
    ['exponents and signs', H + '\n1000,1e-5,-2.5E+3,+3,.5,5.,-0\n1001,1E0,1e22,1e-22,1e23,1e-30,-.0e0\n1002,1e,1e+,e5,.,-,+\n'],
    ['long digit strings and many decimals', H + '\n1000,0.12345678901234567890,12345678901234567890,9007199254740993,900719925474099.3,0.30000000000000004,123.456789012345678\n'],
    ['Unix milliseconds', H + '\n1778664600010,1,2,3,4,5,6\n1778664600020,1,2,3,4,5,6\n'],
    ['bad values, missing and extra cells', H + '\n1000,x,2,3,4,5,6\n1001,1,2,3\n1002,1,2,3,4,5,6,extra,\r,9\n1003,,2,3,4,5,6\n1004,NaN,2,3,4,5,6\n1005,Infinity,2,3,4,5,6\n1006,0x10,2,3,4,5,6\n1007,1,2,3,4,5,6\n'],
    ['reordered columns and a time alias', 'gz,gy,gx,az,ay,ax,unix_time,other\n6,5,4,3,2,1,1000,q\n6,5,4,3,2,1,1001,"a,b"\n'],
    ['header only', H + '\n'],
    ['empty', ''],
    ['no time column', 'ax,ay,az,gx,gy,gz\n1,2,3,4,5,6\n'],
    ['invalid UTF-8 and NUL bytes', Buffer.concat([Buffer.from(H + '\n1000,1,2,3,4,5,6\n'), Buffer.from([0xe2, 0x28, 0xa1, 0x2c, 0x00, 0x0a]), Buffer.from('1001,1,2,3,4,5,6\n')])],
    ['more than 20 bad rows', H + '\n' + Array.from({ length: 30 }, (_, i) => (i % 2 ? `${1000 + i},1,2,3,4,5,6` : `${1000 + i},bad,2,3,4,5,6`)).join('\n')],
  ];
  it.each(awkward)('%s (chunks of 1 MB, 7 and 1 bytes)', async (_name, text) => {
    await expectSame(file(text), loadConfig({}), [1 << 20, 7, 1]);
  });

  it('units, time unit and the sensor-to-body rotation apply alike (g, deg/s, yaw 90°, ms)', async () => {
    const cfg = loadConfig({ overrides: { imu: { accelUnit: 'g', gyroUnit: 'degps', sensorToBodyDeg: { roll: 3, yaw: 90 } }, input: { timeUnit: 'ms' } } });
    await expectSame(file(H + '\n1000,1,0,1,0,0,90\n1010,0.5,0.25,1,1,2,3\n'), cfg, [1 << 20, 5]);
  });

  it('every awkward fix fixture read as an IMU file', async () => {
    const root = 'test/fixtures/awkward';
    const cfg = loadConfig({});
    const names = readdirSync(root).filter((n) => !n.endsWith('.mjs'));
    expect(names.length).toBeGreaterThan(20);
    for (const n of names) await expectSame(join(root, n), cfg, [1 << 20, 13]);
  });

  it('random files of numeric and odd cells, random line breaks (fast-check, seed 808)', async () => {
    const num = fc.oneof(
      fc.double({ noNaN: true, noDefaultInfinity: true }).map((x) => String(x)),
      fc.integer({ min: -1e6, max: 1e6 }).chain((m) => fc.integer({ min: 0, max: 9 }).map((d) => (m / 10 ** d).toFixed(d))),
      fc.bigInt({ min: 0n, max: 10n ** 20n }).map((b) => b.toString()),
      fc.constantFrom('', ' 1', '1 ', '+1', '-0', '.5', '5.', '1e5', '1E-7', '1e', 'nan', '"2"', '0x1f', '１'),
    );
    const row = fc.tuple(fc.integer({ min: 1_700_000_000_000, max: 1_800_000_000_000 }).map((ms) => (ms / 1000).toFixed(3)), fc.array(num, { minLength: 5, maxLength: 7 }));
    const brk = fc.constantFrom('\n', '\r\n', '\r', '\n\n');
    const cfg = loadConfig({});
    await fc.assert(
      fc.asyncProperty(fc.array(fc.tuple(row, brk), { maxLength: 40 }), fc.integer({ min: 1, max: 64 }), async (rows, chunk) => {
        const text = H + '\n' + rows.map(([[t, cells], b]) => [t, ...cells].join(',') + b).join('');
        await expectSame(file(text), cfg, [1 << 20, chunk]);
      }),
      { seed: 808, numRuns: 200 },
    );
  });
});
