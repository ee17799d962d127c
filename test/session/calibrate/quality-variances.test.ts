/**
 * The calibration's variance rewrite through the table of distinct quality-term combinations gives
 * the plain per-epoch form's variances bit for bit (Object.is on every element), on seeded logs with
 * HDOP to a tenth, VDOP, integer satellite counts and fix-quality codes, epochs without a fix
 * (NaN variances left alone), logs without height, and many exponent pairs; and it holds few
 * combinations where the columns are quantized as receivers log them.
 */
import { describe, expect, it } from 'vitest';
import { applyQualityTable, qualityTable } from '../../../src/session/calibrate/quality-variances.js';
import type { SegmentData } from '../../../src/estimation/track-filter.js';
import { rng } from '../../helpers/park-miller.js';

/**
 * The variances in their plain form (r = factor², factor = exp(αₕ·DOP term + αₛ·sats term + fix-quality term)): every epoch's factors computed, in place (epochs whose east
 * variance is not finite, i.e. without a fix, are left as they are; up likewise).
 */
function qualityVariances(d: SegmentData, terms: Float64Array, aH: number, aS: number): void {
  const rE = d.r[0]!, rN = d.r[1]!, rU = d.r[2];
  for (let k = 0; k < d.N; k++) {
    if (!Number.isFinite(rE[k]!)) continue;
    const o = 4 * k;
    const fh = Math.exp(aH * terms[o]! + aS * terms[o + 2]! + terms[o + 3]!);
    rE[k] = fh * fh;
    rN[k] = fh * fh;
    if (rU && Number.isFinite(rU[k]!)) {
      const fv = Math.exp(aH * terms[o + 1]! + aS * terms[o + 2]! + terms[o + 3]!);
      rU[k] = fv * fv;
    }
  }
}

/** Terms as qualityLogTerms writes them, from quantized columns; a tenth of the epochs without a fix. */
function item(seed: number, N: number, withHeight: boolean): { d: SegmentData; terms: Float64Array } {
  const r = rng(seed);
  const terms = new Float64Array(4 * N);
  const mh = 1.2, mv = 1.9, ms = 9;
  const rE = new Float64Array(N), rN = new Float64Array(N), rU = new Float64Array(N);
  for (let k = 0; k < N; k++) {
    const hd = Math.round((0.6 + 2.5 * r()) * 10) / 10, vd = Math.round((0.9 + 3 * r()) * 10) / 10;
    const sats = 4 + Math.floor(10 * r()), fq = r() < 0.1 ? Math.log(2) : 0;
    terms.set([Math.log(hd / mh), Math.log(vd / mv), 0.5 * Math.log(ms / Math.max(sats, 3)), fq], 4 * k);
    const fix = r() > 0.1;
    rE[k] = rN[k] = fix ? 1 : NaN;
    rU[k] = fix && r() > 0.05 ? 1 : NaN;
  }
  const r3 = withHeight ? [rE, rN, rU] : [rE, rN];
  return { d: { N, tSec: new Float64Array(N), z: r3.map(() => new Float64Array(N)), r: r3, use: new Uint8Array(N).fill(1) }, terms };
}

function copy(d: SegmentData): SegmentData {
  return { ...d, r: d.r.map((a) => a.slice()) };
}

describe('quality variances through the table of distinct combinations', () => {
  it.each([
    [1, 4000, true],
    [2, 1500, false],
    [3, 1, true],
  ] as const)('seed %i, %i epochs, height %s: the plain form bit for bit', (seed, N, withHeight) => {
    const { d, terms } = item(seed, N, withHeight);
    const t = qualityTable(terms, N);
    const a = copy(d), b = copy(d);
    const r = rng(seed + 100);
    for (let e = 0; e < 50; e++) {
      const aH = e === 0 ? 1 : e === 1 ? 0 : r(), aS = e === 0 ? 1 : e === 1 ? 0 : r();
      qualityVariances(a, terms, aH, aS);
      applyQualityTable(b, t, aH, aS);
      for (let ax = 0; ax < a.r.length; ax++) {
        const bad = Array.from(a.r[ax]!).findIndex((v, k) => !Object.is(v, b.r[ax]![k]));
        expect(bad, `axis ${ax}, exponents ${aH}, ${aS}`).toBe(-1);
      }
    }
    // NaN (no fix) stays NaN
    expect(Number.isNaN(b.r[0]![d.r[0]!.findIndex((v) => Number.isNaN(v))] ?? NaN)).toBe(true);
  });

  it('holds far fewer combinations than epochs for quantized columns', () => {
    const { terms } = item(4, 4000, true);
    const t = qualityTable(terms, 4000);
    expect(t.varH.length).toBeLessThan(600);
    expect(t.varH.length).toBeGreaterThan(50);
  });
});
