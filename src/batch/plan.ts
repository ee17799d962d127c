/**
 * The plan of a batch: each discovered session with the hashes of its inputs and its manifest
 * entry, and the reason it is redone (null when its outputs are current), or the reason it cannot
 * run at all (an output name used twice, an output path onto an input or inside the input folder).
 */
import { mkdir, realpath } from 'node:fs/promises';
import { dirname } from 'node:path';
import pLimit from 'p-limit';
import type { HindcastConfig } from '../config/schema.js';
import { VERSION } from '../version.js';
import type { SessionInput } from './discover.js';
import { inside } from './folders.js';
import { hashFile, readEntry, staleReason, type InputHash, type ManifestEntry } from './manifest.js';
import { outputPaths } from './session-task.js';

export interface Planned {
  si: SessionInput;
  inputs: InputHash[];
  /** Set when the session cannot run at all (name clash, unsafe output path). */
  refused?: string;
  entry: ManifestEntry | null;
  stale: string | null;
}

async function hashInputs(si: SessionInput): Promise<InputHash[]> {
  const files = [{ path: si.path, relPath: si.relPath }, ...si.companions];
  const out: InputHash[] = [];
  for (const f of files) {
    try {
      out.push({ file: f.relPath, ...(await hashFile(f.path)) });
    } catch {
      out.push({ file: f.relPath, sha256: 'unreadable', size: -1 });
    }
  }
  return out;
}

export interface PlanContext {
  /** The output folder (real path). */
  out: string;
  config: HindcastConfig;
  /** configHash(config). */
  configHash: string;
  force: boolean;
  /** Every input file of the batch (fix logs and companions). */
  inputFiles: Set<string>;
  /** The discovered root when the input is a folder, else null. */
  inputRoot: string | null;
}

/** Plan the sessions (in their order): refusals, input hashes, manifest entries and staleness. */
export async function planSessions(sessions: SessionInput[], ctx: PlanContext): Promise<Planned[]> {
  const firstOfName = new Map<string, string>();
  const planned: Planned[] = [];
  for (const si of sessions) {
    const prior = firstOfName.get(si.name);
    if (prior !== undefined) planned.push({ si, inputs: [], refused: `same output name "${si.name}" as ${prior}; rename one of them`, entry: null, stale: 'refused' });
    else {
      firstOfName.set(si.name, si.relPath);
      planned.push({ si, inputs: [], entry: null, stale: null });
    }
  }
  const ioLimit = pLimit(4);
  await Promise.all(planned.map((p) => ioLimit(() => checkPlanned(p, ctx))));
  return planned;
}

/** One session's output paths checked, its inputs hashed and compared with its manifest entry. */
async function checkPlanned(p: Planned, ctx: PlanContext): Promise<void> {
  if (p.refused) return;
  const { out } = ctx;
  const report = ctx.config.output.report;
  const files = outputPaths(out, p.si.name);
  const paths = Object.values(files);
  if (paths.some((x) => ctx.inputFiles.has(x))) {
    p.refused = 'an output file of this session would replace an input file; write to another folder';
    return;
  }
  for (const parent of report ? [dirname(files.track), dirname(files.page)] : [dirname(files.track)]) {
    await mkdir(parent, { recursive: true });
    if (ctx.inputRoot !== null && inside(ctx.inputRoot, await realpath(parent))) {
      p.refused = 'the output folder of this session lies inside the input folder (symbolic link?); write to another folder';
      return;
    }
  }
  p.inputs = await hashInputs(p.si);
  p.entry = await readEntry(out, p.si.name);
  p.stale = ctx.force ? 'forced' : await staleReason(out, p.entry, { version: VERSION, configHash: ctx.configHash, inputs: p.inputs, needPayload: report });
}
