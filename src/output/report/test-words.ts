/** The deciding tests (session/result/decision-log.ts) in words, for the report. */
import type { DecidingTest } from '../../session/result/decision-log.js';

const WORDS: Record<DecidingTest, string> = {
  'forward-gate': 'forward gate',
  'backward-gate': 'time-reversed gate',
  review: 'two-sided review',
  swap: 'swap test',
  excursion: 'excursion test',
  invalid: 'invalid fix',
  user: 'rejected by you',
};

export function testName(t: DecidingTest): string {
  return WORDS[t] ?? t;
}
