/**
 * The report's shared types: the plotted series and ellipse marks of a session (built by payload.ts,
 * drawn by the chart modules) and the extension interface of optional plot groups (extensions.ts
 * registers them). Types only, so every report module can import them without a cycle.
 */
import type { TopLevelSpec } from 'vega-lite';
import type { SessionResult } from '../../session/result/result.js';

/** Per plotted epoch (decimated), times in UTC Unix seconds, lengths in metres of the local frame. */
export interface PlotSeries {
  /** Epoch index in the full session of each plotted point. */
  epoch: Int32Array;
  tSec: Float64Array;
  segment: Int32Array;
  status: Uint8Array;
  east: Float64Array;
  north: Float64Array;
  up: Float64Array;
  sdHorizontalM: Float32Array;
  sdUpM: Float32Array;
  nis: Float32Array;
  nisThreshold: Float32Array;
  /** Raw fix minus smoothed (m); NaN where there is no valid fix. */
  resEast: Float32Array;
  resNorth: Float32Array;
  resUp: Float32Array;
  rawEast: Float64Array;
  rawNorth: Float64Array;
  speedMps: Float32Array;
}

export interface EllipseMark {
  tSec: number;
  east: number;
  north: number;
  majorM: number;
  minorM: number;
  azimuthDeg: number;
}

/** Structured-clone-safe data of one extension for one session. */
export type ExtensionData = Record<string, Float64Array | Float32Array | Int32Array | Uint8Array | number | string | boolean | null>;

export interface ExtensionChart {
  /** Heading shown above the plot. */
  title: string;
  /** One line under the plot saying how to read it. */
  caption: string;
  spec: TopLevelSpec;
}

export interface ReportExtension {
  /** Key of its data in ReportPayload.extensions. */
  id: string;
  /** Heading of its group of plots. */
  title: string;
  /** Runs in the worker: the data for the plotted epochs, or undefined when the fields are absent. */
  collect(r: SessionResult, epochs: Int32Array): ExtensionData | undefined;
  /** Runs when the report is written: the plots of the group. */
  charts(data: ExtensionData, plot: PlotSeries, bridgedSpans: Array<[number, number]>): ExtensionChart[];
}
