/**
 * The GeoJSON layers of a session, one geometry type a file, for desktop GIS (which splits a mixed
 * collection into sub-layers) and for shapefiles (one geometry type a file): `<stem>.track.geojson`
 * (the smoothed track, a LineString per segment; MultiLineStrings throughout when a segment
 * crosses the antimeridian), `<stem>.flags.geojson` (the flagged fixes as Points, with their id and
 * deciding test), `<stem>.occupations.geojson` where the session has occupied points (Points with
 * `"kind": "occupation"`, session/survey/occupations.ts) and, with output.points, `<stem>.epochs.geojson`
 * (every epoch as a Point with its sd and 95% ellipse). `<stem>.geojson` keeps every feature in one collection. A further layer
 * (another kind of Point) is one more entry here, a flag in includedLayers (geojson-options.ts)
 * and its features in both writers (geojson.ts, geojson-chunks.ts).
 */
import type { HindcastConfig } from '../config/schema.js';
import type { SessionResult } from '../session/result/result.js';
import { geoJsonOptions, sessionGeoJsonChunks, type GeoJsonLayer } from './geojson.js';

export interface GeoJsonLayerFile {
  layer: GeoJsonLayer;
  /** File name ending after the session's stem. */
  suffix: string;
  /** The one GeoJSON geometry type of its features (track: or MultiLineString, see above). */
  geometry: 'LineString' | 'Point';
}

export const GEOJSON_LAYERS: readonly GeoJsonLayerFile[] = [
  { layer: 'track', suffix: '.track.geojson', geometry: 'LineString' },
  { layer: 'flags', suffix: '.flags.geojson', geometry: 'Point' },
  { layer: 'occupations', suffix: '.occupations.geojson', geometry: 'Point' },
  { layer: 'epochs', suffix: '.epochs.geojson', geometry: 'Point' },
];

/** The layers a session writes (epochs only with output.points, occupations only where there are some). */
export function layersFor(cfg: HindcastConfig, hasOccupations = true): GeoJsonLayerFile[] {
  return GEOJSON_LAYERS.filter((l) => (l.layer !== 'epochs' || cfg.output.points) && (l.layer !== 'occupations' || hasOccupations));
}

/** One layer of a session as UTF-8 chunks (geojson.ts, `only`). */
export function layerChunks(r: SessionResult, cfg: HindcastConfig, layer: GeoJsonLayer, chunkBytes?: number): Generator<Uint8Array> {
  return sessionGeoJsonChunks(r, { ...geoJsonOptions(cfg), only: layer }, chunkBytes);
}
