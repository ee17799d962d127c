/**
 * Companion files and optional outputs in a batch: a `<stem>.decisions.csv` is applied to its
 * session (and a bad one fails only that session), `output.gpx` adds `<stem>.gpx`, and a session
 * whose log text starts with a formula character cannot inject a formula into the outliers CSV.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { removeDir, sessionCsv, tempDir, writeSessions } from './batch-helpers.js';

let root: string;
const cfg = loadConfig({ overrides: { output: { report: false } } });
beforeEach(async () => {
  root = await tempDir('companions');
});
afterEach(async () => removeDir(root));

function fixTimes(csv: string): string[] {
  return csv.trim().split('\n').slice(1).map((l) => l.split(',')[0]!);
}

describe('companion files', () => {
  it('decisions beside a log are applied to that session only; editing them redoes it', async () => {
    const input = join(root, 'in');
    await writeSessions(input, 2);
    const t = fixTimes(await readFile(join(input, 'log00.csv'), 'utf8'));
    await writeFile(join(input, 'log00.decisions.csv'), `time,decision,note\n${t[10]},reject,parked\n${t[11]},reject,\n`);
    const out = join(root, 'out');
    const r = await runBatch({ input, out, config: cfg });
    expect(r.exitCode).toBe(0);
    const track0 = await readFile(join(out, 'log00.track.csv'), 'utf8');
    const track1 = await readFile(join(out, 'log01.track.csv'), 'utf8');
    expect(track0.match(/,user-rejected,/g)).toHaveLength(2);
    expect(track1).not.toMatch(/user-/);
    await writeFile(join(input, 'log00.decisions.csv'), `time,decision\n${t[10]},reject\n`);
    const again = await runBatch({ input, out, config: cfg });
    expect(again.processed).toEqual(['log00']);
    expect((await readFile(join(out, 'log00.track.csv'), 'utf8')).match(/,user-rejected,/g)).toHaveLength(1);
  });

  it('a decisions file that cannot be applied fails its session with the reason, the others are written', async () => {
    const input = join(root, 'in');
    await writeSessions(input, 2);
    await writeFile(join(input, 'log01.decisions.csv'), 'time,decision\n2001-01-01T00:00:00.000Z,reject\n');
    const r = await runBatch({ input, out: join(root, 'out'), config: cfg });
    expect(r.exitCode).toBe(1);
    const [a, b] = r.summary.sessions;
    expect(a!.status).toBe('ok');
    expect(b!.status).toBe('failed');
    expect(b!.reason).toMatch(/decisions/);
  });

  it('output.gpx adds <stem>.gpx to the outputs and the manifest (after the GeoJSON layers of one geometry type each)', async () => {
    const input = join(root, 'in');
    await writeSessions(input, 1);
    const out = join(root, 'out');
    const r = await runBatch({ input, out, config: loadConfig({ overrides: { output: { report: false, gpx: true } } }) });
    expect(r.summary.sessions[0]!.outputs).toEqual(['log00.track.csv', 'log00.outliers.csv', 'log00.geojson', 'log00.track.geojson', 'log00.flags.geojson', 'log00.gpx', 'log00.points.csv']);
    expect(await readFile(join(out, 'log00.gpx'), 'utf8')).toMatch(/^<\?xml/);
  });
});

describe('spreadsheet formulas', () => {
  it('text echoed from an input into a CSV output never starts with =, +, - or @', async () => {
    const input = join(root, 'in');
    // logs whose names start with formula characters: processed as any other, and no CSV cell
    // written for them starts a formula (negative numbers aside)
    await writeSessions(input, 1, { prefix: '=cmd' });
    await writeFile(join(input, '@sum.csv'), sessionCsv(11));
    const out = join(root, 'out');
    const r = await runBatch({ input, out, config: cfg });
    expect(r.exitCode).toBe(0);
    for (const f of ['=cmd00.outliers.csv', '@sum.outliers.csv', '=cmd00.track.csv']) {
      const text = await readFile(join(out, f), 'utf8');
      for (const line of text.split('\n'))
        for (const cell of line.split(',')) expect(/^[=+@]/.test(cell) || /^-[^\d]/.test(cell), `${f}: ${cell}`).toBe(false);
    }
  });
});

describe('IMU beside a log', () => {
  it('<stem>.imu.csv makes that session IMU-aided; the log without one stays fixes-only', async () => {
    const { defaultImuSpec, imuScenarioFixCsv, simulateImuScenario, writeImuCsv } = await import('../../src/simulate/imu.js');
    const input = join(root, 'in');
    await writeSessions(input, 1);
    const sc = simulateImuScenario(defaultImuSpec(77, { durationSec: 60 }));
    await writeFile(join(input, 'drive.csv'), imuScenarioFixCsv(sc));
    writeImuCsv(sc, join(input, 'drive.imu.csv'));
    const r = await runBatch({ input, out: join(root, 'out'), config: loadConfig({ profile: 'vehicle', overrides: { output: { report: false } } }) });
    const byName = new Map(r.summary.sessions.map((s) => [s.name, s]));
    expect(byName.get('drive')!.status).toBe('ok');
    expect(byName.get('drive')!.info).toHaveProperty('imu');
    expect(byName.get('log00')!.info).not.toHaveProperty('imu');
  });
});
