/**
 * Writes simulated fixes as a GPX 1.1 track (GPX 1.1 Schema Documentation, Topografix) for tests and
 * sample data: one <trk> with one <trkseg>, each fix a <trkpt> with <ele>, <time>, <sat>, <hdop>
 * (element order as the schema's wptType sequence). `ele` = ellipsoidal height − geoid separation,
 * i.e. above mean sea level as GPX usually means it.
 */
import type { Scenario } from './scenario.js';

export interface GpxWriteOptions {
  /** Geoid separation N (m): ele = ellipsoidal height − N. */
  geoidSeparationM?: number;
  /** Write <ele>. */
  ele?: boolean;
  /** Write <time>. */
  time?: boolean;
}

export function scenarioGpx(sc: Scenario, opts: GpxWriteOptions = {}): string {
  const N = opts.geoidSeparationM ?? 47.25;
  const withEle = opts.ele ?? true;
  const withTime = opts.time ?? true;
  const out: string[] = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    '<gpx version="1.1" creator="hindcast simulator" xmlns="http://www.topografix.com/GPX/1/1">',
    `  <trk><name>${sc.spec.kind} seed ${sc.spec.seed}</name><trkseg>`,
  ];
  for (const f of sc.fixes) {
    const parts = [`    <trkpt lat="${f.latDeg.toFixed(9)}" lon="${f.lonDeg.toFixed(9)}">`];
    if (withEle) parts.push(`<ele>${(f.heightM - N).toFixed(3)}</ele>`);
    if (withTime) parts.push(`<time>${new Date(Math.round(f.tSec * 1000)).toISOString()}</time>`);
    parts.push(`<sat>${f.sats}</sat><hdop>${f.hdop.toFixed(1)}</hdop></trkpt>`);
    out.push(parts.join(''));
  }
  out.push('  </trkseg></trk>', '</gpx>');
  return out.join('\n') + '\n';
}
