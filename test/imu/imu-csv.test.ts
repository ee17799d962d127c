/** The IMU CSV reader: time formats, units, sensor-to-body rotation, bad rows, streaming from a file. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { parseImuCsvText, streamImuCsv, STANDARD_GRAVITY_MPS2 } from '../../src/input/imu-csv.js';
import { InputError } from '../../src/errors.js';

type Row = number[];
const collect = (rows: Row[]) => (t: number, ...v: number[]) => rows.push([t, ...v]);

describe('imu-csv', () => {
  it('reads ISO times with a zone and Unix seconds, m/s² and rad/s by default', () => {
    const cfg = loadConfig({});
    const rows: Row[] = [];
    const st = parseImuCsvText('time,ax,ay,az,gx,gy,gz\n2026-05-13T09:30:00.010Z,0.1,0.2,9.8,0.01,0.02,0.03\n1778664600.02,0,0,9.81,0,0,0.5\n', 'a.imu.csv', cfg, collect(rows));
    expect(st.samples).toBe(2);
    expect(rows[0]![0]).toBeCloseTo(Date.UTC(2026, 4, 13, 9, 30, 0) / 1000 + 0.01, 6);
    expect(rows[0]!.slice(1)).toEqual([0.1, 0.2, 9.8, 0.01, 0.02, 0.03]);
    expect(rows[1]![0]).toBeCloseTo(1778664600.02, 6);
  });
  it('converts g and deg/s, and rotates sensor axes into the body frame (yaw 90°: sensor x = body y)', () => {
    const cfg = loadConfig({ overrides: { imu: { accelUnit: 'g', gyroUnit: 'degps', sensorToBodyDeg: { yaw: 90 } } } });
    const rows: Row[] = [];
    parseImuCsvText('time;ax;ay;az;gx;gy;gz\n100;1;0;1;0;0;90\n', 'b.imu.csv', cfg, collect(rows));
    const r = rows[0]!;
    expect(r[1]).toBeCloseTo(0, 12);
    expect(r[2]).toBeCloseTo(STANDARD_GRAVITY_MPS2, 12);
    expect(r[3]).toBeCloseTo(STANDARD_GRAVITY_MPS2, 12);
    expect(r[6]).toBeCloseTo(Math.PI / 2, 12);
  });
  it('skips bad rows with a warning naming the line; refuses a header without the columns', () => {
    const cfg = loadConfig({});
    const rows: Row[] = [];
    const st = parseImuCsvText('time,ax,ay,az,gx,gy,gz\n1,0,0,9.8,0,0,0\n2026-05-13T09:30:00,0,0,9.8,0,0,0\n3,x,0,9.8,0,0,0\n', 'c.imu.csv', cfg, collect(rows));
    expect(st.samples).toBe(1);
    expect(st.skipped).toBe(2);
    expect(st.warnings.map((w) => w.line)).toEqual([3, 4]);
    expect(() => parseImuCsvText('time,ax,ay\n1,2,3\n', 'd.imu.csv', cfg, () => {})).toThrow(InputError);
  });
  it.each([
    ['time,acc_x,acc_y,acc_z,gyro_x,gyro_y,gyro_z', [0.1, 0.2, 9.8, 0.01, 0.02, 0.03], undefined],
    ['Timestamp,AccX,AccY,AccZ,GyroX,GyroY,GyroZ', [0.1, 0.2, 9.8, 0.01, 0.02, 0.03], undefined],
    ['t,accel_x [m/s^2],accel_y [m/s^2],accel_z [m/s^2],wx (rad/s),wy (rad/s),wz (rad/s)', [0.1, 0.2, 9.8, 0.01, 0.02, 0.03], undefined],
    // units stated in the header win over the configuration's m/s² and rad/s, with a note
    ['time,ax [g],ay [g],az [g],gx (deg/s),gy (deg/s),gz (deg/s)', [0.1 * STANDARD_GRAVITY_MPS2, 0.2 * STANDARD_GRAVITY_MPS2, 9.8 * STANDARD_GRAVITY_MPS2, (0.01 * Math.PI) / 180, (0.02 * Math.PI) / 180, (0.03 * Math.PI) / 180], 'imu-unit'],
    ['time,ax_g,ay_g,az_g,gx_dps,gy_dps,gz_dps', [0.1 * STANDARD_GRAVITY_MPS2, 0.2 * STANDARD_GRAVITY_MPS2, 9.8 * STANDARD_GRAVITY_MPS2, (0.01 * Math.PI) / 180, (0.02 * Math.PI) / 180, (0.03 * Math.PI) / 180], 'imu-unit'],
  ] as const)('header "%s": the six axes found, values in SI units (1e-12 relative)', (header, want, note) => {
    const rows: Row[] = [];
    const st = parseImuCsvText(`${header}\n100,0.1,0.2,9.8,0.01,0.02,0.03\n`, 'h.imu.csv', loadConfig({}), collect(rows));
    expect(st.samples).toBe(1);
    rows[0]!.slice(1).forEach((v, j) => expect(Math.abs(v - want[j]!)).toBeLessThanOrEqual(1e-12 * Math.abs(want[j]!)));
    expect(st.warnings.some((w) => w.code === 'imu-unit')).toBe(note !== undefined);
  });
  it('streams a file line by line', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-imucsv-'));
    const p = join(dir, 's.imu.csv');
    const lines = ['time,ax,ay,az,gx,gy,gz'];
    for (let i = 0; i < 5000; i++) lines.push(`${1000 + i * 0.01},0,0,9.8,0,0,${i}`);
    writeFileSync(p, lines.join('\r\n') + '\r\n');
    let n = 0, last = NaN;
    const st = await streamImuCsv(p, 's.imu.csv', loadConfig({}), (t, _a, _b, _c, _d, _e, wz) => { n++; last = wz; });
    expect(st.samples).toBe(5000);
    expect(n).toBe(5000);
    expect(last).toBe(4999);
  });
});
