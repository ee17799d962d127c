/**
 * Several logs of one receiver through the pipeline with one noise calibration
 * (calibrate/pooled.ts): each log is prepared and runs its own first round (its outlier decisions),
 * the second round is the joint one, and each log then goes on alone (classification, final run,
 * checks, survey products) under the pooled noise and its own process noise. Pure like
 * processSession: no file system.
 */
import type { HindcastConfig } from '../config/schema.js';
import type { FixSeries } from '../input/fix-series.js';
import type { SessionResult } from './result/result.js';
import { beginSession, finishSession, type BegunSession } from './process-session.js';
import { bothRounds, calibrationFirstRound, type FirstRound } from './calibrate/calibration-rounds.js';
import { calibrateSession } from './calibrate/calibrate.js';
import { calibratePooled } from './calibrate/pooled.js';

export interface PoolInput {
  series: FixSeries;
  name: string;
  userDecisions?: Map<number, 'keep' | 'reject'>;
}

/**
 * Process `inputs` with one calibration of the fix noise shared by all (`group` names the pool in
 * each log's info.calibration.pool). One log's failure fails that log alone: its slot holds the
 * error, and the others are pooled without it. Fewer than two logs that can take part: each is
 * calibrated alone, with a warning naming why.
 */
export function processPooledSessions(inputs: PoolInput[], cfg: HindcastConfig, group: string): Array<SessionResult | Error> {
  const out: Array<SessionResult | Error> = inputs.map(() => new Error('not processed'));
  const begun: Array<{ i: number; b: BegunSession; first: FirstRound }> = [];
  inputs.forEach((inp, i) => {
    try {
      const b = beginSession(inp.series, cfg, inp.name, inp.userDecisions);
      begun.push({ i, b, first: calibrationFirstRound(b.ps, cfg, b.prior, b.ro) });
    } catch (e) {
      out[i] = e as Error;
    }
  });
  const members = begun;
  let pooled: ReturnType<typeof calibratePooled>;
  try {
    pooled = calibratePooled(
      members.map(({ b, first }) => ({ name: b.name, ps: b.ps, prior: b.prior, start: first.cal1.params, uses: first.uses ?? new Map() })),
      cfg,
      group,
    );
  } catch (e) {
    // a joint search that failed numerically: each log is calibrated alone
    pooled = { refused: `the joint calibration failed (${(e as Error)?.message ?? String(e)})` };
  }
  const note = 'refused' in pooled ? `noise not pooled over "${group}": ${pooled.refused}; this log was calibrated alone` : null;
  members.forEach((m, k) => {
    try {
      let r: SessionResult;
      if ('refused' in pooled) {
        // the log's own second round, from its own first
        const { ps, prior } = m.b;
        const alone = m.first.uses ? bothRounds(m.first, calibrateSession(ps, cfg, prior, undefined, m.first.cal1.params, m.first.uses)) : m.first.cal1;
        alone.info.pool = { group, members: members.map((x) => x.b.name), given: [], shared: [], epochsUsed: 0, logLikelihood: NaN, refused: pooled.refused };
        r = finishSession(m.b, alone);
        r.warnings.push({ file: m.b.series.file, code: 'calibration', message: note! });
      } else {
        const cal = pooled[k]!;
        r = finishSession(m.b, m.first.uses ? bothRounds(m.first, cal) : cal);
      }
      out[m.i] = r;
    } catch (e) {
      out[m.i] = e as Error;
    }
  });
  return out;
}
