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
  return svg.replace(GEOMETRY_ATTR, (_, name: string, value: string) => {
    const v = value.replace(LONG_DECIMAL, (m: string) => String(Math.round(Number(m) * 10) / 10));
    return `${name}="${name === 'd' ? straightRunsOut(v) : v}"`;
  });
}

const POLYLINE = /^M-?[\d.]+,-?[\d.]+(L-?[\d.]+,-?[\d.]+)+$/;

/**
 * A polyline (M x,y L x,y …) without the inner points of its horizontal and vertical runs (after
 * rounding, a steady sd or a constant threshold repeats its pixel row for hundreds of points): the
 * same line. Other paths are returned as they are.
 */
export function straightRunsOut(d: string): string {
  if (!POLYLINE.test(d)) return d;
  const pts = d.slice(1).split('L').map((p) => p.split(','));
  const keep: string[] = [];
  for (let i = 0; i < pts.length; i++) {
    const a = pts[i - 1], b = pts[i]!, c = pts[i + 1];
    if (a && c && ((a[1] === b[1] && b[1] === c[1]) || (a[0] === b[0] && b[0] === c[0]))) continue;
    keep.push(`${b[0]},${b[1]}`);
  }
  return `M${keep.join('L')}`;
}

/** A scale of the rendered chart by name ('x', 'y'): data value → pixel of the plot area. */
export type ChartScale = (name: string) => (v: number) => number;

/**
 * SVG text to put into the (empty) group of a named layer, by layer name, from the chart's scales
 * once laid out: marks drawn as one path where the library would write an element a point (kept
 * dots, ellipses, flagged symbols of the time plots). The text is in the plot area's pixel frame,
 * inside the layer's clip.
 */
export type SvgOverlay = (scale: ChartScale) => Record<string, string>;

const OVERLAYS = new WeakMap<object, SvgOverlay>();

/** The spec, with an overlay that renderSvg draws into its empty named layers. */
export function withSvgOverlay<T extends object>(spec: T, overlay: SvgOverlay): T {
  OVERLAYS.set(spec, overlay);
  return spec;
}

function putOverlays(svg: string, overlays: Record<string, string>): string {
  let out = svg;
  for (const [name, inner] of Object.entries(overlays)) {
    const re = new RegExp(`(<g class="mark-[a-z]+ role-mark ${name}_marks"[^>]*?)/>`);
    if (!re.test(out)) throw new Error(`the report chart has no empty layer "${name}" to draw into`);
    out = out.replace(re, (_, open: string) => `${open}>${inner}</g>`);
  }
  return out;
}

/** A pixel coordinate as SVG text, to 0.1 px. */
export function px1(v: number): string {
  return String(Math.round(v * 10) / 10);
}

/**
 * The spec with every inline dataset (`data: { values }`) replaced by a named one, and the values by
 * name: the template is the same for every session's chart of one kind, so its compiled and parsed
 * form is reused and only the data change. The same array object gets one name (as Vega-Lite merges
 * equal inline datasets); empty ones share one.
 */
export function withNamedData(spec: unknown): { template: unknown; data: Map<string, unknown[]> } {
  const data = new Map<string, unknown[]>();
  const names = new Map<unknown[], string>();
  const nameOf = (values: unknown[]): string => {
    const key = values.length === 0 ? EMPTY : values;
    let n = names.get(key);
    if (n === undefined) {
      n = `hc_data_${names.size}`;
      names.set(key, n);
      data.set(n, values);
    }
    return n;
  };
  const walk = (v: unknown): unknown => {
    if (Array.isArray(v)) return v.map(walk);
    if (!v || typeof v !== 'object') return v;
    const out: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
      const values = k === 'data' && x && typeof x === 'object' && Array.isArray((x as { values?: unknown }).values) ? ((x as { values: unknown[] }).values) : null;
      out[k] = values && Object.keys(x as object).length === 1 ? { name: nameOf(values) } : walk(x);
    }
    return out;
  };
  return { template: walk(spec), data };
}

const EMPTY: unknown[] = [];

/** Tests and troubleshooting: false compiles every chart from its own spec with its data inline (the same SVG, slower). */
export const CHART_CACHE: { use: boolean } = { use: true };

/** Parsed Vega runtimes by template (one thread's charts of a few kinds; bounded, oldest dropped first). */
const RUNTIMES = new Map<string, ReturnType<typeof vega.parse>>();
const MAX_RUNTIMES = 64;

export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const s = spec as TopLevelSpec & { config?: Record<string, unknown> };
  const overlay = OVERLAYS.get(spec);
  const config = { ...(s.config ?? {}), legend: { ...LEGEND_CONFIG, ...((s.config?.legend as object | undefined) ?? {}) } };
  let view: vega.View;
  if (CHART_CACHE.use) {
    // the compiled and parsed chart reused across sessions: only its datasets change
    const { template, data } = withNamedData({ ...s, config });
    const key = JSON.stringify(template);
    let runtime = RUNTIMES.get(key);
    if (!runtime) {
      runtime = vega.parse(compile(template as TopLevelSpec).spec);
      if (RUNTIMES.size >= MAX_RUNTIMES) RUNTIMES.delete(RUNTIMES.keys().next().value!);
      RUNTIMES.set(key, runtime);
    }
    view = new vega.View(runtime, { renderer: 'none', loader: noLoader });
    for (const [name, values] of data) view.data(name, values);
  } else view = new vega.View(vega.parse(compile({ ...s, config } as TopLevelSpec).spec), { renderer: 'none', loader: noLoader });
  try {
    const svg = roundSvgGeometry(await view.toSVG());
    return overlay ? putOverlays(svg, overlay((name) => view.scale(name) as (v: number) => number)) : svg;
  } finally {
    view.finalize();
  }
}
