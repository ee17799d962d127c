/**
 * Finding the sessions of a batch: every fix log below the input folder (or the one file given),
 * in a stable order (by session name), never following symbolic links out of the input tree and
 * never walking a folder twice (symbolic-link cycles). Companion files beside a log with the same
 * stem (`<stem>.imu.csv`, `<stem>.decisions.csv`) belong to its session.
 */
import { readdir, realpath, stat } from 'node:fs/promises';
import { basename, dirname, join, relative, sep } from 'node:path';
import { COMPANION_SUFFIXES, isFixLogName, sessionStem } from '../input/read-log.js';

export interface SessionInput {
  /** Absolute path of the fix log. */
  path: string;
  /** Path relative to the input root, with "/" separators (for messages and the summary). */
  relPath: string;
  /** Output name: relative folder + stem, "/"-separated. */
  name: string;
  /** Companion files beside the log (absolute path and "/"-separated path relative to the input root), by suffix order. */
  companions: Array<{ path: string; relPath: string; suffix: string }>;
}

/** Discovery result: the sessions plus the folder that relative paths refer to. */
export interface Discovery {
  /** Real path of the input folder (of the file's folder for a single file). */
  root: string;
  sessions: SessionInput[];
}

/** Canonical order of sessions: by name, plain code-unit order (shards and their join use it too). */
export function bySessionName(a: { name: string }, b: { name: string }): number {
  return a.name < b.name ? -1 : a.name > b.name ? 1 : 0;
}

function inside(root: string, p: string): boolean {
  return p === root || p.startsWith(root.endsWith(sep) ? root : root + sep);
}

/** Companions of `logName` among the names of its folder (case-insensitive suffix match). */
function companionsOf(logName: string, names: string[]): Array<{ name: string; suffix: string }> {
  const stem = sessionStem(logName).toLowerCase();
  const out: Array<{ name: string; suffix: string }> = [];
  for (const suffix of COMPANION_SUFFIXES) {
    const hit = names.find((n) => n.toLowerCase() === stem + suffix);
    if (hit !== undefined) out.push({ name: hit, suffix });
  }
  return out;
}

export async function discoverSessions(input: string): Promise<SessionInput[]> {
  return (await discover(input)).sessions;
}

export async function discover(input: string): Promise<Discovery> {
  const st = await stat(input);
  if (st.isFile()) {
    const real = await realpath(input);
    const dir = dirname(real);
    const base = basename(input);
    let names: string[] = [];
    try {
      names = await readdir(dirname(input));
    } catch {
      /* a file in an unreadable folder: no companions */
    }
    const companions = [];
    for (const c of companionsOf(base, names)) {
      const p = join(dirname(input), c.name);
      try {
        const cr = await realpath(p);
        if (dirname(cr) === dir && (await stat(cr)).isFile()) companions.push({ path: cr, relPath: c.name, suffix: c.suffix });
      } catch {
        /* dangling link: ignore */
      }
    }
    return { root: dir, sessions: [{ path: real, relPath: base, name: sessionStem(base), companions }] };
  }
  const root = await realpath(input);
  const out: SessionInput[] = [];
  const visited = new Set<string>();

  /** Resolve an entry to a real path inside the tree, or null (outside, dangling, or not a file/folder). */
  async function resolveEntry(p: string, isLink: boolean, isDir: boolean, isFile: boolean): Promise<{ path: string; isDir: boolean; isFile: boolean } | null> {
    if (!isLink) return { path: p, isDir, isFile };
    let target: string;
    try {
      target = await realpath(p);
    } catch {
      return null;
    }
    if (!inside(root, target)) return null;
    const ts = await stat(target);
    return { path: target, isDir: ts.isDirectory(), isFile: ts.isFile() };
  }

  async function walk(dir: string, realDir: string): Promise<void> {
    if (visited.has(realDir)) return;
    visited.add(realDir);
    const entries = await readdir(realDir, { withFileTypes: true });
    entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    const names = entries.map((e) => e.name);
    for (const e of entries) {
      if (e.name.startsWith('.')) continue;
      const r = await resolveEntry(join(realDir, e.name), e.isSymbolicLink(), e.isDirectory(), e.isFile());
      if (!r) continue;
      const logical = join(dir, e.name);
      if (r.isDir) await walk(logical, r.path);
      else if (r.isFile && isFixLogName(e.name)) {
        const rel = relative(root, logical).split(sep).join('/');
        const folder = rel.includes('/') ? rel.slice(0, rel.lastIndexOf('/') + 1) : '';
        const companions = [];
        for (const c of companionsOf(e.name, names)) {
          const cr = await resolveEntry(join(realDir, c.name), true, false, false);
          if (cr?.isFile) companions.push({ path: cr.path, relPath: folder + c.name, suffix: c.suffix });
        }
        out.push({ path: r.path, relPath: rel, name: folder + sessionStem(e.name), companions });
      }
    }
  }
  await walk(root, root);
  out.sort(bySessionName);
  return { root, sessions: out };
}
