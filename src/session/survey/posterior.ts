/**
 * The joint smoothing posterior of a session's track: per segment the models, the filter inputs and
 * the forward filter's stored moments (filtered) beside the smoothed ones. From it, whole tracks are
 * drawn by forward filtering, backward sampling (estimation/simulation-smoother.ts: Carter & Kohn
 * 1994, Frühwirth-Schnatter 1994), and the exact covariance of a time average of positions follows
 * from the RTS gains (Cov(xᵢ, xⱼ | y) = Gᵢ Gᵢ₊₁ ⋯ Gⱼ₋₁ Pˢⱼ for i < j; Rauch, Tung & Striebel 1965;
 * Särkkä, "Bayesian Filtering and Smoothing" 2013, §8.2).
 * Segments are independent (each starts from its own prior after a gap), and so are the axes.
 * The posterior is held beside a SessionResult (a WeakMap, not a field: the result stays plain data)
 * by processSession; the batch releases it once the session's survey products are computed.
 */
import type { AxisModel } from '../../models/axis-model.js';
import type { LocalFrame } from '../../geodesy/local-frame.js';
import { covIndex, covStride, makeStepCache, stepMatrices, type FilterHistory, type SegmentData } from '../../estimation/track-filter.js';
import { backwardDraw, backwardGain, backwardOffset, choleskyPsd, gaussianDraw, makeBackwardScratch } from '../../estimation/simulation-smoother.js';
import { NumericalError } from '../../errors.js';
import { GaussianSource, seedState } from '../../estimation/gaussian-rng.js';
import { drawBuffers, drawsKernel, type DrawsKernel } from '../../estimation/draws-wasm.js';
import type { SessionResult } from '../result/result.js';

export interface SegmentPosterior {
  models: AxisModel[];
  data: SegmentData;
  filtered: FilterHistory;
  smoothed: FilterHistory;
  qScale?: Float64Array[] | null;
  /** Index of the segment's first epoch in the SessionResult. */
  epoch0: number;
}

export interface TrackPosterior {
  segments: SegmentPosterior[];
  /** Epochs of the whole track. */
  N: number;
  /** Axes (2 without height, 3 with). */
  nAx: number;
  frame: LocalFrame;
  heightRefM: number;
  hasHeight: boolean;
}

const store = new WeakMap<SessionResult, TrackPosterior>();

export function attachPosterior(r: SessionResult, p: TrackPosterior): void {
  store.set(r, p);
}

/** The posterior behind a result, or undefined (IMU sessions, or released). */
export function posteriorOf(r: SessionResult): TrackPosterior | undefined {
  return store.get(r);
}

/** Let the posterior's arrays go (the batch keeps only the products). */
export function releasePosterior(r: SessionResult): void {
  store.delete(r);
}

/** Unpack epoch k's covariance of an axis (covStride layout) into a full n×n row-major matrix. */
export function unpackCov(n: number, P: Float64Array, k: number, out: Float64Array): void {
  const o = k * covStride(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) out[i * n + j] = P[o + covIndex(n, i, j)]!;
}

/** What sampleBackward hands each epoch's draws to (a function also does). */
export interface DrawVisitor {
  visit(j: number, seg: number, pos: Float64Array[]): void;
}

/**
 * Draw `nDraws` whole tracks from the posterior, seeded, and hand each epoch's positions to
 * `visit(j, segment, pos)` where pos[a][d] is the position of draw d on axis a (m, local frame).
 * Epochs are visited from the last to the first (the order of backward sampling); pos is reused.
 * The normals (estimation/gaussian-rng.ts) are taken in a fixed order (segment, epoch, axis, draw,
 * state), so a seed and a number of draws give the same draws on every run.
 */
export function sampleBackward(post: TrackPosterior, nDraws: number, seed: number, visitor: ((j: number, seg: number, pos: Float64Array[]) => void) | DrawVisitor): void {
  // a visitor object's method is one function for all sessions (compiled once), a closure one per call
  const v: DrawVisitor = typeof visitor === 'function' ? { visit: visitor } : visitor;
  const nAx = post.nAx;
  // every axis with three states: the draw step in WebAssembly (estimation/draws-wasm.ts, the same draws)
  const kern = nDraws > 0 && post.segments.every((sp) => sp.models.every((m) => m.n === 3)) ? drawsKernel() : null;
  const kbuf = kern ? drawBuffers(kern, nAx, nDraws) : null;
  if (kern) kern.ex.setState(seedState(seed));
  const rng = new GaussianSource(seed);
  const pos = kbuf ? kbuf.pos : Array.from({ length: nAx }, () => new Float64Array(nDraws));
  for (let si = post.segments.length - 1; si >= 0; si--) {
    const sp = post.segments[si]!;
    const { models, data, filtered: f } = sp;
    const N = f.N;
    const dims = models.map((m) => m.n);
    const cur = kbuf ? kbuf.cur.slice() : dims.map((n) => new Float64Array(nDraws * n));
    const nxt = kbuf ? kbuf.nxt.slice() : dims.map((n) => new Float64Array(nDraws * n));
    const Pk = dims.map((n) => new Float64Array(n * n));
    const G = dims.map((n) => new Float64Array(n * n));
    const c = dims.map((n) => new Float64Array(n));
    const Lc = dims.map((n) => new Float64Array(n * n));
    const xi = new Float64Array(4);
    const xiBuf = new Float64Array(kern ? 0 : nDraws * 4);
    const sc = dims.map((n) => makeBackwardScratch(n));
    const F = dims.map((n) => new Float64Array(n * n));
    const Q = dims.map((n) => new Float64Array(n * n));
    const cache = makeStepCache(models.length, dims);
    // east and north with one covariance array and one model: one gain serves both (the filter
    // wrote the same numbers for both, with the same step matrices)
    const shareEN = nAx >= 2 && models[0] === models[1] && f.P[0] === f.P[1];
    for (let k = N - 1; k >= 0; k--) {
      if (k < N - 1) stepMatrices(models, data, f, k + 1, sp.qScale, F, Q, cache);
      for (let a = 0; a < nAx; a++) {
        const n = dims[a]!;
        const extra = k < N - 1 && f.extraQ.size > 0 ? f.extraQ.get(k + 1) : undefined;
        const reuse = a === 1 && shareEN && (!extra || sameValues(extra[0]!, extra[1]!));
        if (!reuse) {
          unpackCov(n, f.P[a]!, k, Pk[a]!);
          if (k === N - 1) choleskyPsd(n, Pk[a]!, Lc[a]!);
          else if (!backwardGain(n, F[a]!, Q[a]!, f.x[a]!, k * n, Pk[a]!, 0, G[a]!, c[a]!, Lc[a]!, sc[a]!)) throw new NumericalError(`simulation smoother: predicted covariance not positive definite at epoch ${k + 1}`);
        }
        // a shared gain still needs this axis's own offset c = x − G F x
        if (reuse && k < N - 1) backwardOffset(n, F[a]!, G[0]!, f.x[a]!, k * n, c[a]!, sc[a]!.Fx);
        const g = reuse ? G[0]! : G[a]!, cc = c[a]!, L = reuse ? Lc[0]! : Lc[a]!;
        const out = cur[a]!, prev = nxt[a]!, p = pos[a]!;
        if (kern) drawStepKernel(kern, nDraws, k === N - 1, f.x[a]!, k * n, g, cc, L, prev, out, p);
        else drawStep(rng, nDraws, n, k === N - 1, f.x[a]!, k * n, g, cc, L, prev, out, p, xi, xiBuf);
      }
      v.visit(sp.epoch0 + k, si, pos);
      // the draws at k become the "next" ones of epoch k − 1
      for (let a = 0; a < nAx; a++) {
        const t = cur[a]!;
        cur[a] = nxt[a]!;
        nxt[a] = t;
      }
    }
  }
}

/**
 * One axis's draws at one epoch (TypeScript): at a segment's last epoch from the filtered (= smoothed)
 * marginal N(x, L Lᵀ), else backward from the next epoch's draws: out = c + G xNext + L ξ. The
 * normals are taken draw by draw, state by state.
 */
function drawStep(rng: GaussianSource, D: number, n: number, last: boolean, x: Float64Array, xk: number, g: Float64Array, cc: Float64Array, L: Float64Array, prev: Float64Array, out: Float64Array, p: Float64Array, xi: Float64Array, xiBuf: Float64Array): void {
  rng.fill(xiBuf, D * n);
  if (last) {
    for (let d = 0; d < D; d++) {
      for (let i = 0; i < n; i++) xi[i] = xiBuf[d * n + i]!;
      gaussianDraw(n, x, xk, L, xi, out, d * n);
      p[d] = out[d * n]!;
    }
  } else if (n === 3) {
    // backwardDraw written out for n = 3 (the common model: position, velocity, correlated error)
    const g00 = g[0]!, g01 = g[1]!, g02 = g[2]!, g10 = g[3]!, g11 = g[4]!, g12 = g[5]!, g20 = g[6]!, g21 = g[7]!, g22 = g[8]!;
    const c0 = cc[0]!, c1 = cc[1]!, c2 = cc[2]!;
    const l00 = L[0]!, l10 = L[3]!, l11 = L[4]!, l20 = L[6]!, l21 = L[7]!, l22 = L[8]!;
    for (let d = 0, o = 0; d < D; d++, o += 3) {
      const x0 = prev[o]!, x1 = prev[o + 1]!, x2 = prev[o + 2]!;
      const e0 = xiBuf[o]!, e1 = xiBuf[o + 1]!, e2 = xiBuf[o + 2]!;
      const y0 = c0 + g00 * x0 + g01 * x1 + g02 * x2 + l00 * e0;
      out[o] = y0;
      out[o + 1] = c1 + g10 * x0 + g11 * x1 + g12 * x2 + l10 * e0 + l11 * e1;
      out[o + 2] = c2 + g20 * x0 + g21 * x1 + g22 * x2 + l20 * e0 + l21 * e1 + l22 * e2;
      p[d] = y0;
    }
  } else
    for (let d = 0; d < D; d++) {
      for (let i = 0; i < n; i++) xi[i] = xiBuf[d * n + i]!;
      backwardDraw(n, g, cc, L, prev, d * n, xi, out, d * n);
      p[d] = out[d * n]!;
    }
}

/** drawStep for n = 3 in the WebAssembly module (the same normals and operations: the same draws); the buffers are views into its memory. */
function drawStepKernel(k: DrawsKernel, D: number, last: boolean, x: Float64Array, xk: number, g: Float64Array, cc: Float64Array, L: Float64Array, prev: Float64Array, out: Float64Array, p: Float64Array): void {
  if (last) k.ex.last3(D, out.byteOffset, p.byteOffset, x[xk]!, x[xk + 1]!, x[xk + 2]!, L[0]!, L[3]!, L[4]!, L[6]!, L[7]!, L[8]!);
  else k.ex.step3(D, prev.byteOffset, out.byteOffset, p.byteOffset, g[0]!, g[1]!, g[2]!, g[3]!, g[4]!, g[5]!, g[6]!, g[7]!, g[8]!, cc[0]!, cc[1]!, cc[2]!, L[0]!, L[3]!, L[4]!, L[6]!, L[7]!, L[8]!);
}

function sameValues(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

/**
 * Posterior variance per axis (m²) of the time average of the positions over epochs k0..k1 of a
 * segment (each epoch weighted equally), exact from the smoother:
 *   Var(Σⱼ pⱼ) = Σⱼ [2 (e₀ᵀ Aⱼ Pˢⱼ e₀) − Pˢⱼ,₀₀],  Aₖ₀ = I,  Aⱼ₊₁ = Aⱼ Gⱼ + I
 * (Aⱼ Pˢⱼ = Σ_{i ≤ j} Cov(xᵢ, xⱼ | y); only the row e₀ᵀ Aⱼ is carried).
 */
export function meanPositionVariance(sp: SegmentPosterior, k0: number, k1: number): number[] {
  const { models, data, filtered: f, smoothed: s } = sp;
  const nAx = models.length;
  const out: number[] = [];
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const cache = makeStepCache(nAx, models.map((m) => m.n));
  const m = k1 - k0 + 1;
  for (let a = 0; a < nAx; a++) {
    const n = models[a]!.n;
    const Ps = new Float64Array(n * n), Pf = new Float64Array(n * n), G = new Float64Array(n * n), c = new Float64Array(n), Lc = new Float64Array(n * n);
    const sc = makeBackwardScratch(n);
    let r = new Float64Array(n), r2 = new Float64Array(n);
    r[0] = 1;
    let acc = 0;
    for (let j = k0; j <= k1; j++) {
      unpackCov(n, s.P[a]!, j, Ps);
      let rp = 0;
      for (let i = 0; i < n; i++) rp += r[i]! * Ps[i * n]!;
      acc += 2 * rp - Ps[0]!;
      if (j === k1) break;
      stepMatrices(models, data, f, j + 1, sp.qScale, F, Q, cache);
      unpackCov(n, f.P[a]!, j, Pf);
      if (!backwardGain(n, F[a]!, Q[a]!, f.x[a]!, j * n, Pf, 0, G, c, Lc, sc)) throw new NumericalError(`occupation covariance: predicted covariance not positive definite at epoch ${j + 1}`);
      // rᵀ ← rᵀ G + e₀ᵀ
      for (let i = 0; i < n; i++) {
        let v = i === 0 ? 1 : 0;
        for (let q = 0; q < n; q++) v += r[q]! * G[q * n + i]!;
        r2[i] = v;
      }
      const t = r;
      r = r2;
      r2 = t;
    }
    out.push(Math.max(acc, 0) / (m * m));
  }
  return out;
}
