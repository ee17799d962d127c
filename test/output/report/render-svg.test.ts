/**
 * The report's charts drawn from a cached template (output/report/render-svg.ts: the spec's inline
 * datasets replaced by named ones, the compiled and parsed chart reused across sessions, each
 * session's data set by name) against each chart compiled and drawn from its own spec with its data
 * inline (CHART_CACHE.use false: as Vega-Lite and Vega draw it without the cache): the same SVG
 * text (clip-path ids aside, which Vega numbers over the process), overlays included, for every
 * chart of sessions with and without heights, drawn one after another (the later ones from the
 * cache).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { reportPayload } from '../../../src/output/report/payload.js';
import { sessionCharts } from '../../../src/output/report/session-section.js';
import { CHART_CACHE, renderSvg, withNamedData } from '../../../src/output/report/render-svg.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';

/** The SVG with its clip-path ids numbered in order of appearance (Vega counts them over the whole process). */
function clipIds(svg: string): string {
  const ids = new Map<string, number>();
  return svg.replace(/clip\d+/g, (m) => {
    if (!ids.has(m)) ids.set(m, ids.size);
    return `clip#${ids.get(m)}`;
  });
}

afterEach(() => {
  CHART_CACHE.use = true;
});

describe('charts from a cached template', () => {
  const cfg = loadConfig();
  const logs = [
    ['vehicle', scenarioCsv(simulate(defaultSpec('vehicle', 2, { durationSec: 600 })))],
    ['walk', scenarioCsv(simulate(defaultSpec('walk', 4, { durationSec: 600 })))],
    ['no heights', scenarioCsv(simulate(defaultSpec('vehicle', 3, { durationSec: 600 }))).split('\n').map((l) => l.split(',').filter((_, i) => i !== 3).join(',')).join('\n')],
  ] as const;
  it('every chart of three sessions: the same SVG as drawn from its own spec', async () => {
    let charts = 0;
    for (const [name, csv] of logs) {
      const r = processSession(readFixCsv(csv, `${name}.csv`, cfg), cfg, name);
      // each drawn from specs of its own (drawing writes into the data's rows)
      const p = reportPayload(r, { maxPoints: 500 });
      const cached = sessionCharts(p), inline = sessionCharts(p);
      for (let i = 0; i < cached.length; i++) {
        const a = await renderSvg(cached[i]!.spec);
        CHART_CACHE.use = false;
        const b = await renderSvg(inline[i]!.spec);
        CHART_CACHE.use = true;
        if (clipIds(a) !== clipIds(b)) expect.fail(`${name}: ${cached[i]!.title} differs`);
        charts++;
      }
    }
    expect(charts).toBeGreaterThanOrEqual(15);
  });

  it('names each inline dataset once (the same array one name, empty ones one name) and leaves the rest of the spec as it was', () => {
    const rows = [{ a: 1 }];
    const spec = { layer: [{ data: { values: rows }, mark: 'line' }, { data: { values: rows }, mark: 'point' }, { data: { values: [] } }, { data: { values: [] } }, { data: { url: 'x' } }], title: 't' };
    const { template, data } = withNamedData(spec);
    const layers = (template as { layer: Array<{ data: unknown }> }).layer;
    expect(layers.map((l) => l.data)).toEqual([{ name: 'hc_data_0' }, { name: 'hc_data_0' }, { name: 'hc_data_1' }, { name: 'hc_data_1' }, { url: 'x' }]);
    expect([...data.keys()]).toEqual(['hc_data_0', 'hc_data_1']);
    expect(data.get('hc_data_0')).toBe(rows);
    expect((template as { title: string }).title).toBe('t');
  });
});
