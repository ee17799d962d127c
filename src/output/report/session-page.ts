/**
 * One session's page, report/<stem>.html: the session's section (session-section.ts: figures,
 * plots, survey section, close-ups, flagged table, decisions, warnings) in the report's frame
 * (page-shell.ts: cautions at the top and the bottom, no network), with a link back to the
 * overview. Drawn by the worker that processed the session, right after its outputs.
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../../io/atomic-write.js';
import type { SessionSummary } from '../summary.js';
import { REPORT_EXTENSIONS, type ReportExtension } from './extensions.js';
import { FLAG_LINKS_SCRIPT } from './flag-links-script.js';
import { esc } from './html-text.js';
import { overviewHref, sessionPageName } from './page-path.js';
import { reportPage } from './page-shell.js';
import { PAYLOAD_VERSION, type ReportPayload } from './payload.js';
import { sessionSection } from './session-section.js';
import { SORT_SCRIPT } from './sort-script.js';

export interface SessionPageContext {
  tool: string;
  version: string;
  /** The configuration's profile name. */
  profile: string;
}

export async function sessionPageHtml(s: SessionSummary, p: ReportPayload | undefined, ctx: SessionPageContext, extensions: readonly ReportExtension[] = REPORT_EXTENSIONS): Promise<string> {
  const section = await sessionSection(s, p && p.version === PAYLOAD_VERSION ? p : undefined, 0, extensions);
  return reportPage({
    title: `Hindcast review report: ${s.name}`,
    generator: `${ctx.tool} ${ctx.version}`,
    header: `<h1>Hindcast review report: ${esc(s.name)}</h1>
<p>Log <code>${esc(s.input)}</code>, profile <code>${esc(ctx.profile)}</code>, by ${esc(ctx.tool)} ${esc(ctx.version)}. <a href="${esc(overviewHref(s.name))}">Overview of the batch</a></p>`,
    main: section,
    script: SORT_SCRIPT + FLAG_LINKS_SCRIPT,
    closeups: true,
  });
}

/** Write report/<stem>.html of one session atomically (the batch stages it with the session's outputs instead); returns its path relative to outDir. */
export async function writeSessionPage(outDir: string, s: SessionSummary, p: ReportPayload, ctx: SessionPageContext): Promise<string> {
  const rel = sessionPageName(s.name);
  await writeFileAtomic(join(outDir, ...rel.split('/')), await sessionPageHtml(s, p, ctx));
  return rel;
}
