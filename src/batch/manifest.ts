/**
 * The resume manifest: one small JSON entry per session under `<out>/.hindcast/manifest/`, written
 * atomically after the session's outputs, removed before they are rewritten. An entry records the
 * content hashes (SHA-256) of the session's input files, the effective configuration and its hash,
 * the tool version, and the outputs with their sizes, so a rerun can tell a current session from a
 * stale one without reading its outputs. With the report on, a session's outputs include its page
 * (report/<stem>.html), and the small data of its row in report.html (thumbnail, a few figures:
 * output/report/overview-data.ts) sits beside the entry under `<out>/.hindcast/overview/`, in the
 * structured-clone serialization of node:v8 (the same algorithm that carries it from the worker
 * threads), so NaN survives a resume and the overview is written without processing the session.
 */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { readFile, rm, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { deserialize, serialize } from 'node:v8';
import type { HindcastConfig } from '../config/schema.js';
import type { SessionSummary } from '../output/summary.js';
import { sessionPageName } from '../output/report/page-path.js';
import { writeFileAtomic } from '../io/atomic-write.js';

/** The hidden folder of the output folder that holds the manifest and the overview data. */
export const STATE_DIR = '.hindcast';
/** 2: the session's page is one of its outputs and `payload` marks its overview data. */
export const MANIFEST_SCHEMA = 2;

export interface InputHash {
  /** "/"-separated path relative to the input root. */
  file: string;
  sha256: string;
  size: number;
}

export interface OutputFile {
  /** "/"-separated path relative to the output folder. */
  file: string;
  size: number;
}

export interface ManifestEntry {
  schema: number;
  tool: 'hindcast';
  version: string;
  name: string;
  inputs: InputHash[];
  configHash: string;
  config: HindcastConfig;
  outputs: OutputFile[];
  /** The session's page was written (listed in outputs) and its overview data saved. */
  payload: boolean;
  /** The session's summary entry, reused as it is when the session is skipped. */
  summary: SessionSummary;
  /** A failure that would repeat on the same inputs (bad input): kept instead of retried. */
  settled: boolean;
}

/** SHA-256 of a file, streamed (constant memory for logs of any size). */
export async function hashFile(path: string): Promise<{ sha256: string; size: number }> {
  const h = createHash('sha256');
  let size = 0;
  for await (const chunk of createReadStream(path, { highWaterMark: 1 << 20 })) {
    h.update(chunk as Buffer);
    size += (chunk as Buffer).length;
  }
  return { sha256: h.digest('hex'), size };
}

/** JSON with object keys in sorted order, so equal values always give equal text. */
export function canonicalJson(v: unknown): string {
  return JSON.stringify(v, (_k, x: unknown) => {
    if (x && typeof x === 'object' && !Array.isArray(x)) {
      const o: Record<string, unknown> = {};
      for (const k of Object.keys(x as object).sort()) o[k] = (x as Record<string, unknown>)[k];
      return o;
    }
    return x;
  });
}

/**
 * Hash of the settings a session's outputs depend on: the whole effective configuration except
 * `output.report` (whether the report is drawn; a session that lacks its page or overview data is
 * redone anyway when the report is switched on).
 */
export function configHash(cfg: HindcastConfig): string {
  const { report: _report, ...output } = cfg.output;
  return createHash('sha256').update(canonicalJson({ ...cfg, output })).digest('hex');
}

function stateFile(out: string, kind: 'manifest' | 'overview', name: string, ext: string): string {
  return join(out, STATE_DIR, kind, ...`${name}${ext}`.split('/'));
}

export const manifestPath = (out: string, name: string): string => stateFile(out, 'manifest', name, '.json');
export const overviewDataPath = (out: string, name: string): string => stateFile(out, 'overview', name, '.v8');

export async function readEntry(out: string, name: string): Promise<ManifestEntry | null> {
  try {
    const e = JSON.parse(await readFile(manifestPath(out, name), 'utf8')) as ManifestEntry;
    return e && e.schema === MANIFEST_SCHEMA && e.name === name ? e : null;
  } catch {
    return null;
  }
}

export async function writeEntry(out: string, e: ManifestEntry): Promise<void> {
  await writeFileAtomic(manifestPath(out, e.name), JSON.stringify(e) + '\n');
}

export async function removeEntry(out: string, name: string): Promise<void> {
  await rm(manifestPath(out, name), { force: true });
}

export async function writeOverviewData(out: string, name: string, data: unknown): Promise<void> {
  await writeFileAtomic(overviewDataPath(out, name), serialize(data));
}

export async function readOverviewData(out: string, name: string): Promise<unknown> {
  return deserialize(await readFile(overviewDataPath(out, name))) as unknown;
}

export async function removeOverviewData(out: string, name: string): Promise<void> {
  await rm(overviewDataPath(out, name), { force: true });
}

export interface CurrentCheck {
  version: string;
  configHash: string;
  inputs: InputHash[];
  /** The report is on, so an ok session needs its page and its overview data. */
  needPayload: boolean;
}

/** Why an entry is not current, or null when the session can be skipped. */
export async function staleReason(out: string, e: ManifestEntry | null, want: CurrentCheck): Promise<string | null> {
  if (!e) return 'not processed yet';
  if (e.version !== want.version) return `made by version ${e.version}`;
  if (e.configHash !== want.configHash) return 'configuration changed';
  const a = e.inputs.map((i) => `${i.file}\0${i.sha256}`).join('\n');
  const b = want.inputs.map((i) => `${i.file}\0${i.sha256}`).join('\n');
  if (a !== b) return 'input changed';
  if (e.summary.status === 'failed' && !e.settled) return 'failed before';
  // for a failed session: the earlier outputs kept in place (stale), which must still be as listed
  for (const o of e.outputs) {
    try {
      const st = await stat(join(out, ...o.file.split('/')));
      if (!st.isFile() || st.size !== o.size) return `output ${o.file} changed`;
    } catch {
      return `output ${o.file} missing`;
    }
  }
  if (e.summary.status === 'failed') return null;
  if (want.needPayload && (!e.payload || !e.outputs.some((o) => o.file === sessionPageName(e.name)))) return 'no report page';
  if (e.payload) {
    try {
      await stat(overviewDataPath(out, e.name));
    } catch {
      return 'report data missing';
    }
  }
  return null;
}
