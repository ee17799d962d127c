/**
 * summary.json: one entry per session of the batch, ok or failed, with the reason, warnings and
 * metrics, so scripts can tell what happened without opening every output. Facts about the run
 * itself (when, how many sessions were processed or found up to date, elapsed times) are in
 * `createdUtc`, `run` and each entry's `elapsedSec`; everything else depends only on the inputs,
 * the configuration and the tool version.
 */
import type { InputWarning } from '../errors.js';
import type { SessionResult } from '../session/result/result.js';
import { CAUTION } from './caution.js';
import { surveySummary } from './survey-summary.js';

export interface SessionSummary {
  name: string;
  input: string;
  status: 'ok' | 'failed';
  reason?: string;
  warnings: InputWarning[];
  outputs?: string[];
  metrics?: SessionResult['metrics'];
  info?: Record<string, unknown>;
  /** The session's quality verdict and the motion-model check in short (details in info.verdict, info.adequacy). */
  quality?: SessionQuality;
  /** Occupied points and measured quantities (output/survey-summary.ts). */
  survey?: Record<string, unknown>;
  elapsedSec?: number;
  /** Failed this run; the outputs of an earlier run (staleOutputs) are kept but no longer match the inputs or settings. */
  stale?: boolean;
  staleOutputs?: string[];
}

/** Quality in short: "good" or "degraded" with plain-words reasons, and the motion-model check's outcome. */
export interface SessionQuality {
  verdict: 'good' | 'degraded';
  reasons: string[];
  motionModel: string;
}

/** The short quality record from a result's info (absent when the session has no verdict, e.g. the IMU path). */
export function sessionQuality(info: Record<string, unknown>): SessionQuality | undefined {
  const v = info.verdict as { verdict: 'good' | 'degraded'; reasons: string[] } | undefined;
  if (!v) return undefined;
  const a = info.adequacy as { outcome: string } | undefined;
  return { verdict: v.verdict, reasons: v.reasons.slice(), motionModel: a?.outcome ?? 'not checked' };
}

/** How this summary came about (differs between a clean run and a resumed one). */
export interface RunInfo {
  /** Sessions processed by this run. */
  processed: number;
  /** Sessions found up to date and kept from an earlier run. */
  upToDate: number;
  elapsedSec: number;
  /** For a joined summary: the number of shard summaries joined. */
  joinedShards?: number;
}

export interface BatchSummary {
  tool: string;
  version: string;
  createdUtc: string;
  caution: string;
  input: string;
  profile: string;
  /** SHA-256 of the effective configuration (canonical JSON), the same in every shard of a batch. */
  configHash?: string;
  /** Present in a shard's summary (summary.shard-K-of-N.json). */
  shard?: { index: number; count: number };
  run?: RunInfo;
  totals: { sessions: number; ok: number; failed: number; fixes: number; outliers: number; bridged: number; degraded: number };
  sessions: SessionSummary[];
}

export function okEntry(r: SessionResult, input: string, outputs: string[], elapsedSec: number): SessionSummary {
  const quality = sessionQuality(r.info);
  return { name: r.name, input, status: 'ok', warnings: r.warnings, outputs, metrics: r.metrics, info: r.info, ...(quality ? { quality } : {}), ...(r.survey ? { survey: surveySummary(r.survey) } : {}), elapsedSec };
}

/** A failed entry whose earlier outputs were kept in place. */
export function markStale(s: SessionSummary, outputs: string[]): SessionSummary {
  return { ...s, stale: true, staleOutputs: outputs };
}

export function buildSummary(
  version: string,
  input: string,
  profile: string,
  sessions: SessionSummary[],
  extra: Pick<BatchSummary, 'configHash' | 'shard' | 'run'> = {},
): BatchSummary {
  const ok = sessions.filter((s) => s.status === 'ok');
  return {
    tool: 'hindcast',
    version,
    createdUtc: new Date().toISOString(),
    caution: CAUTION,
    input,
    profile,
    ...(extra.configHash !== undefined ? { configHash: extra.configHash } : {}),
    ...(extra.shard !== undefined ? { shard: extra.shard } : {}),
    ...(extra.run !== undefined ? { run: extra.run } : {}),
    totals: {
      sessions: sessions.length,
      ok: ok.length,
      failed: sessions.length - ok.length,
      fixes: ok.reduce((a, s) => a + (s.metrics?.fixCount ?? 0), 0),
      outliers: ok.reduce((a, s) => a + (s.metrics?.outlierCount ?? 0), 0),
      bridged: ok.reduce((a, s) => a + (s.metrics?.bridgedCount ?? 0), 0),
      degraded: ok.filter((s) => s.quality?.verdict === 'degraded').length,
    },
    sessions,
  };
}

/** JSON with non-finite numbers written as null (JSON has no NaN). */
export function toJson(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2) + '\n';
}
