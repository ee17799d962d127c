/**
 * The survey products' record types (occupied points, measured quantities, the measured polyline),
 * held apart from the code that computes them (survey.ts, occupations.ts, draws.ts) so that the
 * session result can carry them without importing that code.
 */
/** A posterior summary of a scalar quantity from draws. */
export interface Quantity {
  /** Posterior mean (measure); for the survey products the value on the smoothed track (see recentre). */
  estimate: number;
  /** The draws' own mean, where the estimate is not it (survey products). */
  drawMean?: number;
  sd: number;
  lo95: number;
  hi95: number;
  draws: number;
}

export interface Occupation {
  /** "P1", "P2", … in time order. */
  id: string;
  segment: number;
  /** First and last epoch (indices into the result). */
  first: number;
  last: number;
  startSec: number;
  endSec: number;
  durationSec: number;
  /** Kept fixes inside the occupation. */
  fixCount: number;
  latDeg: number;
  lonDeg: number;
  /** NaN without height. */
  heightM: number;
  /** Position in the local frame (m). */
  posEnu: [number, number, number];
  /** 1-sigma of the position (m), from the joint posterior. */
  sdEnu: [number, number, number];
  ell95MajorM: number;
  ell95MinorM: number;
  ell95AzimuthDeg: number;
  /** Variance of one fix's horizontal error (white + correlated) over the horizontal variance of the average. */
  effectiveFixes: number;
}

export interface LengthEntry {
  /** Segment index, or −1 for the whole track. */
  segment: number;
  horizontalM: Quantity | null;
  /** Null without height. */
  threeDM: Quantity | null;
  /** Horizontal length of the polyline of the kept raw fixes (m). */
  rawHorizontalM: number;
  /** What the model's fix noise is expected to add to that polyline (m), along the smoothed track. */
  rawExpectedExcessM: number;
}

/** A vertex of the measured polyline: one epoch, or an occupied point (its epochs' average). */
export interface SurveyVertex {
  segment: number;
  first: number;
  last: number;
  /** Index into occupations, or −1 for a single epoch. */
  occupation: number;
  /**
   * A turn rebuilt from its legs (session/survey/leg-corners.ts): the epochs of the two fitted windows
   * before and after it; the vertex is their lines' intersection, not the epoch's position.
   */
  corner?: { legA: [number, number]; legB: [number, number] };
}

export interface DistanceEntry {
  from: string;
  to: string;
  horizontalM: Quantity;
  threeDM: Quantity | null;
}

export interface SurveyProducts {
  /** Draws used (fewer than requested on a long log: DRAW_EPOCH_BUDGET). */
  draws: number;
  requestedDraws: number;
  seed: number;
  occupationMinSec: number;
  occupations: Occupation[];
  lengths: LengthEntry[];
  /** Whether the track closes on itself (end within closureToleranceM of its start). */
  closed: boolean;
  closureGapM: number;
  closureToleranceM: number;
  /** Enclosed area (m²) of a closed track (shoelace over the drawn polygon); null otherwise. */
  areaM2: Quantity | null;
  distances: DistanceEntry[];
  /** Least spacing (m, along the smoothed track) of the measured polyline's vertices. */
  vertexSpacingM: number;
  vertices: SurveyVertex[];
}
