/**
 * The frame every report page shares (the overview report.html and each session's
 * report/<stem>.html): one self-contained file with inline style, inline SVG, small inline scripts
 * and a Content-Security-Policy that forbids every load, so it opens the same from a USB stick with
 * no network. The cautions stand at the top and the bottom of every page.
 */
import { CAUTION } from '../caution.js';
import { CLOSEUP_STYLE } from './chart-closeup.js';
import { esc } from './html-text.js';

export const REPORT_STYLE = `
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; margin: 1.5rem auto; max-width: 72rem; padding: 0 1rem; color: #1b1b1b; line-height: 1.4; }
h1 { font-size: 1.6rem; margin-bottom: .2rem; }
h2 { border-top: 2px solid #444; padding-top: .8rem; margin-top: 2.5rem; }
h2 .status { font-size: .9rem; font-weight: normal; border: 1px solid #666; border-radius: 3px; padding: 0 .3rem; }
.caution { border: 2px solid #8a6d00; background: #fff8dc; padding: .6rem .9rem; margin: 1rem 0; }
table { border-collapse: collapse; margin: .8rem 0; font-size: .86rem; }
caption { text-align: left; font-weight: 600; padding: .3rem 0; }
th, td { border: 1px solid #bbb; padding: .2rem .45rem; text-align: left; vertical-align: top; }
td { font-variant-numeric: tabular-nums; }
td code { white-space: nowrap; }
thead th { background: #eef1f4; }
thead th button { font: inherit; font-weight: 600; border: 0; background: none; cursor: pointer; padding: 0; text-align: left; }
thead th[aria-sort="ascending"] button::after { content: " ▲"; }
thead th[aria-sort="descending"] button::after { content: " ▼"; }
tr.failed th, tr.failed td { background: #fbeaea; font-style: italic; }
td.thumb { padding: 0; }
td.thumb svg { display: block; width: 6rem; height: 4rem; }
dl.figures { display: grid; grid-template-columns: max-content 1fr; gap: .1rem 1rem; font-size: .88rem; }
dl.figures dt { color: #444; }
dl.figures dd { margin: 0; overflow-wrap: anywhere; }
figure.plot { margin: 1.2rem 0; }
figure.plot svg { max-width: 100%; height: auto; display: block; }
figcaption { font-size: .86rem; margin-bottom: .3rem; }
.note, .howto { font-size: .86rem; color: #333; }
.warnings .code { color: #555; }
div.closeups { display: flex; flex-wrap: wrap; gap: .8rem 1.2rem; }
figure.closeup { margin: .4rem 0; width: 22rem; }
figure.closeup svg { max-width: 100%; height: auto; display: block; }
table.flagged tr:target td, table.flagged tr.picked td { background: #fff3c4; }
footer { margin-top: 3rem; font-size: .85rem; border-top: 1px solid #999; padding-top: .6rem; }
@media print { .caution { background: none; } h2 { break-before: page; } }
`;

export const REPORT_CSP = "default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'";

/** The caution paragraph (the wording of output/caution.ts, as summary.json carries it). */
export const CAUTION_HTML = `<p class="caution" role="note"><strong>Caution.</strong> ${esc(CAUTION)}</p>`;

export const FOOTER_NOTE =
  "<p>Times are UTC, and also in the log's own zone where the configuration names one (input.timeZone). Positions in the plots are metres in each session's local frame (named in its figures); the GeoJSON, GPX and CSV outputs hold WGS84 coordinates.</p>";

export interface PageParts {
  /** Title text (escaped here). */
  title: string;
  /** Tool name and version for the generator meta tag. */
  generator: string;
  /** HTML of the header above the caution (the h1 and a line of context). */
  header: string;
  /** HTML of the main part. */
  main: string;
  /** Inline script text (no data, no network). */
  script: string;
  /** Whether the page holds close-ups (their shared style is added). */
  closeups?: boolean;
}

export function reportPage(p: PageParts): string {
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="${esc(p.generator)}">
<title>${esc(p.title)}</title>
<style>${REPORT_STYLE}${p.closeups ? CLOSEUP_STYLE : ''}</style>
</head>
<body>
<header>
${p.header}
${CAUTION_HTML}
</header>
<main>
${p.main}
</main>
<footer>
${CAUTION_HTML}
${FOOTER_NOTE}
</footer>
<script>${p.script}</script>
</body>
</html>
`;
}
