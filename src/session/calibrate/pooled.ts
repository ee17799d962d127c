/**
 * One calibration for a group of logs taken with the same receiver. The fix noise is the
 * receiver's (white sigmas, the correlated error's sigmas and time constants, the quality-column
 * exponents), so it is estimated once from all the logs: the joint log-likelihood is the sum of the
 * logs' innovation log-likelihoods (independent logs), each log keeping its own process noise (its
 * own motion). This is the usual pooled maximum-likelihood estimate of shared parameters across
 * independent series (Harvey, "Forecasting, Structural Time Series Models and the Kalman Filter",
 * 1989, §3.4 for the per-series likelihood); the standard errors come from the joint observed
 * information, so they reflect all the logs. A log's static stretches then inform the correlated
 * error of the others, which one moving log alone cannot separate from its motion.
 * Each log's outlier decisions are its own first round's, held fixed as in the single-log second
 * round (calibration-rounds.ts); the prior on the shared parameters is counted once.
 */
import type { HindcastConfig } from '../../config/schema.js';
import type { AxisParams } from '../prepare/axis-params.js';
import type { PreparedSession } from '../prepare/prepare.js';
import {
  DEFAULT_CALIBRATION,
  PARAM_BOUNDS,
  calibrationProblem,
  estimatesAt,
  fromX,
  makePriorPenalty,
  minimize,
  objectiveGradient,
  toX,
  type CalibrationOptions,
  type CalibrationProblem,
  type CalibrationResult,
  type ParamName,
  type PoolInfo,
} from './calibrate.js';

export interface PoolMember {
  /** Session name (recorded in the pool's member list). */
  name: string;
  ps: PreparedSession;
  prior: AxisParams;
  /** The log's first-round estimate (the search starts from it) and its held-fixed decisions. */
  start: AxisParams;
  uses: Map<number, Uint8Array>;
}

const Q_NAMES: ReadonlySet<ParamName> = new Set(['qHorizontal', 'qVertical']);

/** The joint search coordinates: the shared parameters, then each log's process noise; per log, the joint index of each of its own coordinates. */
interface JointLayout {
  shared: ParamName[];
  names: ParamName[];
  slots: number[][];
  xPrior: number[];
  x0: number[];
}

function jointLayout(pbs: CalibrationProblem[]): JointLayout {
  // the shared parameters in the order first met
  const shared: ParamName[] = [];
  for (const p of pbs) for (const nm of p.names) if (!Q_NAMES.has(nm) && !shared.includes(nm)) shared.push(nm);
  const names: ParamName[] = [...shared];
  const slots = pbs.map((p) =>
    p.names.map((nm) => {
      if (!Q_NAMES.has(nm)) return shared.indexOf(nm);
      names.push(nm);
      return names.length - 1;
    }),
  );
  // the prior centres (one configuration: the same for every log) and the start: the logs' own
  // first-round values, averaged in search coordinates for the shared ones
  const xPrior = new Array<number>(names.length).fill(NaN);
  const x0 = new Array<number>(names.length).fill(0);
  const count = new Array<number>(names.length).fill(0);
  pbs.forEach((p, m) =>
    slots[m]!.forEach((j, i) => {
      if (Number.isNaN(xPrior[j]!)) xPrior[j] = p.xPrior[i]!;
      x0[j] = x0[j]! + p.x0[i]!;
      count[j] = count[j]! + 1;
    }),
  );
  for (let j = 0; j < names.length; j++) x0[j] = x0[j]! / count[j]!;
  return { shared, names, slots, xPrior, x0 };
}

/** The joint objective (−Σ log-likelihoods + the prior, infinite outside the bounds), each log's log-likelihood, and the joint gradient where every log has an exact one. */
function jointObjective(pbs: CalibrationProblem[], L: JointLayout, cfg: HindcastConfig) {
  const { shared, names, slots, xPrior } = L;
  const local = (x: number[], m: number): number[] => slots[m]!.map((j) => x[j]!);
  // the prior: once over the shared parameters, and each log's over its own process noise
  const penShared = makePriorPenalty(shared, xPrior.slice(0, shared.length), cfg);
  const qIdx = slots.map((s, m) => s.filter((_, i) => Q_NAMES.has(pbs[m]!.names[i]!)));
  const penQ = qIdx.map((idx) => makePriorPenalty(idx.map((j) => names[j]!), idx.map((j) => xPrior[j]!), cfg));
  const penalty = (x: number[]): number => penShared(x.slice(0, shared.length)) + penQ.reduce((a, pen, m) => a + pen(qIdx[m]!.map((j) => x[j]!)), 0);
  const lo = names.map((nm) => toX(nm, PARAM_BOUNDS[nm][0])), hi = names.map((nm) => toX(nm, PARAM_BOUNDS[nm][1]));
  const logLiks = (x: number[]): number[] => pbs.map((p, m) => p.logLik(p.toParams(local(x, m))));
  const negLogLik = (x: number[]): number => {
    for (let j = 0; j < names.length; j++) if (x[j]! < lo[j]! || x[j]! > hi[j]!) return Infinity;
    return -logLiks(x).reduce((a, v) => a + v, 0) + penalty(x);
  };
  // the joint gradient: each log's exact gradient added into the coordinates it reads
  const llGradient = (x: number[]): number[] => {
    const g = new Array<number>(names.length).fill(0);
    pbs.forEach((p, m) => {
      const gm = p.llGradient!(local(x, m));
      slots[m]!.forEach((j, i) => (g[j] = g[j]! + gm[i]!));
    });
    return g;
  };
  const gradient = pbs.every((p) => p.llGradient) ? objectiveGradient(llGradient, penalty) : undefined;
  return { negLogLik, gradient, logLiks, local };
}

/**
 * The pooled calibration of `members` (one configuration), as one CalibrationResult per member in
 * order, or the reason the group cannot be pooled (then each log is calibrated alone). Members too
 * short to calibrate take the shared estimates and the profile's process noise.
 */
export function calibratePooled(members: PoolMember[], cfg: HindcastConfig, group: string, opt: CalibrationOptions = DEFAULT_CALIBRATION): CalibrationResult[] | { refused: string } {
  const problems = members.map((m) => calibrationProblem(m.ps, cfg, m.prior, opt, m.start, m.uses));
  const active: number[] = [];
  problems.forEach((p, i) => {
    if (!('short' in p)) active.push(i);
  });
  if (active.length < 2) return { refused: `fewer than two logs of the group are long enough to calibrate (${active.length} of ${members.length})` };
  const pbs = active.map((i) => problems[i] as CalibrationProblem);
  // white sigmas in metres and white sigmas as a scale of reported sigmas are different parameters
  if (new Set(pbs.map((p) => p.ps.factors.reported)).size > 1) return { refused: 'some logs of the group report per-fix sigmas and others do not' };
  const L = jointLayout(pbs);
  const { shared, names, slots } = L;
  const { negLogLik, gradient, logLiks, local } = jointObjective(pbs, L, cfg);
  const quasiNewton = pbs.every((p) => p.quasiNewton);
  const res = minimize(negLogLik, names, L.x0, { ...opt, maxEvaluations: opt.maxEvaluations * 2 }, quasiNewton, gradient);
  const est = estimatesAt(negLogLik, names, res.x, opt.standardErrors !== false, gradient);
  const own = logLiks(res.x);
  const pool: PoolInfo = {
    group,
    members: active.map((i) => members[i]!.name),
    given: members.filter((_, i) => !active.includes(i)).map((m) => m.name),
    shared: [...shared],
    epochsUsed: pbs.reduce((a, p) => a + p.epochsUsed, 0),
    logLikelihood: -res.f,
  };
  const method = `maximum likelihood of the filter innovations (${quasiNewton ? (gradient ? 'quasi-Newton, exact gradient' : 'quasi-Newton') : 'Nelder–Mead'}), pooled over ${pbs.length} logs of "${group}", capped outlier terms, weak prior`;
  const sharedEstimates: CalibrationResult['info']['estimates'] = {};
  const sharedValues: Partial<Record<ParamName, number>> = {};
  shared.forEach((nm, j) => {
    sharedEstimates[nm] = est.list[j]!;
    sharedValues[nm] = fromX(nm, res.x[j]!);
  });
  return members.map((mb, i) => {
    const m = active.indexOf(i);
    if (m < 0) {
      // too short to take part: the receiver's noise from the pool, the profile's process noise
      const short = (problems[i] as { short: string }).short;
      const params = { ...mb.prior, ...sharedValues } as AxisParams;
      if (cfg.noise.verticalCorrelationTime !== 'own') params.gmVerticalTauSec = params.gmTauSec;
      return {
        params,
        info: {
          method: `the shared noise estimates of the pool "${group}" (this log too short to take part), the profile's process noise`,
          status: 'estimated',
          reason: short,
          epochsUsed: 0,
          logLikelihood: NaN,
          evaluations: 0,
          estimates: { ...sharedEstimates },
          reportedSigmaScale: mb.ps.factors.reported,
          pool,
        },
        warnings: [`noise calibration: ${short}; the noise estimated on the other logs of "${group}" is used, with the profile's process noise`],
      };
    }
    const p = pbs[m]!;
    const estimates: CalibrationResult['info']['estimates'] = {};
    slots[m]!.forEach((j, k) => (estimates[p.names[k]!] = est.list[j]!));
    return {
      params: p.toParams(local(res.x, m)),
      info: { method, status: 'estimated', epochsUsed: p.epochsUsed, logLikelihood: own[m]!, evaluations: res.evaluations, gradientEvaluations: res.gradients + est.gradients, estimates, reportedSigmaScale: p.ps.factors.reported, pool },
      warnings: p.warnings,
    };
  });
}
