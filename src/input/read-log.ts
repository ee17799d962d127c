/**
 * Reading a fix log of any supported kind into a FixSeries; the format is chosen from the file name
 * (content sniffed for .txt and .log), gzip is recognised by its magic bytes (RFC 1952 §2.3.1:
 * 1F 8B) and read as a stream (node:zlib), and `input.strict` turns reader warnings into failures.
 *
 * | extension (optionally + .gz) | read as |
 * |---|---|
 * | .csv .tsv | CSV (delimiter detected) |
 * | .nmea .nma | NMEA 0183 |
 * | .gpx | GPX 1.1 |
 * | .txt .log | NMEA when the first sentence-like line starts with "$", GPX when the text starts with "<", else CSV |
 */
import { createReadStream } from 'node:fs';
import { open } from 'node:fs/promises';
import { gunzipSync, createGunzip } from 'node:zlib';
import type { Readable } from 'node:stream';
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { readFixCsv } from './csv-fixes.js';
import { decodeLogBytes } from './decode-text.js';
import type { FixSeries } from './fix-series.js';
import { readGpx } from './gpx.js';
import { readNmea } from './nmea.js';
import { NOTE_CODES } from './row-warnings.js';

/** Extensions (lower case, without a trailing .gz) read as fix logs. */
export const FIX_LOG_EXTENSIONS = ['.csv', '.tsv', '.txt', '.nmea', '.nma', '.log', '.gpx'] as const;

/** Files beside a log that are not logs themselves (IMU streams, user decisions). */
export const COMPANION_SUFFIXES = ['.imu.csv', '.decisions.csv'] as const;

/** Largest log read (bytes after decompression): bounded memory for any input, gzip bombs included. */
export const MAX_LOG_BYTES = 512 * 1024 * 1024;

export type LogFormat = 'csv' | 'nmea' | 'gpx';

/** The session name of a log: its file name without extensions. */
export function sessionStem(fileName: string): string {
  const base = fileName.replace(/^.*[\\/]/, '');
  const dot = base.indexOf('.');
  return dot > 0 ? base.slice(0, dot) : base;
}

function withoutGz(lowerName: string): string {
  return lowerName.endsWith('.gz') ? lowerName.slice(0, -3) : lowerName;
}

export function isFixLogName(fileName: string): boolean {
  const base = fileName.replace(/^.*[\\/]/, '').toLowerCase();
  if (base.startsWith('.')) return false;
  const lower = withoutGz(base);
  if (COMPANION_SUFFIXES.some((s) => lower.endsWith(s))) return false;
  return FIX_LOG_EXTENSIONS.some((e) => lower.endsWith(e));
}

/** Format from the name, or 'sniff' for names that do not decide it (.txt, .log, unknown). */
export function formatFromName(fileName: string): LogFormat | 'sniff' {
  const lower = withoutGz(fileName.replace(/^.*[\\/]/, '').toLowerCase());
  if (lower.endsWith('.csv') || lower.endsWith('.tsv')) return 'csv';
  if (lower.endsWith('.nmea') || lower.endsWith('.nma')) return 'nmea';
  if (lower.endsWith('.gpx')) return 'gpx';
  return 'sniff';
}

/** Guess the format of decoded text: GPX markup, NMEA sentences, or else CSV. */
export function sniffFormat(text: string): LogFormat {
  const head = text.slice(0, 4096).replace(/^\uFEFF/, '');
  if (/^\s*</.test(head)) return 'gpx';
  const lines = head.split(/\r\n|\n|\r/).filter((l) => l.trim() !== '').slice(0, 10);
  const nmea = lines.filter((l) => /\$[A-Z][A-Z0-9]{4,5},/.test(l)).length;
  if (lines.length > 0 && nmea * 2 >= lines.length) return 'nmea';
  return 'csv';
}

/** Decode and read text of a known format. */
export function readFixText(text: string, file: string, cfg: HindcastConfig, format: LogFormat | 'sniff'): FixSeries {
  const f = format === 'sniff' ? sniffFormat(text) : format;
  if (f === 'nmea') return readNmea(text, file, cfg);
  if (f === 'gpx') return readGpx(text, file, cfg);
  return readFixCsv(text, file, cfg);
}

/** `input.strict`: any reader warning (other than interpretation notes) fails the file. */
export function applyStrict(s: FixSeries, cfg: HindcastConfig): FixSeries {
  if (!cfg.input.strict) return s;
  const problems = s.warnings.filter((w) => !NOTE_CODES.has(w.code));
  if (problems.length === 0) return s;
  const first = problems[0]!;
  throw new InputError(
    { file: s.file, line: first.line },
    `strict mode: ${problems.length} warning(s); first: [${first.code}] ${first.message}`,
  );
}

function isGzip(buf: Uint8Array): boolean {
  return buf.length >= 2 && buf[0] === 0x1f && buf[1] === 0x8b;
}

function gzipReason(e: unknown, maxBytes: number): string {
  const err = e as NodeJS.ErrnoException;
  if (err.code === 'ERR_BUFFER_TOO_LARGE' || err.code === 'ERR_OUT_OF_RANGE' || err instanceof RangeError)
    return `decompressed size exceeds ${maxBytes / 1048576} MiB`;
  if (err.code === 'Z_BUF_ERROR') return 'gzip data is truncated (unexpected end of file)';
  return `not readable as gzip: ${err.message}`;
}

export interface ReadOptions {
  /** Bound on the (decompressed) size in bytes; default MAX_LOG_BYTES. */
  maxBytes?: number;
}

/** Read a log held in memory (plain or gzip bytes); `file` names it and decides the format. */
export function readFixBytes(buf: Uint8Array, file: string, cfg: HindcastConfig, opt: ReadOptions = {}): FixSeries {
  const max = opt.maxBytes ?? MAX_LOG_BYTES;
  let bytes = buf;
  if (isGzip(buf)) {
    try {
      bytes = gunzipSync(buf, { maxOutputLength: max });
    } catch (e) {
      throw new InputError({ file }, gzipReason(e, max));
    }
    if (bytes.length === 0) throw new InputError({ file }, 'empty file (gzip holds no data)');
  } else if (bytes.length > max) throw new InputError({ file }, `file larger than ${max / 1048576} MiB`);
  const { text } = decodeLogBytes(bytes, file);
  return applyStrict(readFixText(text, file, cfg, formatFromName(file)), cfg);
}

/** Collect a stream into one buffer, refusing more than `max` bytes. */
async function collect(stream: Readable, max: number, file: string): Promise<Buffer> {
  const chunks: Buffer[] = [];
  let n = 0;
  for await (const c of stream) {
    const b = c as Buffer;
    n += b.length;
    if (n > max) {
      stream.destroy();
      throw new InputError({ file }, `size exceeds ${max / 1048576} MiB (after decompression): not read`);
    }
    chunks.push(b);
  }
  return Buffer.concat(chunks, n);
}

/**
 * A regular file read whole into one buffer of its size (no chunks to join: at 66 MB the join was
 * a third of a second); null for anything else (a pipe, a device) or a file that grew while read,
 * which the stream reader then takes.
 */
async function readRegularFile(path: string, max: number, file: string): Promise<Buffer | null> {
  const fh = await open(path, 'r');
  try {
    const st = await fh.stat();
    if (!st.isFile()) return null;
    if (st.size > max) throw new InputError({ file }, `size exceeds ${max / 1048576} MiB (after decompression): not read`);
    const buf = Buffer.allocUnsafe(st.size);
    let n = 0;
    while (n < st.size) {
      const { bytesRead } = await fh.read(buf, n, st.size - n, n);
      if (bytesRead === 0) break;
      n += bytesRead;
    }
    if (n < st.size) return buf.subarray(0, n); // shrank while read: what was there
    const probe = Buffer.allocUnsafe(1);
    if ((await fh.read(probe, 0, 1, n)).bytesRead > 0) return null;
    return buf;
  } finally {
    await fh.close();
  }
}

/** Read the bytes of a file, decompressing gzip as a stream. */
export async function readLogBytes(path: string, displayName: string, maxBytes = MAX_LOG_BYTES): Promise<Buffer> {
  let head: Buffer;
  try {
    head = await collectHead(path);
  } catch (e) {
    throw new InputError({ file: displayName }, `cannot read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  if (head.length === 0) throw new InputError({ file: displayName }, 'empty file');
  if (!isGzip(head)) {
    try {
      return (await readRegularFile(path, maxBytes, displayName)) ?? (await collect(createReadStream(path), maxBytes, displayName));
    } catch (e) {
      if (e instanceof InputError) throw e;
      throw new InputError({ file: displayName }, `cannot read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
    }
  }
  const src = createReadStream(path);
  const gunzip = createGunzip();
  src.on('error', (e) => gunzip.destroy(e));
  src.pipe(gunzip);
  try {
    const out = await collect(gunzip, maxBytes, displayName);
    if (out.length === 0) throw new InputError({ file: displayName }, 'empty file (gzip holds no data)');
    return out;
  } catch (e) {
    src.destroy();
    if (e instanceof InputError) throw e;
    throw new InputError({ file: displayName }, gzipReason(e, maxBytes));
  }
}

async function collectHead(path: string): Promise<Buffer> {
  const s = createReadStream(path, { start: 0, end: 1 });
  const chunks: Buffer[] = [];
  for await (const c of s) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}

/** Decode bytes as text, refusing binary and unsupported encodings with a reason. */
export function decodeText(buf: Buffer, file: string): string {
  return decodeLogBytes(buf, file).text;
}

export async function readFixLog(path: string, displayName: string, cfg: HindcastConfig, opt: ReadOptions = {}): Promise<FixSeries> {
  const buf = await readLogBytes(path, displayName, opt.maxBytes);
  const { text } = decodeLogBytes(buf, displayName);
  return applyStrict(readFixText(text, displayName, cfg, formatFromName(path)), cfg);
}
