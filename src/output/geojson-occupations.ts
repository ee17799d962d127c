/**
 * The occupied points of a session (session/survey/occupations.ts) as GeoJSON Point features with
 * `"kind": "occupation"` (RFC 7946 §3.2: any properties), for <stem>.geojson. Plain objects: both
 * GeoJSON writers (the object tree and the streamed chunks) add them the same way (JSON.stringify of
 * each), so the two stay byte for byte the same. An occupied point is an average of track epochs, so
 * it lies inside the track's bounding box.
 */
import type { SessionResult } from '../session/result/result.js';
import { formatIsoUtc } from '../time/parse-time.js';

const METRE_DECIMALS = 3;

function val(v: number, d: number): number | null {
  if (!Number.isFinite(v)) return null;
  const f = 10 ** d;
  return Math.round(v * f) / f;
}

export function occupationFeatures(r: SessionResult, decimals: number): object[] {
  const occ = r.survey?.occupations ?? [];
  const out: object[] = [];
  for (const o of occ) {
    if (!(Math.abs(o.latDeg) <= 90 && Math.abs(o.lonDeg) <= 180)) continue;
    const coordinates = [val(o.lonDeg, decimals)!, val(o.latDeg, decimals)!];
    if (r.hasHeight && Number.isFinite(o.heightM)) coordinates.push(val(o.heightM, METRE_DECIMALS)!);
    out.push({
      type: 'Feature',
      geometry: { type: 'Point', coordinates },
      properties: {
        kind: 'occupation',
        session: r.name,
        id: o.id,
        start_time: formatIsoUtc(o.startSec),
        end_time: formatIsoUtc(o.endSec),
        duration_s: val(o.durationSec, 3),
        fixes: o.fixCount,
        effective_fixes: val(o.effectiveFixes, 2),
        sd_east_m: val(o.sdEnu[0], METRE_DECIMALS),
        sd_north_m: val(o.sdEnu[1], METRE_DECIMALS),
        sd_up_m: r.hasHeight ? val(o.sdEnu[2], METRE_DECIMALS) : null,
        ell95_major_m: val(o.ell95MajorM, METRE_DECIMALS),
        ell95_minor_m: val(o.ell95MinorM, METRE_DECIMALS),
        ell95_azimuth_deg: val(o.ell95AzimuthDeg, 1),
      },
    });
  }
  return out;
}
