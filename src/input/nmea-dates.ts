/**
 * UTC dates of NMEA 0183 epochs: from RMC, else from the nearest dated epoch rolling over at UTC
 * midnight, else from the configured `input.date` (see the rules in the header of nmea.ts).
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { calendarDays } from './nmea-decode.js';
import type { NmeaEpoch } from './nmea-epochs.js';

export const SECONDS_PER_DAY = 86400;

/** The configured `input.date` as days since 1970-01-01, or NaN. */
function configDateDays(date: string | undefined): number {
  if (date === undefined) return NaN;
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(date);
  return m ? calendarDays(+m[1]!, +m[2]!, +m[3]!) : NaN;
}

/**
 * Assign a UTC day to each epoch (see the file header); returns days per epoch, or null when no
 * epoch has a date and none is configured.
 */
export function assignDays(todSec: ArrayLike<number>, dateDays: ArrayLike<number>, firstDayFallback: number): Float64Array | null {
  const n = todSec.length;
  const day = new Float64Array(n).fill(NaN);
  let firstDated = -1;
  for (let i = 0; i < n; i++)
    if (Number.isFinite(dateDays[i]!)) {
      firstDated = i;
      break;
    }
  if (firstDated < 0) {
    if (!Number.isFinite(firstDayFallback) || n === 0) return null;
    day[0] = firstDayFallback;
    firstDated = 0;
  } else day[firstDated] = dateDays[firstDated]!;
  const half = SECONDS_PER_DAY / 2;
  // forward from the first dated epoch
  for (let i = firstDated + 1; i < n; i++) {
    if (Number.isFinite(dateDays[i]!)) {
      day[i] = dateDays[i]!;
      continue;
    }
    let d = day[i - 1]!;
    const dt = todSec[i]! - todSec[i - 1]!;
    if (dt < -half) d += 1;
    else if (dt > half) d -= 1;
    day[i] = d;
  }
  // backward before it
  for (let i = firstDated - 1; i >= 0; i--) {
    let d = day[i + 1]!;
    const dt = todSec[i + 1]! - todSec[i]!;
    if (dt < -half) d -= 1;
    else if (dt > half) d += 1;
    day[i] = d;
  }
  return day;
}

/** The UTC day of each epoch, and whether any came from an RMC date; throws when none can be dated. */
export function epochDays(epochs: NmeaEpoch[], cfg: HindcastConfig, file: string): { days: Float64Array; anyRmcDate: boolean } {
  const tod = new Float64Array(epochs.length);
  const dates = new Float64Array(epochs.length).fill(NaN);
  let anyRmcDate = false;
  for (let i = 0; i < epochs.length; i++) {
    tod[i] = epochs[i]!.todSec;
    const dd = epochs[i]!.rmc?.dateDays;
    if (dd !== undefined && Number.isFinite(dd)) {
      dates[i] = dd;
      anyRmcDate = true;
    }
  }
  const cfgDay = configDateDays(cfg.input.date);
  const days = assignDays(tod, dates, cfgDay);
  if (!days)
    throw new InputError(
      { file, line: epochs[0]!.line },
      'the log has no date (no RMC sentence with a date): set input.date ("YYYY-MM-DD", the UTC date of the first fix) in a --config file',
    );
  return { days, anyRmcDate };
}
