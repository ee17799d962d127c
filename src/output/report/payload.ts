/**
 * ReportPayload: what the report needs of one session, computed right after processing (in the
 * batch's worker) so the full SessionResult need not be kept until the end of the batch. Small and
 * structured-clone-safe: plain objects, arrays, strings, numbers and typed arrays only.
 */
import type { InputWarning } from '../../errors.js';
import { STATUS, STATUS_NAMES, type OutlierReason, type SessionMetrics, type SessionResult, type StatusName } from '../../session/result/result.js';
import type { DecidingTest } from '../../session/result/decision-log.js';
import { closeups, type Closeup } from './closeup-data.js';
import { everyNth, plotEpochs } from './decimate.js';
import { collectExtensions } from './extensions.js';
import type { EllipseMark, ExtensionData, PlotSeries } from './types.js';

export type { EllipseMark, PlotSeries } from './types.js';

/** Version of the payload's shape (3: flag ids, deciding tests, close-ups, notes, time zone); an older kept payload is not drawn (page.ts). */
export const PAYLOAD_VERSION = 3;
/** Ellipses drawn on the track plot of a session (about; plus the worst one). */
export const ELLIPSES_PER_SESSION = 30;
/**
 * Epochs drawn in the time and track plots at most (besides the ones always kept): two a pixel
 * column of the 620 px charts, in buckets of three (first epoch, sd peak, statistic peak) of about
 * 1.5 px each; more points land on the same pixels and only cost bytes and time.
 */
export const PLOT_POINTS_MAX = 1240;
/** Flagged fixes and decisions listed in a session's table (all are plotted). */
export const LISTED_ROWS_MAX = 400;
/** Warnings carried per session (the count is always exact). */
export const WARNINGS_MAX = 50;

export interface FlaggedRow {
  /** The fix's id (OutlierRecord.id), shared with outliers.csv and the GeoJSON flags layer. */
  id: string;
  /** Its epoch in the full session (−1: not in the track, an invalid fix). */
  epoch: number;
  tSec: number;
  line: number;
  reason: OutlierReason;
  /** The deciding test, its statistic, threshold and relative margin (NaN where there is none). */
  test: DecidingTest;
  statistic: number;
  threshold: number;
  margin: number;
  /** Review statistic against the final track and the re-admission threshold. */
  reviewStatistic: number;
  readmitThreshold: number;
  /** Status of its epoch in the track ('outlier', 'user-rejected'), or 'not in track' for invalid fixes. */
  status: StatusName | 'not in track';
  offsetM: number;
  note: string | null;
  detail: string;
  /** Index of its close-up in ReportPayload.closeups, or −1. */
  closeup: number;
}

export interface DecisionRow {
  tSec: number;
  decision: 'keep' | 'reject';
  statistic: number;
  threshold: number;
  note: string | null;
}

export interface CalibratedNoise {
  /** White fix noise, 1-sigma per horizontal axis, and vertical: metres, or a scale of the reported sd. */
  horizontal: number;
  vertical: number;
  unit: 'm' | '× reported sd';
}

export interface ReportPayload {
  version: number;
  name: string;
  file: string;
  epochs: number;
  hasHeight: boolean;
  metrics: SessionMetrics;
  /** Time spent bridged (s): total length of the bridged spans. */
  bridgedSec: number;
  /** [start, end] (UTC Unix s) of each run of bridged epochs, extended to the fixes on each side. */
  bridgedSpans: Array<[number, number]>;
  /** Calibrated fix noise when the session was calibrated (from SessionResult.info), else null. */
  calibratedNoise: CalibratedNoise | null;
  /** The session's noise calibration in one line, every estimate with its standard error (calibrationLine), or null. */
  calibrationLine: string | null;
  /** Facts worth showing (frame, model), as short text pairs. */
  facts: Array<[string, string]>;
  warningCount: number;
  warnings: InputWarning[];
  plot: PlotSeries;
  ellipses: EllipseMark[];
  flagged: FlaggedRow[];
  flaggedCount: number;
  decisions: DecisionRow[];
  decisionCount: number;
  /** Data of optional plot groups (IMU, …), keyed by extension id; see extensions.ts. */
  extensions: Record<string, ExtensionData>;
  /** Close-ups of the flagged fixes (one per burst), review first; see closeup-data.ts. */
  closeups: Closeup[];
  /** IANA zone of the log's local times (input.timeZone), or null (times shown in UTC only). */
  timeZone: string | null;
}

export interface PayloadOptions {
  /** Most epochs drawn (flagged fixes always on top); default PLOT_POINTS_MAX. */
  maxPoints?: number;
}

function num(v: unknown): number | undefined {
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined;
}

/** A value of the calibration record: a number, or an estimate { value, se }. */
function estimate(v: unknown): number | undefined {
  if (typeof v === 'number') return num(v);
  if (v && typeof v === 'object') return num((v as { value?: unknown }).value);
  return undefined;
}

/**
 * Calibrated white fix noise, when a calibration step recorded it in info.calibration (as
 * `estimates` of sigmaHorizontalM / sigmaVerticalM, or plain numbers); null when the session was not
 * calibrated or the calibration fell back to the profile's values. With reported per-fix sigmas the
 * estimates are scales of those, not metres.
 */
export function calibratedNoise(info: Record<string, unknown> | undefined): CalibratedNoise | null {
  const cal = info?.calibration as Record<string, unknown> | undefined;
  if (!cal || typeof cal !== 'object' || cal.status === 'fallback') return null;
  const p = ((cal.estimates ?? cal.params ?? cal) as Record<string, unknown>) ?? {};
  const h = estimate(p.sigmaHorizontalM) ?? estimate(p.horizontalSigmaM);
  const v = estimate(p.sigmaVerticalM) ?? estimate(p.verticalSigmaM);
  if (h === undefined && v === undefined) return null;
  return { horizontal: h ?? NaN, vertical: v ?? NaN, unit: cal.reportedSigmaScale === true ? '× reported sd' : 'm' };
}

/** An estimate as "v ± se" with the same number of significant digits (about 3) in both; "v (at a bound)" without one. */
function withSe(e: unknown): string | undefined {
  if (typeof e === 'number') return Number.isFinite(e) ? fmt(e) : undefined;
  if (!e || typeof e !== 'object') return undefined;
  const { value, se, atBound } = e as { value?: unknown; se?: unknown; atBound?: unknown };
  const v = num(value);
  if (v === undefined) return undefined;
  const s = num(se);
  if (atBound === true) return `${fmt(v)} (at its bound)`;
  return s === undefined ? fmt(v) : `${fmt(v)} ± ${fmt(s)}`;
}

function fmt(v: number): string {
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(1);
  return String(+v.toPrecision(a < 1 ? 2 : 3));
}

/**
 * The calibration of a session in one line (the estimates and their standard errors in a
 * per-session line of the report): white noise, correlated error (sigma, time constant) and
 * process noise, horizontal / vertical, each "value ± standard error"; "profile values (reason)"
 * for a fallback; null without a calibration record.
 */
export function calibrationLine(info: Record<string, unknown> | undefined): string | null {
  const cal = info?.calibration as Record<string, unknown> | undefined;
  if (!cal || typeof cal !== 'object') return null;
  if (cal.status === 'fallback') return `profile values${typeof cal.reason === 'string' ? ` (${cal.reason})` : ''}`;
  const e = (cal.estimates ?? {}) as Record<string, unknown>;
  const pair = (h: string, v: string) => [withSe(e[h]), withSe(e[v])].filter((x) => x !== undefined).join(' / ');
  const unitW = cal.reportedSigmaScale === true ? '× reported sd' : 'm';
  const parts: string[] = [];
  const w = pair('sigmaHorizontalM', 'sigmaVerticalM');
  if (w) parts.push(`white ${w} ${unitW}`);
  const g = pair('gmHorizontalSigmaM', 'gmVerticalSigmaM');
  const tau = e.gmVerticalTauSec !== undefined ? pair('gmTauSec', 'gmVerticalTauSec') : withSe(e.gmTauSec);
  if (g) parts.push(`correlated ${g} m${tau ? `, time constant ${tau} s` : ''}`);
  const q = pair('qHorizontal', 'qVertical');
  if (q) parts.push(`process noise ${q} m²/s³`);
  // how far the white sigma follows the quality columns (0: not at all, 1: proportionally)
  const ex = [['DOP', withSe(e.hdopExponent)], ['satellite count', withSe(e.satsExponent)], ['fix quality', withSe(e.fixQualityExponent)], ['reported sigmas', withSe(e.reportedExponent)]].filter(([, v]) => v !== undefined).map(([k, v]) => `${k} ${v}`);
  const exponents = ex.length ? `; quality-column exponents ${ex.join(', ')} (0 ignored, 1 proportional)` : '';
  if (parts.length === 0) return null;
  const epochs = num(cal.epochsUsed);
  const pool = cal.pool as { group?: unknown; members?: unknown; given?: unknown; refused?: unknown } | undefined;
  const n = pool && Array.isArray(pool.members) ? pool.members.length + (Array.isArray(pool.given) ? pool.given.length : 0) : 0;
  const pooled = !pool ? ''
    : typeof pool.refused === 'string' ? `; not pooled with the other logs of "${String(pool.group)}" (${pool.refused})`
    : `; noise estimated jointly over the ${n} logs of "${String(pool.group)}" (each log its own process noise)`;
  return `${parts.join('; ')} (horizontal / vertical; ± standard error${epochs !== undefined && epochs > 0 ? `; ${epochs} epochs` : ''})${exponents}${pooled}${tailGateWords(info?.tailGate)}`;
}

/** The gate fitted to the tails (session/classify/tail-gate.ts) in words, where it widened the gate; '' otherwise. */
function tailGateWords(t: unknown): string {
  const g = t as { factor?: unknown; shape?: unknown } | undefined;
  if (!g || typeof g.factor !== 'number' || !(g.factor > 1) || typeof g.shape !== 'number') return '';
  return `; white errors heavier-tailed than Gaussian (shape ${g.shape.toFixed(2)}, 2 = Gaussian): outlier thresholds widened ×${g.factor.toFixed(2)}`;
}

/** The local frame in words, from its projection definition (centre latitude and longitude); null when it names none. */
export function frameInWords(definition: string): string | null {
  const lat = /\+lat_0=(-?[\d.]+)/.exec(definition)?.[1];
  const lon = /\+lon_0=(-?[\d.]+)/.exec(definition)?.[1];
  if (lat === undefined || lon === undefined || !/\+proj=tmerc/.test(definition)) return null;
  const la = Number(lat), lo = Number(lon);
  const deg = (v: number, pos: string, neg: string) => `${Math.abs(v).toFixed(5)}° ${v < 0 ? neg : pos}`;
  return `transverse Mercator on WGS84 centred at ${deg(la, 'N', 'S')}, ${deg(lo, 'E', 'W')}: metres east and north of that point`;
}

const MOTION_WORDS: Record<string, string> = {
  cv: 'constant velocity (random acceleration)',
  ca: 'constant acceleration (random jerk)',
};

/** Facts about the processing, in words (the raw projection string and parameter record stay in summary.json). */
function facts(r: SessionResult): Array<[string, string]> {
  const out: Array<[string, string]> = [['source', r.file]];
  const frame = r.info.frame;
  if (typeof frame === 'string') out.push(['local frame', frameInWords(frame) ?? 'a local transverse Mercator frame (its definition is in summary.json)']);
  const h = num(r.info.heightReferenceM);
  if (h !== undefined) out.push(['heights in the plots', `relative to ${h.toFixed(3)} m above the ellipsoid`]);
  const model = r.info.model as Record<string, unknown> | undefined;
  if (model && typeof model === 'object') {
    const motion = typeof model.motion === 'string' ? (MOTION_WORDS[model.motion] ?? model.motion) : 'unknown';
    const tau = num(model.gmTauSec);
    out.push(['motion model', `${motion}, with a time-correlated fix error${tau !== undefined ? ` (time constant ${+tau.toPrecision(3)} s)` : ''} and white fix noise`]);
  }
  const g = num(r.info.gateProbability);
  if (g !== undefined) out.push(['outlier tests', `chi-square at ${+(g * 100).toPrecision(6)}%: a fix that fits the model is flagged about ${+((1 - g) * 1000).toPrecision(3)} times in 1000`]);
  return out;
}

export function reportPayload(r: SessionResult, opt: PayloadOptions = {}): ReportPayload {
  const idx = plotEpochs(r, opt.maxPoints ?? PLOT_POINTS_MAX);
  const plot = plotSeries(r, idx);
  const { bridgedSpans, bridgedSec } = bridgedSpansOf(r);
  const ellipses = ellipseMarks(r);
  const { flagged, shots } = flaggedRows(r);
  const { decisions, decisionCount } = decisionRows(r);
  return {
    version: PAYLOAD_VERSION,
    name: r.name,
    file: r.file,
    epochs: r.N,
    hasHeight: r.hasHeight,
    metrics: { ...r.metrics },
    bridgedSec,
    bridgedSpans,
    calibratedNoise: calibratedNoise(r.info),
    calibrationLine: calibrationLine(r.info),
    facts: facts(r),
    warningCount: r.warnings.length,
    warnings: r.warnings.slice(0, WARNINGS_MAX).map((w) => ({ ...w })),
    plot,
    ellipses,
    flagged,
    flaggedCount: r.outliers.length,
    decisions,
    decisionCount,
    extensions: collectExtensions(r, idx),
    closeups: shots,
    timeZone: typeof r.info.timeZone === 'string' ? r.info.timeZone : null,
  };
}

/** The plotted epochs' values (idx: their epochs in the full session). */
function plotSeries(r: SessionResult, idx: Int32Array): PlotSeries {
  const M = idx.length;
  const f64 = () => new Float64Array(M);
  const f32 = () => new Float32Array(M);
  const plot: PlotSeries = {
    epoch: idx,
    tSec: f64(), segment: new Int32Array(M), status: new Uint8Array(M),
    east: f64(), north: f64(), up: f64(),
    sdHorizontalM: f32(), sdUpM: f32(), nis: f32(), nisThreshold: f32(),
    resEast: f32(), resNorth: f32(), resUp: f32(), rawEast: f64(), rawNorth: f64(), speedMps: f32(),
  };
  const raw = r.rawEnu;
  for (let k = 0; k < M; k++) {
    const j = idx[k]!;
    plot.tSec[k] = r.tSec[j]!;
    plot.segment[k] = r.segment[j]!;
    plot.status[k] = r.status[j]!;
    plot.east[k] = r.posEnu[0][j]!;
    plot.north[k] = r.posEnu[1][j]!;
    plot.up[k] = r.hasHeight ? r.posEnu[2][j]! : NaN;
    plot.sdHorizontalM[k] = Math.hypot(r.sdEnu[0][j]!, r.sdEnu[1][j]!);
    plot.sdUpM[k] = r.hasHeight ? r.sdEnu[2][j]! : NaN;
    plot.nis[k] = r.nis[j]!;
    plot.nisThreshold[k] = r.nisThreshold[j]!;
    plot.rawEast[k] = raw ? raw[0][j]! : NaN;
    plot.rawNorth[k] = raw ? raw[1][j]! : NaN;
    plot.resEast[k] = raw ? raw[0][j]! - r.posEnu[0][j]! : NaN;
    plot.resNorth[k] = raw ? raw[1][j]! - r.posEnu[1][j]! : NaN;
    plot.resUp[k] = raw && r.hasHeight ? raw[2][j]! - r.posEnu[2][j]! : NaN;
    plot.speedMps[k] = Math.hypot(r.velEnu[0][j]!, r.velEnu[1][j]!);
  }
  return plot;
}

/** Bridged spans, from the full-rate data, extended to the epochs on each side within the segment, and their total length (s). */
function bridgedSpansOf(r: SessionResult): { bridgedSpans: Array<[number, number]>; bridgedSec: number } {
  const bridgedSpans: Array<[number, number]> = [];
  let bridgedSec = 0;
  for (let j = 0; j < r.N; ) {
    if (r.status[j] !== STATUS.bridged) {
      j++;
      continue;
    }
    let e = j;
    while (e + 1 < r.N && r.status[e + 1] === STATUS.bridged && r.segment[e + 1] === r.segment[j]) e++;
    const a = j > 0 && r.segment[j - 1] === r.segment[j] ? j - 1 : j;
    const b = e + 1 < r.N && r.segment[e + 1] === r.segment[j] ? e + 1 : e;
    bridgedSpans.push([r.tSec[a]!, r.tSec[b]!]);
    bridgedSec += r.tSec[b]! - r.tSec[a]!;
    j = e + 1;
  }
  return { bridgedSpans, bridgedSec };
}

/** Ellipses at regular epoch intervals over the whole session, plus the worst one. */
function ellipseMarks(r: SessionResult): EllipseMark[] {
  const all = new Int32Array(r.N);
  for (let j = 0; j < r.N; j++) all[j] = j;
  const ellIdx = Array.from(everyNth(all, ELLIPSES_PER_SESSION));
  let worst = -1;
  for (let j = 0; j < r.N; j++) if (worst < 0 || r.ell95MajorM[j]! > r.ell95MajorM[worst]!) worst = j;
  if (worst >= 0 && !ellIdx.includes(worst)) ellIdx.push(worst);
  return ellIdx
    .filter((j) => Number.isFinite(r.ell95MajorM[j]!))
    .map((j) => ({ tSec: r.tSec[j]!, east: r.posEnu[0][j]!, north: r.posEnu[1][j]!, majorM: r.ell95MajorM[j]!, minorM: r.ell95MinorM[j]!, azimuthDeg: r.ell95AzimuthDeg[j]! }));
}

/** The listed flagged fixes, with the status of their epoch and their close-up, and the close-ups. */
function flaggedRows(r: SessionResult): { flagged: FlaggedRow[]; shots: Closeup[] } {
  const listed = r.outliers.slice(0, LISTED_ROWS_MAX);
  // the last epoch holding each listed fix (−1: none), found in one pass without a map of every epoch
  const epochOfFix = new Map<number, number>();
  for (const o of listed) epochOfFix.set(o.fix, -1);
  for (let j = 0; j < r.N; j++) {
    const i = r.fix[j]!;
    if (i >= 0 && epochOfFix.has(i)) epochOfFix.set(i, j);
  }
  const shots = closeups(r, listed, epochOfFix);
  const closeupOf = new Map<string, number>();
  shots.forEach((c, i) => c.ids.forEach((id) => closeupOf.set(id, i)));
  const flagged: FlaggedRow[] = listed.map((o) => {
    const j = epochOfFix.get(o.fix)!;
    return {
      id: o.id, epoch: j, tSec: o.tSec, line: o.line, reason: o.reason,
      test: o.test, statistic: o.testStatistic, threshold: o.testThreshold, margin: o.margin,
      reviewStatistic: o.statistic, readmitThreshold: o.readmitThreshold,
      status: j < 0 ? 'not in track' : STATUS_NAMES[r.status[j]!]!,
      offsetM: o.offsetM, note: o.note ?? null, detail: o.detail,
      closeup: closeupOf.get(o.id) ?? -1,
    };
  });
  return { flagged, shots };
}

/** The user's decisions found in the track (the first LISTED_ROWS_MAX listed), and their count. */
function decisionRows(r: SessionResult): { decisions: DecisionRow[]; decisionCount: number } {
  const decisions: DecisionRow[] = [];
  let decisionCount = 0;
  for (let j = 0; j < r.N; j++) {
    const st = r.status[j]!;
    if (st !== STATUS.userKept && st !== STATUS.userRejected) continue;
    decisionCount++;
    if (decisions.length < LISTED_ROWS_MAX)
      decisions.push({ tSec: r.tSec[j]!, decision: st === STATUS.userKept ? 'keep' : 'reject', statistic: r.nis[j]!, threshold: r.nisThreshold[j]!, note: r.decisionNotes?.get(r.fix[j]!) ?? null });
  }
  return { decisions, decisionCount };
}
