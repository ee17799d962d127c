/**
 * Options of the GeoJSON writers (output/geojson.ts, output/geojson-chunks.ts): coordinate decimals,
 * the per-epoch points, and the single layer of a per-layer file (geojson-layers.ts).
 */
import type { HindcastConfig } from '../config/schema.js';

/**
 * One geometry type per file for desktop GIS and shapefiles (geojson-layers.ts): the track
 * segments only (every one a LineString, or every one a MultiLineString when one crosses the
 * antimeridian), the flagged fixes only (Points), or the epochs only (Points).
 */
export type GeoJsonLayer = 'track' | 'flags' | 'occupations' | 'epochs';

export interface GeoJsonOptions {
  /** Decimal places of degrees (7 ≈ 1 cm, 6 ≈ 10 cm). */
  decimals: number;
  /** Also one Point per epoch with sd and ellipse properties. */
  points?: boolean;
  /** Only this layer (its own bbox); absent: every feature in one collection. */
  only?: GeoJsonLayer;
}

export function geoJsonOptions(cfg: HindcastConfig): GeoJsonOptions {
  return { decimals: cfg.output.geojsonDecimals, points: cfg.output.points };
}

/** The feature kinds a collection holds under `opt`. */
export interface IncludedLayers {
  track: boolean;
  flags: boolean;
  epochs: boolean;
  occupations: boolean;
}

export function includedLayers(opt: GeoJsonOptions): IncludedLayers {
  return {
    track: !opt.only || opt.only === 'track',
    flags: !opt.only || opt.only === 'flags',
    epochs: opt.only ? opt.only === 'epochs' : !!opt.points,
    occupations: !opt.only || opt.only === 'occupations',
  };
}
