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

export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const vg = compile(spec).spec;
  const view = new vega.View(vega.parse(vg), { renderer: 'none', loader: noLoader });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}
