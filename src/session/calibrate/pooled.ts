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
import { numericalHessian } from '../../estimation/nelder-mead.js';
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
  type HessianOf,
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
  const exact = pbs.every((p) => p.llGradient);
  const gradient = exact ? objectiveGradient(llGradient, penalty) : undefined;
  const hessian = exact ? pooledHessian(pbs, L, local, { shared: penShared, perLog: penQ, qIdx }) : undefined;
  const diagonal = exact ? pooledDiagonal(pbs, L, logLiks, penalty) : undefined;
  return { negLogLik, gradient, hessian, diagonal, logLiks, local };
}

/** The coordinates stepped together for the structured differences: each shared one alone, each kind of process noise of all logs at once. */
function jointSteps(pbs: CalibrationProblem[], L: JointLayout): number[][] {
  const steps = L.shared.map((_, j) => [j]);
  for (const nm of Q_NAMES) {
    const coords = L.slots.flatMap((s, m) => s.filter((_, i) => pbs[m]!.names[i] === nm));
    if (coords.length) steps.push(coords);
  }
  return steps;
}

/**
 * The BFGS diagonal start ∂²f/∂xᵢ² of the joint objective by second differences at 0.01, as
 * curvatureStep's but with every log's process noise stepped at once (each log's own likelihood
 * gives its own coordinate's difference): 2 (shared parameters + 2) joint evaluations instead of
 * 2 (shared + 2 × logs). The bounds are not checked here (a curvature near a bound is still the
 * model's); counted by the caller.
 */
function pooledDiagonal(pbs: CalibrationProblem[], L: JointLayout, logLiks: (x: number[]) => number[], penalty: (x: number[]) => number): (x: number[], f: number) => number[] {
  const h = 0.01;
  return (x) => {
    const diag = new Array<number>(L.names.length).fill(NaN);
    const ll0 = logLiks(x);
    const pen0 = penalty(x);
    for (const coords of jointSteps(pbs, L)) {
      const up = x.slice(), down = x.slice();
      for (const j of coords) {
        up[j] = x[j]! + h;
        down[j] = x[j]! - h;
      }
      const lu = logLiks(up), ld = logLiks(down);
      if (coords.length === 1 && coords[0]! < L.shared.length) {
        // a shared coordinate: every log's likelihood and the prior
        const j = coords[0]!;
        const sum = (v: number[]) => v.reduce((a, b) => a + b, 0);
        diag[j] = (-sum(lu) + 2 * sum(ll0) - sum(ld) + penalty(up) - 2 * pen0 + penalty(down)) / (h * h);
        continue;
      }
      // a process-noise coordinate of each log: its own likelihood, and its own prior term
      pbs.forEach((_, m) => {
        const j = L.slots[m]!.find((c) => coords.includes(c));
        if (j === undefined) return;
        const pu = x.slice(), pd = x.slice();
        pu[j] = x[j]! + h;
        pd[j] = x[j]! - h;
        diag[j] = (-lu[m]! + 2 * ll0[m]! - ld[m]! + penalty(pu) - 2 * pen0 + penalty(pd)) / (h * h);
      });
    }
    // a coordinate without a positive curvature here (away from the optimum a time constant's can be
    // negative) takes the largest one found, a cautious step, instead of throwing the whole start away
    const most = Math.max(...diag.filter((v) => v > 0 && Number.isFinite(v)));
    return diag.map((v) => (v > 0 && Number.isFinite(v) ? v : Number.isFinite(most) ? most : NaN));
  };
}

/**
 * The joint objective's Hessian from central differences of the logs' exact gradients, using its
 * structure: a log's process noise enters that log's likelihood only, so all logs' horizontal (or
 * vertical) process noise can be stepped at once and each log's own gradient gives its own column.
 * 2 (shared parameters + 2) passes of every log's gradient instead of 2 (shared + 2 × logs); the
 * prior's part (cheap) by second differences. Step 0.01 in search coordinates, as gradientHessian.
 */
/** The joint prior in its separate parts: over the shared coordinates, and per log over its process-noise coordinates (their joint indices in qIdx). */
interface JointPenalty {
  shared: (xShared: number[]) => number;
  perLog: Array<(q: number[]) => number>;
  qIdx: number[][];
}

function pooledHessian(pbs: CalibrationProblem[], L: JointLayout, local: (x: number[], m: number) => number[], pen: JointPenalty): HessianOf {
  const h = 0.01;
  const { names, slots, shared } = L;
  const n = names.length;
  return (x, free) => {
    const H = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    // one column block per step: the coordinates stepped together, and per log the column its gradient fills
    for (const coords of jointSteps(pbs, L)) {
      const column = (m: number): number => (coords.length === 1 && coords[0]! < shared.length ? coords[0]! : (slots[m]!.find((c) => coords.includes(c)) ?? -1));
      const up = x.slice(), down = x.slice();
      for (const j of coords) {
        up[j] = x[j]! + h;
        down[j] = x[j]! - h;
      }
      pbs.forEach((p, m) => {
        const c = column(m);
        if (c < 0) return;
        const gu = p.llGradient!(local(up, m)), gd = p.llGradient!(local(down, m));
        // −∂²ℓ: the objective is the negative log-likelihood
        slots[m]!.forEach((r, i) => (H[r]![c] = H[r]![c]! - (gu[i]! - gd[i]!) / (2 * h)));
      });
    }
    // the prior is separable: its Hessian is block diagonal (the shared block, a block per log)
    const blocks: Array<{ idx: number[]; f: (y: number[]) => number }> = [{ idx: shared.map((_, j) => j), f: pen.shared }, ...pen.qIdx.map((idx, m) => ({ idx, f: pen.perLog[m]! }))];
    for (const { idx, f } of blocks) {
      const P = numericalHessian(f, idx.map((j) => x[j]!), idx.map(() => h));
      idx.forEach((a, i) => idx.forEach((b, k) => (H[a]![b] = H[a]![b]! + P[i]![k]!)));
    }
    return free.map((a) => free.map((b) => 0.5 * (H[a]![b]! + H[b]![a]!)));
  };
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
  const { negLogLik, gradient, hessian, diagonal, logLiks, local } = jointObjective(pbs, L, cfg);
  const quasiNewton = pbs.every((p) => p.quasiNewton);
  const res = minimize(negLogLik, names, L.x0, { ...opt, maxEvaluations: opt.maxEvaluations * 2 }, quasiNewton, gradient, diagonal);
  // the diagonal start's joint evaluations (pooledDiagonal: the centre and two a step)
  if (diagonal && quasiNewton) res.evaluations += 1 + 2 * jointSteps(pbs, L).length;
  const est = estimatesAt(negLogLik, names, res.x, opt.standardErrors !== false, gradient, hessian);
  const own = logLiks(res.x);
  // the structured Hessian's passes of every log's gradient (pooledHessian), in joint-gradient units
  const hessianPasses = hessian && opt.standardErrors !== false ? 2 * (shared.length + new Set(names.slice(shared.length)).size) : 0;
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
      info: { method, status: 'estimated', epochsUsed: p.epochsUsed, logLikelihood: own[m]!, evaluations: res.evaluations, gradientEvaluations: res.gradients + est.gradients + hessianPasses, estimates, reportedSigmaScale: p.ps.factors.reported, pool },
      warnings: p.warnings,
    };
  });
}
