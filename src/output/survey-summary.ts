/**
 * The survey products of a session as plain JSON for summary.json and the report: occupied points,
 * lengths, the enclosed area and distances between points, each quantity as estimate, sd and 95%
 * interval (docs/survey.md). The measured polyline's vertex list stays in the SessionResult.
 */
import type { SurveyProducts } from '../session/survey/survey.js';
import type { Quantity } from '../session/survey/draws.js';

function r3(v: number): number | null {
  return Number.isFinite(v) ? Math.round(v * 1000) / 1000 : null;
}

function q(x: Quantity | null): Record<string, number | null> | null {
  if (!x) return null;
  const o: Record<string, number | null> = { estimate: r3(x.estimate), sd: r3(x.sd), lo95: r3(x.lo95), hi95: r3(x.hi95) };
  if (x.drawMean !== undefined) o.drawMean = r3(x.drawMean);
  return o;
}

export function surveySummary(s: SurveyProducts): Record<string, unknown> {
  return {
    draws: s.draws,
    requestedDraws: s.requestedDraws,
    seed: s.seed,
    occupationMinSec: s.occupationMinSec,
    vertexSpacingM: r3(s.vertexSpacingM),
    occupations: s.occupations.map((o) => ({
      id: o.id,
      startSec: o.startSec,
      endSec: o.endSec,
      durationSec: r3(o.durationSec),
      fixes: o.fixCount,
      latDeg: Math.round(o.latDeg * 1e9) / 1e9,
      lonDeg: Math.round(o.lonDeg * 1e9) / 1e9,
      heightM: r3(o.heightM),
      sdEastM: r3(o.sdEnu[0]),
      sdNorthM: r3(o.sdEnu[1]),
      sdUpM: r3(o.sdEnu[2]),
      ell95MajorM: r3(o.ell95MajorM),
      ell95MinorM: r3(o.ell95MinorM),
      ell95AzimuthDeg: r3(o.ell95AzimuthDeg),
      effectiveFixes: r3(o.effectiveFixes),
    })),
    lengths: s.lengths.map((l) => ({
      segment: l.segment < 0 ? 'track' : l.segment + 1,
      horizontalM: q(l.horizontalM),
      threeDM: q(l.threeDM),
      rawHorizontalM: r3(l.rawHorizontalM),
      rawExpectedExcessM: r3(l.rawExpectedExcessM),
    })),
    closed: s.closed,
    closureGapM: r3(s.closureGapM),
    closureToleranceM: r3(s.closureToleranceM),
    areaM2: q(s.areaM2),
    distances: s.distances.map((d) => ({ from: d.from, to: d.to, horizontalM: q(d.horizontalM), threeDM: q(d.threeDM) })),
  };
}
