/**
 * The report's survey section of a session: the occupied points with their uncertainty, and the
 * measured quantities (lengths, enclosed area, distances between points) each as estimate ± sd with
 * its 95% interval, beside what the raw fixes give. Reads the session's summary entry
 * (output/survey-summary.ts), so it needs nothing else from the batch; empty without one.
 */
import { esc, isoTime, num } from './html-text.js';

type Q = { estimate: number | null; sd: number | null; lo95: number | null; hi95: number | null } | null;

function qty(x: Q, d = 2): string {
  if (!x || x.estimate === null) return '–';
  return `${num(x.estimate, d)} ± ${num(x.sd, d)} <span class="code">[${num(x.lo95, d)}, ${num(x.hi95, d)}]</span>`;
}

export function surveySectionHtml(survey: Record<string, unknown> | undefined): string {
  if (!survey) return '';
  const occ = (survey.occupations ?? []) as Array<Record<string, number | string | null>>;
  const lengths = (survey.lengths ?? []) as Array<{ segment: number | string; horizontalM: Q; threeDM: Q; rawHorizontalM: number | null; rawExpectedExcessM: number | null }>;
  const distances = (survey.distances ?? []) as Array<{ from: string; to: string; horizontalM: Q; threeDM: Q }>;
  const parts: string[] = ['<h3>Survey: occupied points and measured quantities</h3>'];
  if (occ.length === 0) parts.push(`<p>No stand-still of ${esc(String(survey.occupationMinSec))} s or more.</p>`);
  else {
    const rows = occ
      .map(
        (o) =>
          `<tr><td>${esc(String(o.id))}</td><td>${isoTime(Number(o.startSec))}</td><td>${num(Number(o.durationSec), 0)}</td><td>${o.fixes}</td><td>${num(Number(o.effectiveFixes), 1)}</td>` +
          `<td>${num(Number(o.latDeg), 8)}</td><td>${num(Number(o.lonDeg), 8)}</td><td>${o.heightM === null ? '–' : num(Number(o.heightM), 2)}</td>` +
          `<td>${num(Number(o.sdEastM), 2)}</td><td>${num(Number(o.sdNorthM), 2)}</td><td>${o.sdUpM === null ? '–' : num(Number(o.sdUpM), 2)}</td><td>${num(Number(o.ell95MajorM), 2)}</td></tr>`,
      )
      .join('');
    parts.push(
      `<table class="survey-points"><thead><tr><th>point</th><th>start (UTC)</th><th>duration (s)</th><th>fixes</th><th>effective fixes</th><th>lat</th><th>lon</th><th>height (m)</th><th>sd east (m)</th><th>sd north (m)</th><th>sd up (m)</th><th>95% ellipse major (m)</th></tr></thead><tbody>${rows}</tbody></table>`,
      '<p class="note">Uncertainty from the joint smoothing posterior: the correlated fix error makes a stand-still worth “effective fixes” independent ones, not one per fix.</p>',
    );
  }
  const draws = Number(survey.draws);
  if (draws === 0 && Number(survey.requestedDraws) > 0) parts.push('<p class="note">No lengths or areas: the log is longer than the draw budget allows (docs/survey.md).</p>');
  if (draws > 0) {
    const rows = lengths
      .map((l) => `<tr><td>${l.segment === 'track' ? 'whole track' : `segment ${esc(String(l.segment))}`}</td><td>${qty(l.horizontalM)}</td><td>${qty(l.threeDM)}</td><td>${num(l.rawHorizontalM, 1)}</td><td>${num(l.rawExpectedExcessM, 1)}</td></tr>`)
      .join('');
    parts.push(
      `<table class="survey-lengths"><thead><tr><th>length (m)</th><th>horizontal</th><th>3D</th><th>raw fixes’ polyline</th><th>of which noise (expected)</th></tr></thead><tbody>${rows}</tbody></table>`,
    );
    if (survey.closed) parts.push(`<p>Closed track (end ${num(survey.closureGapM as number, 1)} m from its start): enclosed area ${qty(survey.areaM2 as Q, 0)} m².</p>`);
    if (distances.length > 0) {
      const drow = distances.map((d) => `<tr><td>${esc(d.from)} – ${esc(d.to)}</td><td>${qty(d.horizontalM)}</td><td>${qty(d.threeDM)}</td></tr>`).join('');
      parts.push(`<table class="survey-distances"><thead><tr><th>between points (m)</th><th>horizontal</th><th>3D</th></tr></thead><tbody>${drow}</tbody></table>`);
    }
    parts.push(
      `<p class="note">Estimate ± sd [95% interval] from ${draws} tracks drawn from the smoothing posterior (seed ${esc(String(survey.seed))}); lengths on vertices ≥ ${num(survey.vertexSpacingM as number, 1)} m apart. Measured on simulated walks, the length and area intervals hold the truth less often than 95% (docs/survey.md).</p>`,
    );
  }
  return parts.join('\n');
}
