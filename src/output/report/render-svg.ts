/**
 * Vega-Lite → Vega → static SVG text, in Node, when the report is written (no browser, no canvas,
 * no data loading: every spec carries its data inline).
 */
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';

/** A loader that refuses every load, so a spec can never reach the file system or the network. */
const noLoader = vega.loader();
noLoader.load = () => Promise.reject(new Error('the report renders inline data only'));
noLoader.sanitize = () => Promise.reject(new Error('the report renders inline data only'));

/**
 * Legends written whole (Vega cuts a label at 160 px by default) and wrapped over lines of at
 * most two entries, so that no label is cut off at the chart's edge.
 */
const LEGEND_CONFIG = { labelLimit: 0, columns: 2, symbolLimit: 0 };

/** Geometry attributes whose numbers are rounded to a tenth of a pixel (what a screen or a print shows). */
const GEOMETRY_ATTR = /\b(d|transform|x|y|x1|y1|x2|y2|width|height)="([^"]*)"/g;
const LONG_DECIMAL = /(-?\d+\.\d)\d+/g;

/** The SVG text with coordinates rounded to 0.1 px (Vega writes up to 15 digits); text and labels are left as they are. */
export function roundSvgGeometry(svg: string): string {
  return svg.replace(GEOMETRY_ATTR, (_, name: string, value: string) => `${name}="${value.replace(LONG_DECIMAL, (m: string) => String(Math.round(Number(m) * 10) / 10))}"`);
}

export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const s = spec as TopLevelSpec & { config?: Record<string, unknown> };
  const config = { ...(s.config ?? {}), legend: { ...LEGEND_CONFIG, ...((s.config?.legend as object | undefined) ?? {}) } };
  const vg = compile({ ...s, config } as TopLevelSpec).spec;
  const view = new vega.View(vega.parse(vg), { renderer: 'none', loader: noLoader });
  try {
    return roundSvgGeometry(await view.toSVG());
  } finally {
    view.finalize();
  }
}
