/**
 * The input and output folders of a batch: an output folder that is the input folder, inside it or
 * the input file is refused before anything is written.
 */
import { mkdir, realpath, stat } from 'node:fs/promises';
import { dirname, resolve, sep } from 'node:path';
import { UsageError } from '../errors.js';

/** Whether path `p` is `root` or inside it (both real paths). */
export function inside(root: string, p: string): boolean {
  return p === root || p.startsWith(root.endsWith(sep) ? root : root + sep);
}

/** Refuse an output folder that is the input folder or inside it. */
export async function checkFolders(input: string, out: string): Promise<void> {
  let inReal: string;
  try {
    inReal = await realpath(input);
  } catch {
    throw new UsageError(`input not found: ${input}`);
  }
  const inStat = await stat(inReal);
  if (inStat.isDirectory()) {
    // refuse before creating anything inside the input tree
    let probe = resolve(out);
    for (;;) {
      try {
        const r = await realpath(probe);
        if (inside(inReal, r))
          throw new UsageError(`the output folder ${out} is the input folder or inside it; choose a folder outside ${input}`);
        break;
      } catch (e) {
        if (e instanceof UsageError) throw e;
        const up = dirname(probe);
        if (up === probe) break;
        probe = up;
      }
    }
  }
  await mkdir(out, { recursive: true });
  const outReal = await realpath(out);
  if (inStat.isDirectory() && inside(inReal, outReal))
    throw new UsageError(`the output folder ${out} is the input folder or inside it; choose a folder outside ${input}`);
  if (inStat.isFile() && outReal === inReal) throw new UsageError(`the output folder ${out} is the input file`);
}
