/**
 * Occupied points on logs of walkers circling small plots (test/helpers/circling.ts: radius 2–5 m at
 * 0.8–1.4 m/s, 1 Hz). Known shortfall, kept as a test that must fail: where the calibration takes
 * the circles for a correlated fix error of short time constant (2–2.6 m, 4–27 s measured), the
 * smoothed track stands near the plot's centre, and its speed and displacement both say "still".
 * The fixes' increments do not tell either under that model: it expects them. Measured on seeds
 * 1–8: 19 occupations, all while the truth moved at 0.5 m/s or more.
 */
import { describe, expect, it } from 'vitest';
import { truthAt } from '../../src/simulate/truth.js';
import { circlingScenario } from '../helpers/circling.js';
import { runScenario } from '../helpers/score.js';

describe('occupied points of circling walkers', () => {
  let occupations = 0, moving = 0;
  for (let seed = 1; seed <= 8; seed++) {
    const sc = circlingScenario(seed);
    const { r } = runScenario(sc);
    const t0 = sc.spec.startUnixSec;
    for (const o of r.survey?.occupations ?? []) {
      occupations++;
      // the truth's largest speed inside the occupation, over 1 s
      let vmax = 0;
      for (let j = o.first; j <= o.last; j++) {
        const p = [0, 0, 0], q = [0, 0, 0];
        truthAt(sc.truth, r.tSec[j]! - t0 - 0.5, p);
        truthAt(sc.truth, r.tSec[j]! - t0 + 0.5, q);
        vmax = Math.max(vmax, Math.hypot(q[0]! - p[0]!, q[1]! - p[1]!));
      }
      if (vmax >= 0.5) moving++;
    }
  }
  console.log(`circling walkers, seeds 1–8: occupations ${occupations}, while the truth moved at ≥ 0.5 m/s ${moving}`);
  it.fails('reports no occupation while the walker circles', () => {
    expect(moving).toBe(0);
  });
});
