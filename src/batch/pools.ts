/**
 * Which logs of a batch are calibrated together (batch.pool; session/calibrate/pooled.ts): the logs
 * of one folder, those whose relative path a pattern matches alike, or CSV logs with the same first
 * value in a named column (read here, before the sessions run). Logs with an IMU companion take the
 * IMU path and are processed alone; a group of one is no pool.
 */
import type { HindcastConfig } from '../config/schema.js';
import { csvColumnValue } from '../input/csv-fixes.js';
import { decodeText, formatFromName, readLogBytes, sniffFormat } from '../input/read-log.js';
import type { Planned } from './plan.js';

/** The pool of a log (by its "/"-separated path relative to the input folder), or null (alone). */
export function poolOf(relPath: string, b: HindcastConfig['batch']): string | null {
  if (b.pool === 'folder') {
    const i = relPath.lastIndexOf('/');
    return i < 0 ? '.' : relPath.slice(0, i);
  }
  if (b.pool === 'pattern' && b.poolPattern !== undefined) {
    const m = new RegExp(b.poolPattern).exec(relPath);
    return m ? (m[1] ?? m[0]) : null;
  }
  return null;
}

/** The pools of the planned sessions that can run (two logs or more each, in plan order), by name. */
export async function poolGroups(planned: Planned[], cfg: HindcastConfig): Promise<Map<string, Planned[]>> {
  const groups = new Map<string, Planned[]>();
  if (cfg.batch.pool === 'none') return groups;
  for (const p of planned) {
    if (p.refused || p.si.companions.some((c) => c.suffix === '.imu.csv')) continue;
    const g = cfg.batch.pool === 'column' ? await columnPoolOf(p, cfg) : poolOf(p.si.relPath, cfg.batch);
    if (g === null) continue;
    const list = groups.get(g) ?? [];
    list.push(p);
    groups.set(g, list);
  }
  for (const [g, list] of groups) if (list.length < 2) groups.delete(g);
  return groups;
}

/** The pool of a CSV log by its first value in batch.poolColumn, or null (not CSV, no such column, unreadable: the session says why when it runs). */
async function columnPoolOf(p: Planned, cfg: HindcastConfig): Promise<string | null> {
  try {
    const text = decodeText(await readLogBytes(p.si.path, p.si.relPath), p.si.relPath);
    const format = formatFromName(p.si.relPath);
    if (format !== 'csv' && !(format === 'sniff' && sniffFormat(text) === 'csv')) return null;
    return csvColumnValue(text, p.si.relPath, cfg, cfg.batch.poolColumn!);
  } catch {
    return null;
  }
}

/**
 * Whether a planned session's outputs came from a different pool than `names` (the session names
 * of its pool now): a log added to or removed from the folder changes every member's calibration.
 */
export function poolChanged(p: Planned, names: string[]): boolean {
  const pool = earlierPool(p);
  // a failed or un-pooled earlier run of the log: only its own inputs decide
  if (!pool) return p.entry?.summary.status === 'ok';
  const was = [...(pool.members ?? []), ...(pool.given ?? []), ...(pool.failed ?? [])].sort();
  const now = [...names].sort();
  return was.length !== now.length || was.some((n, i) => n !== now[i]);
}

/** The pool record of a planned session's earlier ok run, if it was pooled. */
export function earlierPool(p: Planned): { members?: string[]; given?: string[]; failed?: string[] } | undefined {
  const info = p.entry?.summary.status === 'ok' ? p.entry.summary.info : undefined;
  return (info?.calibration as { pool?: { members?: string[]; given?: string[]; failed?: string[] } } | undefined)?.pool;
}
