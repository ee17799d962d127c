import { defaultSpec, simulate, type ErrorModel, type Scenario } from '../../src/simulate/scenario.js';
import { makeCirclingTruth } from '../../src/simulate/circling.js';
import { Rng } from '../../src/simulate/rng.js';

/**
 * Circling walkers: truth from src/simulate/circling.ts (radius 2–5 m per plot, 0.8–1.4 m/s, 1.5–4
 * minutes per plot), 1 Hz fixes, white noise, correlated sigma and time constant drawn per seed
 * (0.8–1.6 m, 1.2–2.4 m, 30–120 s), no bursts. Default configuration.
 */
export function circlingScenario(seed: number): Scenario {
  const rng = new Rng(seed);
  const errors: ErrorModel = {
    whiteSigmaHM: rng.uniform(0.8, 1.6), whiteSigmaVM: 2.5, gmSigmaHM: rng.uniform(1.2, 2.4), gmSigmaVM: 2.5, gmTauSec: rng.uniform(30, 120),
    burstsPer100: 0, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps: [], nullIslandRows: 0, varyHdop: true,
  };
  // seeds 9–12: tighter or wider plots, slower or faster walkers, the white 1.2 m / correlated 1.8 m receiver on two
  const truthOpts = seed > 8 ? { radiusM: [[1.5, 3], [3, 6], [2, 4], [2, 5]][seed - 9] as [number, number], speedMps: [[1.2, 1.7], [0.6, 1.0], [0.9, 1.3], [1.0, 1.5]][seed - 9] as [number, number] } : {};
  if (seed > 10) Object.assign(errors, { whiteSigmaHM: 1.2, gmSigmaHM: 1.8, gmTauSec: 60 });
  return simulate(defaultSpec('walk', 300 + seed, { durationSec: 1200, rateHz: 1, errors }), makeCirclingTruth(seed, { durationSec: 1200, ...truthOpts }));
}

