/**
 * Finding the sessions of a batch: every fix log below the input folder (or the one file given),
 * in a stable order, never following symbolic links out of the input tree.
 */
import { readdir, realpath, stat } from 'node:fs/promises';
import { join, relative, sep } from 'node:path';
import { isFixLogName, sessionStem } from '../input/read-log.js';

export interface SessionInput {
  /** Absolute path of the fix log. */
  path: string;
  /** Path relative to the input root, with "/" separators (for messages and the summary). */
  relPath: string;
  /** Output name: relative folder + stem, "/"-separated. */
  name: string;
}

export async function discoverSessions(input: string): Promise<SessionInput[]> {
  const st = await stat(input);
  if (st.isFile()) {
    const base = input.replace(/^.*[\\/]/, '');
    return [{ path: input, relPath: base, name: sessionStem(base) }];
  }
  const root = await realpath(input);
  const out: SessionInput[] = [];
  async function walk(dir: string): Promise<void> {
    const entries = await readdir(dir, { withFileTypes: true });
    entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    for (const e of entries) {
      if (e.name.startsWith('.')) continue;
      let p = join(dir, e.name);
      let isDir = e.isDirectory();
      let isFile = e.isFile();
      if (e.isSymbolicLink()) {
        // follow a link only when it stays inside the input tree
        let target: string;
        try {
          target = await realpath(p);
        } catch {
          continue;
        }
        if (target !== root && !target.startsWith(root + sep)) continue;
        const ts = await stat(target);
        isDir = ts.isDirectory();
        isFile = ts.isFile();
        p = target;
      }
      if (isDir) await walk(p);
      else if (isFile && isFixLogName(e.name)) {
        const rel = relative(root, join(dir, e.name)).split(sep).join('/');
        const folder = rel.includes('/') ? rel.slice(0, rel.lastIndexOf('/') + 1) : '';
        out.push({ path: p, relPath: rel, name: folder + sessionStem(e.name) });
      }
    }
  }
  await walk(root);
  return out;
}
