/**
 * docs/validation-family.md, generated from a run of the scenario family: what the family is, how it
 * is scored, the acceptance criteria, and the measured pooled and per-log tables. Nothing in it is
 * typed by hand; the figures come from the scores passed in.
 */
import { FAMILY_COUNTS, FAMILY_KINDS } from '../../src/simulate/family-spec.js';
import type { FamilyScore } from './family-score.js';
import { LOG_COLUMNS, logRow, markdownTable, poolByKind, POOLED_COLUMNS, pooledRow } from './family-run.js';

export function validationMarkdown(seed: number, scores: FamilyScore[]): string {
  const pooled = poolByKind(scores);
  const counts = FAMILY_KINDS.map((k) => `${k} ${FAMILY_COUNTS[k]}`).join(', ');
  return `<!-- Generated file: do not edit. Regenerate with \`npm run validation\`
     (node dist/bench/family.js --seed ${seed} --markdown docs/validation-family.md), or with
     HINDCAST_WRITE_VALIDATION=1 npx vitest run test/session/family.test.ts. -->
# Validation on the scenario family

The accuracy figures below are measured on a family of ${scores.length} seeded logs (base seed ${seed}) that
vary the habits of the data rather than only their sizes, so that the processor is judged on data
it was not tuned to. The generator is \`src/simulate/family.ts\`; its ranges are listed in the header
of \`src/simulate/family-spec.ts\`. In short:

- **Receivers** from phones to survey grade: white noise 0.3–3 m (1σ per horizontal axis; vertical
  1.2–2.5× that), normal or heavy-tailed (Student t, contaminated normal); a time-correlated error
  of 0.3–5 m with time constants of 10–300 s, drawn separately for the vertical axis, shaped as one
  first-order Gauss–Markov process, a sum of a short and a long one, or one with a drifting bias;
  occasional steps where the fix mode changes.
- **Quality columns** (HDOP, satellites) that predict the error (error ∝ HDOP^α, α 0.6–1.2), vary
  without predicting it (α 0–0.25 and an unwritten factor), or are absent.
- **Motion kinds** (logs per kind: ${counts}): walking survey legs with corners and static
  occupations (1–20 Hz); a delivery van at 10 Hz with a parked start and 20–70 s stops after ~4 s
  decelerations; urban stop-and-go (1–5 Hz); survey-line drone flights (5 Hz); a walker circling
  small plots (radius 2–5 m, 1 Hz); a degraded deep-urban log (biases of 15–35 m that vary slowly,
  white 3–8 m, many bad fixes); and real dynamics: the smartLoc ground-truth drives (Reisdorf et al.,
  TU Chemnitz, CC BY-SA 4.0, \`test/fixtures/smartloc\`) with simulated receiver errors.
- **Disturbances**: multipath bursts as jumps and as ramps, outages of 5–40 s (sometimes one of
  70–120 s), rows at (0, 0) and rows with an empty position.
- **Files** as users have them: four header spellings and three delimiters, times as ISO 8601 with
  Z, with an offset, local time without an offset (the file's \`input.timeZone\` configured, the only
  setting given), Unix seconds or milliseconds. Every log is read by the normal CSV reader and
  processed with the default configuration.

## Scoring

Per log, against the simulated truth (\`test/helpers/family-score.ts\`):

- **RMSE ratio**: horizontal RMSE of the smoothed track at fix epochs over the RMSE of the raw
  fixes that are neither outliers nor invalid. Pooled per kind as √(Σ squared smoothed error ÷ the
  raw MSE of its log ÷ Σ fix epochs): each log's error in units of its own raw error.
- **Coverage**: share of epochs (bridged ones included) whose truth lies inside the 95% ellipse
  (horizontal) or within ±1.96 sd_up (vertical); pooled over all epochs of the kind.
- **Outliers**: a fix is an injected outlier where its burst offset is at least max(10 m, 4 × the
  fix's total 1σ); smaller burst offsets (a ramp's start) and white draws beyond 4.5σ are
  "ambiguous" and count neither way. Recall = found / injected; precision = found / (found + clean
  fixes flagged); false alarms = clean fixes flagged, against the gate's nominal rate
  (1 − gate.probability) times the number of clean fixes.

Acceptance (pooled per kind over the seeds, with a floor per log): RMSE ratio ≤ 1.00 on every log,
≤ 0.85 pooled on the synthetic kinds and ≤ 0.95 on real dynamics; 95% coverage 0.90–0.99 pooled
horizontally and vertically, no log below 0.80; recall ≥ 0.95 and precision ≥ 0.85 pooled; false
alarms ≤ 2× nominal; the degraded deep-urban logs named as such in summary.json. The test
\`test/session/family.test.ts\` checks these; criteria the processor does not meet yet are kept there
as expected failures.

To measure a change: \`npm run build && node dist/bench/family.js\` prints the pooled table
(\`--logs\` adds the per-log one, \`--seed N\` draws a new family, \`--only walk,van\` runs some kinds);
\`--without bursts,tails,steps,drift,quality,gaps,invalid\` switches habits off to tell which one a
shortfall comes from.

## Pooled per kind

${markdownTable(POOLED_COLUMNS, pooled.map(pooledRow))}

## Per log

${markdownTable(LOG_COLUMNS, scores.map(logRow))}
`;
}

/** The markers in README.md between which the family's pooled table is written. */
export const README_BEGIN = '<!-- family-table:begin (generated by `npm run validation`; do not edit) -->';
export const README_END = '<!-- family-table:end -->';

/** A compact pooled table for README.md: one row a kind. */
export function readmeFamilyTable(seed: number, scores: FamilyScore[]): string {
  const head = ['kind', 'logs', 'smoothed / raw RMSE (worst log)', 'inside 95% ellipse', 'inside ±1.96 sd_up', 'outlier recall / precision', 'false alarms × nominal'];
  const rows = poolByKind(scores).map((p) => [
    p.kind,
    String(p.logs),
    `${p.ratio.toFixed(2)} (${p.worstRatio.toFixed(2)})`,
    p.coverH95.toFixed(3),
    Number.isFinite(p.coverU95) ? p.coverU95.toFixed(3) : '—',
    `${p.recall.toFixed(2)} / ${p.precision.toFixed(2)}`,
    p.falseAlarmRatio.toFixed(1),
  ]);
  return `Scenario family, base seed ${seed}, ${scores.length} logs, default settings ([docs/validation-family.md](docs/validation-family.md)):\n\n${markdownTable(head, rows)}`;
}

/** README.md's text with the family table between its markers replaced (unchanged when the markers are missing). */
export function withReadmeFamilyTable(readme: string, seed: number, scores: FamilyScore[]): string {
  const a = readme.indexOf(README_BEGIN), b = readme.indexOf(README_END);
  if (a < 0 || b < a) return readme;
  return `${readme.slice(0, a + README_BEGIN.length)}\n${readmeFamilyTable(seed, scores)}\n${readme.slice(b)}`;
}
