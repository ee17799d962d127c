/**
 * Header matching for fix CSVs: names are compared case-insensitively after normalization
 * (trimmed, units in brackets dropped, separators folded to "_"), against common aliases and the
 * mapping given in the configuration.
 */
import type { ColumnMapping } from '../config/schema.js';

export type ColumnRole = keyof Required<ColumnMapping>;

export const COLUMN_ALIASES: Record<ColumnRole, string[]> = {
  time: ['time', 'timestamp', 'datetime', 'date_time', 'utc', 'time_utc', 'utc_time', 't', 'unix_time', 'unix', 'epoch', 'gps_time_utc', 'unix_ms', 'unix_s', 'time_ms', 'timestamp_ms', 'epoch_ms', 'utc_ms'],
  date: ['date', 'utc_date', 'date_utc', 'gps_date'],
  gpsWeek: ['gps_week', 'week', 'gpsweek', 'wn'],
  tow: ['tow', 'gps_tow', 'time_of_week', 'tow_s', 'seconds_of_week', 'sow'],
  lat: ['lat', 'latitude', 'lat_deg', 'latitude_deg', 'phi'],
  lon: ['lon', 'lng', 'long', 'longitude', 'lon_deg', 'longitude_deg', 'lambda'],
  latHemisphere: ['ns', 'n_s', 'lat_dir', 'lat_hemisphere', 'lat_ref', 'latitude_ref', 'n_s_indicator'],
  lonHemisphere: ['ew', 'e_w', 'lon_dir', 'lon_hemisphere', 'lon_ref', 'longitude_ref', 'e_w_indicator'],
  height: ['height', 'h', 'ellipsoidal_height', 'height_m', 'h_ell', 'ellipsoid_height', 'hae', 'alt', 'altitude', 'ele', 'elevation'],
  hdop: ['hdop'],
  vdop: ['vdop'],
  sats: ['sats', 'satellites', 'num_sats', 'nsat', 'numsv', 'num_sv', 'sv', 'nsats', 'satellites_used'],
  fixQuality: ['fix_quality', 'quality', 'fix', 'fix_type', 'fixtype', 'q'],
  sdEast: ['sd_east', 'sde', 'std_east', 'sigma_e', 'sigma_east', 'sd_e', 'std_e'],
  sdNorth: ['sd_north', 'sdn', 'std_north', 'sigma_n', 'sigma_north', 'sd_n', 'std_n'],
  sdUp: ['sd_up', 'sdu', 'std_up', 'sigma_u', 'sigma_up', 'sd_u', 'std_u', 'sd_height'],
  hAccuracy: ['accuracy', 'horizontal_accuracy', 'hacc', 'h_acc', 'hor_acc', 'horizontal_accuracy_m', 'accuracy_m', 'acc_h', 'h_accuracy'],
};

/** Height aliases that usually mean height above mean sea level rather than the ellipsoid. */
export const MSL_HEIGHT_ALIASES = new Set(['alt', 'altitude', 'ele', 'elevation']);

export function normalizeHeader(h: string): string {
  return h
    .replace(/^\uFEFF/, '')
    .trim()
    .toLowerCase()
    .replace(/[([{].*?[)\]}]/g, '')
    .trim()
    .replace(/[^a-z0-9]+/g, '_')
    .replace(/^_+|_+$/g, '');
}

/** Index of each role's column in the header (−1 when absent) and the header name that matched. */
export function matchColumns(header: string[], mapping: ColumnMapping = {}): { index: Record<ColumnRole, number>; matched: Partial<Record<ColumnRole, string>> } {
  const norm = header.map(normalizeHeader);
  const index = {} as Record<ColumnRole, number>;
  const matched: Partial<Record<ColumnRole, string>> = {};
  const taken = new Set<number>();
  // configured names first, so they win over aliases
  for (const role of Object.keys(COLUMN_ALIASES) as ColumnRole[]) {
    index[role] = -1;
    const want = mapping[role];
    if (want !== undefined) {
      const i = norm.indexOf(normalizeHeader(want));
      if (i >= 0) {
        index[role] = i;
        matched[role] = header[i];
        taken.add(i);
      }
    }
  }
  for (const role of Object.keys(COLUMN_ALIASES) as ColumnRole[]) {
    if (index[role] >= 0) continue;
    for (const alias of COLUMN_ALIASES[role]) {
      const i = norm.indexOf(alias);
      if (i >= 0 && !taken.has(i)) {
        index[role] = i;
        matched[role] = norm[i];
        taken.add(i);
        break;
      }
    }
  }
  return { index, matched };
}
