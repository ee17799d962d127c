/**
 * Invalid fixes are flagged with their own reason and never smoothed into the track.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

const cfg = loadConfig();

function sessionWith(mutate: (rows: string[]) => void) {
  const sc = simulate(defaultSpec('vehicle', 31, { durationSec: 300, errors: { ...defaultSpec('vehicle', 31).errors, burstsPer100: 0, nullIslandRows: 0, gaps: [] } }));
  const rows = scenarioCsv(sc).trimEnd().split('\n');
  mutate(rows);
  return { sc, r: processSession(readFixCsv(rows.join('\n') + '\n', 'v.csv', cfg), cfg, 'v') };
}

describe('invalid fixes', () => {
  test('a height jump of 5 km is flagged "invalid" with its reason and the smoothed height ignores it', () => {
    let line = 0;
    const { sc, r } = sessionWith((rows) => {
      const f = rows[100]!.split(',');
      f[3] = String(Number(f[3]) + 5000);
      rows[100] = f.join(',');
      line = 101;
    });
    const o = r.outliers.find((x) => x.line === line);
    expect(o?.reason).toBe('invalid');
    expect(o?.detail).toMatch(/impossible height jump: 5\d{3} m/);
    const j = Array.from(r.fix).indexOf(o!.fix);
    const [, , tu] = sc.truthEnuAt(r.tSec[j]!);
    const [, , u] = sc.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, r.heightM[j]!);
    expect(Math.abs(u - tu)).toBeLessThan(15);
  });

  test('(0, 0) rows and fix quality 0 are invalid, normal climbs are not', () => {
    const { r } = sessionWith((rows) => {
      rows[50] = rows[50]!.replace(/^([^,]+),[^,]+,[^,]+,/, '$1,0,0,');
    });
    const inv = r.outliers.filter((o) => o.reason === 'invalid');
    expect(inv).toHaveLength(1);
    expect(inv[0]!.detail).toContain('0°, 0°');
    expect(r.metrics.invalidCount).toBe(1);
  });
});
