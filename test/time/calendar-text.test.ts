/**
 * Separated calendar dates (src/time/calendar-text.ts): the order of a column decided from its
 * values, and the ISO 8601 text of each date. The conventions are common practice: a dot between
 * day, month and year is the European day-first form; a slash is day first in most places and
 * month first in the United States, so only a field above 12 decides it.
 */
import { describe, expect, test } from 'vitest';
import { dateOrderOf, separatedToIso, TIME_OF_DAY } from '../../src/time/calendar-text.js';

describe('dateOrderOf: the order of a column of dates', () => {
  const table: Array<[string[], ReturnType<typeof dateOrderOf>]> = [
    [['12.05.2024'], 'dmy'], // a dot: day first
    [['31/12/2024 10:00:00'], 'dmy'], // first field above 12
    [['05/12/2024', '05/13/2024'], 'mdy'], // second field above 12 in one row
    [['05/12/2024 08:00:00'], 'ambiguous'],
    [['13/05/2024', '05/13/2024'], 'ambiguous'], // contradictory rows
    [['2024/05/12 08:00:00'], 'ymd'],
    [['2024-05-12T08:00:00Z', '1715500800'], null], // ISO and numbers need no order
  ];
  test.each(table)('%j → %s', (samples, want) => expect(dateOrderOf(samples)).toBe(want));
});

describe('separatedToIso', () => {
  const table: Array<[string, 'dmy' | 'mdy' | 'ymd', string | null]> = [
    ['12.05.2024 8:00:01', 'dmy', '2024-05-12T08:00:01'],
    ['05/13/2024 08:00:00.5', 'mdy', '2024-05-13T08:00:00.5'],
    ['2024/5/7', 'ymd', '2024-05-07'],
    ['13/05/2024 23:59:59Z', 'dmy', '2024-05-13T23:59:59Z'],
    ['2024-05-12T08:00:00Z', 'dmy', null], // ISO is left to the ISO reader
    ['12.05.24', 'dmy', null], // a two-digit year is not read
  ];
  test.each(table)('%s (%s) → %s', (text, order, want) => expect(separatedToIso(text, order)).toBe(want));
});

describe('TIME_OF_DAY', () => {
  const table: Array<[string, boolean]> = [
    ['08:00:00', true],
    ['8:00', true],
    ['08:00:00.250Z', true],
    ['08:00:00,5+02:00', true],
    ['2024-05-12T08:00:00', false],
    ['080000.00', false],
  ];
  test.each(table)('%s: %s', (text, want) => expect(TIME_OF_DAY.test(text)).toBe(want));
});
