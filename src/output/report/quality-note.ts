/**
 * The plain-words quality line of a session's report section: the verdict ("good" / "degraded")
 * with its reasons and what was done about the uncertainty, and the outcome of the motion-model
 * check (session/check/verdict.ts, session/check/adequacy.ts; both recorded in summary.json), and the
 * correlated-error floor where it widened the regions (session/check/correlated-floor.ts).
 */
import type { SessionSummary } from '../summary.js';
import { esc, num } from './html-text.js';

const capitalized = (t: string) => t.charAt(0).toUpperCase() + t.slice(1);

/** The correlated-error floor in words, when it widened the regions (session/check/correlated-floor.ts). */
function floorNote(s: SessionSummary): string {
  const f = s.info?.correlatedFloor as { addedSdM: { horizontal: number; vertical: number }; assumedSigmaM: { horizontal: number; vertical: number } } | undefined;
  if (!f || !(f.addedSdM.horizontal > 0 || f.addedSdM.vertical > 0)) return '';
  return ` Uncertainty: the regions allow for a slowly varying fix error of ${num(f.assumedSigmaM.horizontal, 2)} m horizontally and ${num(f.assumedSigmaM.vertical, 2)} m vertically (the log cannot tell it from the motion), ${num(f.addedSdM.horizontal, 2)} / ${num(f.addedSdM.vertical, 2)} m sd added to every epoch.`;
}

export function qualityNote(s: SessionSummary): string {
  const q = s.quality;
  if (!q) return '';
  const v = s.info?.verdict as { widened?: { medianSdHorizontalM: [number, number] } } | undefined;
  const a = s.info?.adequacy as { message?: string } | undefined;
  const w = v?.widened;
  const verdict =
    q.verdict === 'good'
      ? '<strong>Session quality: good.</strong> The fixes behave as the model describes.'
      : `<strong>Session quality: degraded.</strong> ${esc(capitalized(q.reasons.join('; ')))}. This log lies outside what the model describes; treat the track with caution.` +
        (w ? ` The reported uncertainty was widened to the fixes' scatter about the track (median horizontal sd ${num(w.medianSdHorizontalM[0], 2)} → ${num(w.medianSdHorizontalM[1], 2)} m).` : '');
  const motion = a?.message ? ` Motion model: ${esc(a.message)}.` : '';
  return `<p class="quality ${q.verdict}">${verdict}${motion}${floorNote(s)}</p>`;
}
