/**
 * Time settings are checked when the configuration is loaded (src/config/schema.ts with
 * src/time/zones.ts): a misspelt zone or an unusable time format is a ConfigError naming the field.
 */
import { describe, expect, test } from 'vitest';
import { validateConfig } from '../../src/config/load.js';
import { ConfigError } from '../../src/errors.js';

const load = (input: Record<string, unknown>) => validateConfig({ input }, 'test.json');
function problem(input: Record<string, unknown>): string {
  try {
    load(input);
  } catch (e) {
    expect(e).toBeInstanceOf(ConfigError);
    return (e as Error).message;
  }
  return '';
}

describe('input.timeZone', () => {
  test.each(['Europe/Berlin', 'America/New_York', 'Australia/Sydney', 'UTC', 'Etc/GMT-2'])('%s is accepted', (z) => {
    expect(load({ timeZone: z }).input.timeZone).toBe(z);
  });
  test('a misspelt zone is refused with the field and the nearest name', () => {
    expect(problem({ timeZone: 'Europe/Berln' })).toMatch(/input\.timeZone: unknown time zone "Europe\/Berln"; did you mean "Europe\/Berlin"\?/);
  });
  test('a name far from any zone gets an example instead', () => {
    expect(problem({ timeZone: 'local' })).toMatch(/input\.timeZone: unknown time zone "local" \(an IANA zone name/);
  });
});

describe('input.timeFormat', () => {
  test('day-first with a zone is accepted', () => {
    expect(load({ timeFormat: 'dd.MM.yyyy HH:mm:ss', timeZone: 'Europe/Berlin' }).input.timeFormat).toBe('dd.MM.yyyy HH:mm:ss');
  });
  test('a format with an offset token needs no zone', () => {
    expect(load({ timeFormat: "dd.MM.yyyy'T'HH:mm:ssZZ" }).input.timeZone).toBeUndefined();
  });
  test('a format without an offset and no zone is refused', () => {
    expect(problem({ timeFormat: 'dd.MM.yyyy HH:mm:ss' })).toMatch(/input\.timeFormat: a time format without an offset needs input\.timeZone/);
  });
  test.each([
    ['dd.MM.yyyy', /full date and time to the second/],
    ['HH:mm:ss', /full date and time to the second/],
  ])('%s is refused', (f, msg) => {
    expect(problem({ timeFormat: f, timeZone: 'UTC' })).toMatch(msg);
  });
});
