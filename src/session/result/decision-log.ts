/**
 * Why a fix is out: the test that made the decision, recorded where the decision is made (the
 * forward and time-reversed gates of reviewSegment, the review's rejection step in
 * review-decisions.ts, the swap test in review-swaps.ts, the excursion test in excursion.ts), with that test's statistic and threshold
 * at that moment. Sparse (flagged fixes are few): epoch → decision, an entry removed when the fix
 * is re-admitted. By construction statistic > threshold for every entry, so a flagged fix never
 * shows a figure that passed the test it is said to have failed.
 */

/** The tests that can leave a fix out of the track (the first five are recorded in a DecisionLog). */
export const DECIDING_TESTS = ['forward-gate', 'backward-gate', 'review', 'swap', 'excursion', 'invalid', 'user'] as const;
export type DecidingTest = (typeof DECIDING_TESTS)[number];

export interface Decision {
  test: 'forward-gate' | 'backward-gate' | 'review' | 'swap' | 'excursion';
  /**
   * gates: NIS of the fix against the one-sided prediction; review: χ² of the fix against the
   * smoothed track; swap: robust cost of the neighbourhood with the fix kept; excursion: χ² of the
   * fix against the bridge of the motion before and after its run (session/classify/excursion.ts).
   */
  statistic: number;
  /**
   * gates and review: the chi-square quantile at the gate probability for the measured axes;
   * swap: the robust cost of the same neighbourhood with the fix (and its run) left out.
   */
  threshold: number;
  /** Degrees of freedom of a χ² statistic (0 for the swap cost). */
  dof: number;
}

/** Epoch (within the segment or session) → the decision that currently leaves its fix out. */
export type DecisionLog = Map<number, Decision>;

/**
 * Relative margin of a decision: statistic / threshold − 1 (0.1: 10% beyond the threshold). Small
 * margins are the decisions most worth a look; comparable across tests and degrees of freedom.
 */
export function decisionMargin(statistic: number, threshold: number): number {
  return Number.isFinite(statistic) && Number.isFinite(threshold) && threshold > 0 ? statistic / threshold - 1 : NaN;
}
