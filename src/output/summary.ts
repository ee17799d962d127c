/**
 * summary.json: one entry per session of the batch, ok or failed, with the reason, warnings and
 * metrics, so scripts can tell what happened without opening every output.
 */
import type { InputWarning } from '../errors.js';
import type { SessionResult } from '../session/result.js';
import { CAUTION } from './caution.js';

export interface SessionSummary {
  name: string;
  input: string;
  status: 'ok' | 'failed';
  reason?: string;
  warnings: InputWarning[];
  outputs?: string[];
  metrics?: SessionResult['metrics'];
  info?: Record<string, unknown>;
  elapsedSec?: number;
}

export interface BatchSummary {
  tool: string;
  version: string;
  createdUtc: string;
  caution: string;
  input: string;
  profile: string;
  totals: { sessions: number; ok: number; failed: number; fixes: number; outliers: number; bridged: number };
  sessions: SessionSummary[];
}

export function okEntry(r: SessionResult, input: string, outputs: string[], elapsedSec: number): SessionSummary {
  return { name: r.name, input, status: 'ok', warnings: r.warnings, outputs, metrics: r.metrics, info: r.info, elapsedSec };
}

export function buildSummary(version: string, input: string, profile: string, sessions: SessionSummary[]): BatchSummary {
  const ok = sessions.filter((s) => s.status === 'ok');
  return {
    tool: 'hindcast',
    version,
    createdUtc: new Date().toISOString(),
    caution: CAUTION,
    input,
    profile,
    totals: {
      sessions: sessions.length,
      ok: ok.length,
      failed: sessions.length - ok.length,
      fixes: ok.reduce((a, s) => a + (s.metrics?.fixCount ?? 0), 0),
      outliers: ok.reduce((a, s) => a + (s.metrics?.outlierCount ?? 0), 0),
      bridged: ok.reduce((a, s) => a + (s.metrics?.bridgedCount ?? 0), 0),
    },
    sessions,
  };
}

/** JSON with non-finite numbers written as null (JSON has no NaN). */
export function toJson(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? null : x), 2) + '\n';
}
