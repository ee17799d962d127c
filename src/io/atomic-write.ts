/**
 * Crash-safe output: every file is written under a temporary name in the same folder and renamed
 * into place when complete (rename is atomic within a file system, POSIX), so a killed run never
 * leaves a half-written file under a final name. Temporaries start with TEMP_PREFIX and are
 * removed by the next run.
 */
import { randomBytes } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdir, readdir, rename, rm, writeFile } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { once } from 'node:events';

export const TEMP_PREFIX = '.hindcast-tmp-';

function tempPath(path: string): string {
  return join(dirname(path), `${TEMP_PREFIX}${randomBytes(4).toString('hex')}-${basename(path)}`);
}

export async function writeFileAtomic(path: string, content: string | Uint8Array): Promise<void> {
  await mkdir(dirname(path), { recursive: true });
  const tmp = tempPath(path);
  try {
    await writeFile(tmp, content);
    await rename(tmp, path);
  } catch (e) {
    await rm(tmp, { force: true });
    throw e;
  }
}

/**
 * Stream chunks to a temporary file, then rename into place. A chunk is handed to the stream and
 * not touched again (the output writers give each chunk its own buffer).
 */
export async function writeChunksAtomic(path: string, chunks: Iterable<string | Uint8Array>): Promise<void> {
  const tmp = await writeChunksToTemporary(path, chunks);
  try {
    await rename(tmp, path);
  } catch (e) {
    await rm(tmp, { force: true });
    throw e;
  }
}

/**
 * Stream chunks to a temporary beside `path` and return the temporary's path, without renaming it:
 * several files written this way can be put in place together (`commitTemporaries`) once all of
 * them are complete, so a failure while writing any of them leaves every earlier file untouched.
 */
export async function writeChunksToTemporary(path: string, chunks: Iterable<string | Uint8Array>): Promise<string> {
  await mkdir(dirname(path), { recursive: true });
  const tmp = tempPath(path);
  const ws = createWriteStream(tmp);
  try {
    for (const c of chunks) if (!ws.write(c)) await once(ws, 'drain');
    ws.end();
    await once(ws, 'finish');
    return tmp;
  } catch (e) {
    // the stream may still be opening the file: wait for it to close, or the file appears after the rm
    if (!ws.closed) {
      const closed = once(ws, 'close').catch(() => undefined);
      ws.destroy();
      await closed;
    }
    await rm(tmp, { force: true });
    throw e;
  }
}

/** Rename each temporary onto its final path (each rename atomic); on a failure the remaining temporaries are removed. */
export async function commitTemporaries(pairs: ReadonlyArray<{ tmp: string; path: string }>): Promise<void> {
  let i = 0;
  try {
    for (; i < pairs.length; i++) await rename(pairs[i]!.tmp, pairs[i]!.path);
  } catch (e) {
    for (const p of pairs.slice(i)) await rm(p.tmp, { force: true });
    throw e;
  }
}

/** The final file name a temporary stands for, or null when `name` is not a temporary. */
export function finalNameOfTemp(name: string): string | null {
  const m = /^\.hindcast-tmp-[0-9a-f]{8}-(.+)$/.exec(name);
  return m ? m[1]! : null;
}

/**
 * Remove temporaries left by an interrupted run, recursively below dir. With `owned`, only the
 * temporaries whose final path (relative to dir, "/"-separated) it accepts are removed, so that
 * several shards sharing one output folder never delete each other's files in progress.
 */
export async function cleanTemporaries(dir: string, owned?: (finalRelPath: string) => boolean, prefix = ''): Promise<number> {
  let removed = 0;
  let entries;
  try {
    entries = await readdir(dir, { withFileTypes: true });
  } catch {
    return 0;
  }
  for (const e of entries) {
    const p = join(dir, e.name);
    if (e.name.startsWith(TEMP_PREFIX)) {
      const final = finalNameOfTemp(e.name);
      if (owned && (final === null || !owned(prefix + final))) continue;
      await rm(p, { force: true, recursive: true });
      removed++;
    } else if (e.isDirectory()) removed += await cleanTemporaries(p, owned, `${prefix}${e.name}/`);
  }
  return removed;
}
