/**
 * The exact score of the innovation log-likelihood (estimation/track-score.ts, Fisher's identity
 * with the RTS smoother's moments) against central differences of the forward filter's own
 * log-likelihood (totalLogLik of forwardFilter: the function the calibration maximizes), on seeded
 * segments of the constant-velocity + Gauss–Markov model: one axis, three axes with east and north
 * sharing one covariance, three axes with their own measurement variances, gaps (epochs without a
 * fix), irregular steps and a height missing at some epochs. The derivative of every parameter
 * (log q, log σ_b, log τ per axis; log of the r scale) must match the difference quotient to 1e-6
 * relative (the quotient's own truncation and rounding error at h = 1e-5 is ~1e-8 of the value);
 * the log-likelihood must equal the filter's to 1e-10 relative (the same recursions, a
 * different order of operations). The WebAssembly form of the passes (estimation/score-wasm.ts)
 * against the TypeScript loops, with Object.is: log-likelihood, every axis's terms and every
 * epoch's ∂ℓ/∂log Rₖ, on every case (the checks above run the module, the default).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { makeAxisModel, type AxisModel } from '../../src/models/axis-model.js';
import { forwardFilter, totalLogLik, type FilterOptions, type SegmentData } from '../../src/estimation/track-filter.js';
import { makeScoreWork, trackScore, trackScoreApplies } from '../../src/estimation/track-score.js';
import { gaussian, rng } from '../helpers/park-miller.js';
import { SCORE_KERNEL, scoreKernel } from '../../src/estimation/score-wasm.js';

interface Case {
  name: string;
  nAx: number;
  N: number;
  /** East and north with the same measurement variances (one shared covariance recursion). */
  sharedR: boolean;
  gaps: boolean;
  irregular: boolean;
  missingUp: boolean;
  seed: number;
}

const CASES: Case[] = [
  { name: 'one axis, regular 1 s', nAx: 1, N: 300, sharedR: false, gaps: false, irregular: false, missingUp: false, seed: 11 },
  { name: 'three axes, east and north shared', nAx: 3, N: 400, sharedR: true, gaps: true, irregular: false, missingUp: false, seed: 12 },
  { name: 'three axes, own variances, irregular steps', nAx: 3, N: 400, sharedR: false, gaps: true, irregular: true, missingUp: false, seed: 13 },
  { name: 'two axes shared, height absent', nAx: 2, N: 250, sharedR: true, gaps: false, irregular: true, missingUp: false, seed: 14 },
  { name: 'three axes shared, height missing at some epochs', nAx: 3, N: 300, sharedR: true, gaps: true, irregular: false, missingUp: true, seed: 15 },
];

const OPT: FilterOptions = { gateProbability: 0.999, reacquireAfter: Number.MAX_SAFE_INTEGER, priorVar: [1e6, 100, 1] };

/** A seeded segment: random-walk velocity, Gauss–Markov error, white noise; use 2 (no gate) or 0 at gaps. */
function segment(c: Case): SegmentData {
  const g = gaussian(c.seed), u = rng(c.seed + 100);
  const tSec = new Float64Array(c.N);
  for (let k = 1; k < c.N; k++) tSec[k] = tSec[k - 1]! + (c.irregular ? 0.5 + 2 * u() : 1);
  const z: Float64Array[] = [], r: Float64Array[] = [];
  const rShared = Float64Array.from({ length: c.N }, () => 0.5 + 2 * u());
  for (let a = 0; a < c.nAx; a++) {
    const za = new Float64Array(c.N);
    let p = 0, v = 1, b = 0;
    for (let k = 0; k < c.N; k++) {
      v += 0.4 * g();
      p += v;
      b = 0.97 * b + 0.3 * g();
      za[k] = p + b + 1.2 * g();
    }
    z.push(za);
    r.push(c.sharedR && a < 2 ? rShared : Float64Array.from({ length: c.N }, () => 0.5 + 2 * u()));
  }
  const use = new Uint8Array(c.N).fill(2);
  if (c.gaps) for (let k = 7; k < c.N; k += 37) use[k] = 0;
  if (c.missingUp) for (let k = 3; k < c.N; k += 11) z[2]![k] = NaN;
  return { N: c.N, tSec, z, r, use };
}

function modelsOf(c: Case, q: number[], sb: number[], tau: number[]): AxisModel[] {
  const ms = Array.from({ length: c.nAx }, (_, a) => makeAxisModel({ motion: 'cv', q: q[a]!, gm: { sigmaM: sb[a]!, tauSec: tau[a]! } }));
  // east and north one model object (as the calibration builds them): the shared recursion
  if (c.nAx >= 2) ms[1] = ms[0]!;
  return ms;
}

const Q0 = [0.3, 0.3, 0.05], SB0 = [1.1, 1.1, 2.0], TAU0 = [40, 40, 70], RS0 = [2, 2, 3];

function filterLogLik(c: Case, data: SegmentData, q: number[], sb: number[], tau: number[], rs: number[]): number {
  return totalLogLik(forwardFilter(modelsOf(c, q, sb, tau), data, { ...OPT, rScale: rs, likelihood: true }));
}

describe('trackScore: exact gradient of the innovation log-likelihood against central differences', () => {
  it.each(CASES.map((c) => [c.name, c] as const))('%s', (_name, c) => {
    const data = segment(c);
    const models = modelsOf(c, Q0, SB0, TAU0);
    expect(trackScoreApplies(models, data, OPT)).toBe(true);
    const rs = RS0.slice(0, c.nAx);
    const sc = trackScore(models, data, OPT, rs, makeScoreWork(models, data.N));
    const ll = filterLogLik(c, data, Q0, SB0, TAU0, rs);
    expect(Math.abs(sc.logLik - ll) / Math.abs(ll)).toBeLessThan(1e-10);
    const h = 1e-5;
    // the horizontal parameters move east and north together (one model object), the vertical alone
    const groups = c.nAx === 1 ? [[0]] : c.nAx === 2 ? [[0, 1]] : [[0, 1], [2]];
    const scaled = (base: number[], axes: number[], e: number) => base.map((v, a) => (axes.includes(a) ? v * Math.exp(e) : v));
    for (const axes of groups) {
      const sum = (f: (a: number) => number) => axes.reduce((s, a) => s + f(a), 0);
      const checks: Array<[string, number, (e: number) => number]> = [
        ['log q', sum((a) => sc.axes[a]!.dLogQ), (e) => filterLogLik(c, data, scaled(Q0, axes, e), SB0, TAU0, rs)],
        ['log σ_b', sum((a) => sc.axes[a]!.dLogSigmaB), (e) => filterLogLik(c, data, Q0, scaled(SB0, axes, e), TAU0, rs)],
        ['log τ', sum((a) => sc.axes[a]!.dLogTau), (e) => filterLogLik(c, data, Q0, SB0, scaled(TAU0, axes, e), rs)],
        ['log r scale', sum((a) => sc.dLogR[a]!.reduce((s, v) => s + v, 0)), (e) => filterLogLik(c, data, Q0, SB0, TAU0, scaled(rs, axes, e))],
      ];
      for (const [what, exact, f] of checks) {
        const numeric = (f(h) - f(-h)) / (2 * h);
        expect(Math.abs(exact - numeric), `${c.name}: ${what} on axes ${axes.join(',')}: ${exact} vs ${numeric}`).toBeLessThan(1e-6 * Math.max(1, Math.abs(numeric)));
      }
    }
  });

  it('does not apply to fixes under the gate, to the constant-acceleration model, or to a zero step', () => {
    const c = CASES[1]!;
    const data = segment(c);
    const models = modelsOf(c, Q0, SB0, TAU0);
    const gated = { ...data, use: data.use.map((u) => (u === 2 ? 1 : 0)) };
    expect(trackScoreApplies(models, gated, OPT)).toBe(false);
    const ca = [makeAxisModel({ motion: 'ca', q: 0.1, gm: { sigmaM: 1, tauSec: 30 } })];
    expect(trackScoreApplies(ca, { ...data, z: [data.z[0]!], r: [data.r[0]!] }, OPT)).toBe(false);
    const t = data.tSec.slice();
    t[5] = t[4]!;
    expect(trackScoreApplies(models, { ...data, tSec: t }, OPT)).toBe(false);
  });
});

describe('trackScore in WebAssembly: the same bits as the TypeScript loops', () => {
  afterEach(() => {
    SCORE_KERNEL.prefer = 'wasm';
  });
  it('the module loads (a fallback to the TypeScript loops would fail this)', () => {
    expect(scoreKernel()).not.toBeNull();
  });
  it.each(CASES.map((c) => [c.name, c] as const))('%s', (_name, c) => {
    const data = segment(c);
    const models = modelsOf(c, Q0, SB0, TAU0);
    const rs = RS0.slice(0, c.nAx);
    const copy = (sc: ReturnType<typeof trackScore>) => ({ logLik: sc.logLik, axes: sc.axes.map((a) => ({ ...a })), dLogR: sc.dLogR.map((d) => d.slice()) });
    SCORE_KERNEL.prefer = 'wasm';
    const w = copy(trackScore(models, data, OPT, rs, makeScoreWork(models, data.N)));
    SCORE_KERNEL.prefer = 'js';
    const j = copy(trackScore(models, data, OPT, rs, makeScoreWork(models, data.N)));
    expect(Object.is(w.logLik, j.logLik)).toBe(true);
    w.axes.forEach((a, i) => {
      for (const k of ['dLogQ', 'dLogSigmaB', 'dLogTau'] as const) expect(Object.is(a[k], j.axes[i]![k]), `axis ${i} ${k}: ${a[k]} vs ${j.axes[i]![k]}`).toBe(true);
    });
    w.dLogR.forEach((d, a) => {
      const bad = d.findIndex((v, k) => !Object.is(v, j.dLogR[a]![k]));
      expect(bad, `axis ${a} dLogR`).toBe(-1);
    });
  });
});
