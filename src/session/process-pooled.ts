/**
 * Several logs of one receiver through the pipeline with one noise calibration
 * (calibrate/pooled.ts): each log is prepared; the longest runs the first round and the others
 * start from its noise (firstRounds), each classifying its own fixes (its outlier decisions); the
 * second round is the joint one, and each log then goes on alone (classification, final run,
 * checks, survey products) under the pooled noise and its own process noise. Pure like
 * processSession: no file system.
 */
import type { HindcastConfig } from '../config/schema.js';
import type { FixSeries } from '../input/fix-series.js';
import type { SessionResult } from './result/result.js';
import { beginSession, finishSession, type BegunSession } from './process-session.js';
import { bothRounds, calibrationFirstRound, firstDecisions, type FirstRound } from './calibrate/calibration-rounds.js';
import { calibrateSession, type CalibrationResult } from './calibrate/calibrate.js';
import { robustProcessNoise } from './calibrate/robust-motion.js';
import { calibratePooled } from './calibrate/pooled.js';

export interface PoolInput {
  series: FixSeries;
  name: string;
  userDecisions?: Map<number, 'keep' | 'reject'>;
}

/**
 * The members' first rounds: the longest moving log (one whose motion gives a robust process-noise
 * estimate, robust-motion.ts) runs its own; each other starts from its noise, with the process
 * noise scaled by the two logs' robust estimates, and classifies its own fixes as its own first
 * round would (firstDecisions), so that a pool of one receiver runs one first round, not one a log.
 * A log without a robust estimate (a static one), or whose noise is another kind of parameter
 * (reported sigmas), runs its own. A log whose first round throws fails alone (its slot in `out`).
 */
function firstRounds(begun: Array<{ i: number; b: BegunSession }>, cfg: HindcastConfig, out: Array<SessionResult | Error>): Array<{ i: number; b: BegunSession; first: FirstRound }> {
  const done: Array<{ i: number; b: BegunSession; first: FirstRound }> = [];
  const offered = (b: BegunSession) => b.ps.offered.reduce((a, u) => a + (u ? 1 : 0), 0);
  const robust = begun.map((m) => robustProcessNoise(m.b.ps));
  const usable = (k: number) => robust[k]! > 0 && Number.isFinite(robust[k]!);
  // the lead first: moving logs before static ones, longer before shorter
  const order = begun.map((_, k) => k).sort((x, y) => Number(usable(y)) - Number(usable(x)) || offered(begun[y]!.b) - offered(begun[x]!.b));
  let lead: { name: string; first: FirstRound; q: number } | null = null;
  for (const k of order) {
    const m = begun[k]!;
    try {
      const borrowed: CalibrationResult | null = lead?.first.uses && usable(k) ? borrowedFirstRound(m.b, lead.first.cal1, lead.name, robust[k]! / lead.q) : null;
      const first: FirstRound = borrowed ? firstDecisions(m.b.ps, cfg, m.b.ro, borrowed) : calibrationFirstRound(m.b.ps, cfg, m.b.prior, m.b.ro);
      if (!lead && usable(k)) lead = { name: m.b.name, first, q: robust[k]! };
      done.push({ ...m, first });
    } catch (e) {
      out[m.i] = e as Error;
    }
  }
  // back in input order
  return done.sort((x, y) => x.i - y.i);
}

/**
 * A first round's result for `b` from the lead log's: its noise, and its process noise scaled by
 * `ratio` (b's robust process noise over the lead's; the classification start then stiffens it to
 * b's own robust value where that is lower, as for any first round); null where that does not apply.
 */
function borrowedFirstRound(b: BegunSession, lead: CalibrationResult, leadName: string, ratio: number): CalibrationResult | null {
  const p = lead.params;
  if (lead.info.status !== 'estimated' || p.motion !== 'cv' || lead.info.reportedSigmaScale !== b.ps.factors.reported || !(ratio > 0 && Number.isFinite(ratio))) return null;
  return {
    params: { ...p, qHorizontal: p.qHorizontal * ratio, qVertical: p.qVertical * ratio },
    info: {
      method: `the first round of "${leadName}" (the pool's longest moving log), its process noise scaled to this log's motion`,
      status: 'estimated',
      epochsUsed: 0,
      logLikelihood: NaN,
      evaluations: 0,
      estimates: {},
      reportedSigmaScale: b.ps.factors.reported,
    },
    warnings: [],
  };
}

/**
 * Process `inputs` with one calibration of the fix noise shared by all (`group` names the pool in
 * each log's info.calibration.pool). One log's failure fails that log alone: its slot holds the
 * error, and the others are pooled without it. Fewer than two logs that can take part: each is
 * calibrated alone, with a warning naming why.
 */
export function processPooledSessions(inputs: PoolInput[], cfg: HindcastConfig, group: string): Array<SessionResult | Error> {
  const out: Array<SessionResult | Error> = inputs.map(() => new Error('not processed'));
  const begun: Array<{ i: number; b: BegunSession }> = [];
  inputs.forEach((inp, i) => {
    try {
      begun.push({ i, b: beginSession(inp.series, cfg, inp.name, inp.userDecisions) });
    } catch (e) {
      out[i] = e as Error;
    }
  });
  const members = firstRounds(begun, cfg, out);
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
