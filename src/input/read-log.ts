/**
 * Reading a fix log of any supported kind into a FixSeries; the format is chosen from the file name.
 */
import { readFile } from 'node:fs/promises';
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { readFixCsv } from './csv-fixes.js';
import type { FixSeries } from './fix-series.js';

/** Extensions (lower case, without a trailing .gz) read as fix logs. */
export const FIX_LOG_EXTENSIONS = ['.csv', '.txt'] as const;

/** Files beside a log that are not logs themselves (IMU streams, user decisions). */
export const COMPANION_SUFFIXES = ['.imu.csv', '.decisions.csv'] as const;

/** The session name of a log: its file name without extensions. */
export function sessionStem(fileName: string): string {
  const base = fileName.replace(/^.*[\\/]/, '');
  const dot = base.indexOf('.');
  return dot > 0 ? base.slice(0, dot) : base;
}

export function isFixLogName(fileName: string): boolean {
  const lower = fileName.toLowerCase();
  if (COMPANION_SUFFIXES.some((s) => lower.endsWith(s))) return false;
  if (lower.startsWith('.')) return false;
  return FIX_LOG_EXTENSIONS.some((e) => lower.endsWith(e));
}

/** Decode bytes as UTF-8 text, refusing binary content with a reason. */
export function decodeText(buf: Buffer, file: string): string {
  if (buf.length >= 2 && ((buf[0] === 0xff && buf[1] === 0xfe) || (buf[0] === 0xfe && buf[1] === 0xff)))
    throw new InputError({ file }, 'UTF-16 text is not supported; save the file as UTF-8');
  const probe = buf.subarray(0, Math.min(buf.length, 65536));
  if (probe.includes(0)) throw new InputError({ file }, 'binary content (NUL bytes): not a text log');
  return buf.toString('utf8');
}

export async function readFixLog(path: string, displayName: string, cfg: HindcastConfig): Promise<FixSeries> {
  let buf: Buffer;
  try {
    buf = await readFile(path);
  } catch (e) {
    throw new InputError({ file: displayName }, `cannot read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  if (buf.length === 0) throw new InputError({ file: displayName }, 'empty file');
  const text = decodeText(buf, displayName);
  return readFixCsv(text, displayName, cfg);
}
