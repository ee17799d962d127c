/**
 * System tools of the acceptance tests: Debian's chromium and GDAL (installed by .ci/run). A
 * missing tool fails the test with a clear message; HINDCAST_SKIP_BROWSER=1 skips these tests
 * explicitly (for a machine that cannot have them), never silently.
 */
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export const SKIP_SYSTEM_TOOLS = process.env.HINDCAST_SKIP_BROWSER === '1';
export const CHROMIUM = '/usr/bin/chromium';

export function requireChromium(): void {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} not found: install Debian's chromium (.ci/run does), or set HINDCAST_SKIP_BROWSER=1 to skip the browser tests`);
}

export function requireGdal(): void {
  try {
    execFileSync('ogrinfo', ['--version'], { stdio: 'pipe' });
  } catch {
    throw new Error('ogrinfo not found: install Debian\'s gdal-bin (.ci/run does), or set HINDCAST_SKIP_BROWSER=1 to skip the GDAL tests');
  }
}

/** Run a tool, returning stdout; its stderr goes into the error when it fails. */
export function run(cmd: string, args: string[]): string {
  try {
    return execFileSync(cmd, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (e) {
    const x = e as { stderr?: string; stdout?: string; message: string };
    throw new Error(`${cmd} ${args.join(' ')} failed: ${x.message}\n${x.stderr ?? ''}${x.stdout ?? ''}`);
  }
}
