/**
 * Where the report's pages lie in the output folder: the overview `report.html` at the top, each
 * session's page at `report/<stem>.html` (a session in a subfolder of the input keeps it:
 * `report/day2/log00.html`), and the relative links between them.
 */

export const REPORT_FILE = 'report.html';
export const SESSION_PAGES_DIR = 'report';

/** A session's page relative to the output folder ("/"-separated). */
export function sessionPageName(name: string): string {
  return `${SESSION_PAGES_DIR}/${name}.html`;
}

/** The link from report.html to a session's page (each path segment percent-encoded). */
export function sessionPageHref(name: string): string {
  return `${SESSION_PAGES_DIR}/${name.split('/').map(encodeURIComponent).join('/')}.html`;
}

/** The link from a session's page back to report.html. */
export function overviewHref(name: string): string {
  return `${'../'.repeat(name.split('/').length)}${REPORT_FILE}`;
}

/** The session whose page a file of the output folder (relative, "/"-separated) is, or null. */
export function pageOwner(rel: string): string | null {
  const m = new RegExp(`^${SESSION_PAGES_DIR}/(.+)\\.html$`).exec(rel);
  return m ? m[1]! : null;
}
