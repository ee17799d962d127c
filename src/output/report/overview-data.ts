/**
 * What report.html needs of one session beyond its summary entry: the few figures of its overview
 * row that the summary does not hold, and its track thumbnail. Computed in the worker beside the
 * session's page and saved per session (under the output folder's .hindcast/overview/), so the
 * overview is written without drawing anything and a rerun reads it without processing the
 * session again. About 2–3 kB a session.
 */
import type { CalibratedNoise, ReportPayload } from './payload.js';
import { sessionPageName } from './page-path.js';
import { thumbnailOf, type Thumbnail } from './thumbnail.js';

/** Version of this shape; data of another version is not used (the row shows what the summary holds). */
export const OVERVIEW_DATA_VERSION = 1;

/** The figures of an overview row that come from the report's data (a ReportPayload has them too). */
export interface OverviewFacts {
  /** Time spent bridged (s). */
  bridgedSec: number;
  calibratedNoise: CalibratedNoise | null;
  decisionCount: number;
}

export interface OverviewData extends OverviewFacts {
  version: number;
  name: string;
  /** The session's page, relative to the output folder ("report/<stem>.html"). */
  page: string;
  thumbnail: Thumbnail;
}

export function overviewData(p: ReportPayload): OverviewData {
  return {
    version: OVERVIEW_DATA_VERSION,
    name: p.name,
    page: sessionPageName(p.name),
    bridgedSec: p.bridgedSec,
    calibratedNoise: p.calibratedNoise,
    decisionCount: p.decisionCount,
    thumbnail: thumbnailOf(p.plot.east, p.plot.north, p.plot.segment),
  };
}
