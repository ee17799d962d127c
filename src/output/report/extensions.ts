/**
 * Extension point for optional plot groups in the report (IMU attitude and bias estimates, …),
 * keyed on optional fields of SessionResult.
 *
 * To add one: write `src/output/report/<name>-extension.ts` exporting a ReportExtension whose
 * `collect` reads the optional field(s) it needs from the SessionResult (returning undefined when
 * they are absent, so sessions without them show nothing extra) and picks the plotted epochs
 * `epochs` out of them; `charts` turns that data into Vega-Lite specs (see `seriesChart` in
 * chart-time.ts for lines over time). Then add it to REPORT_EXTENSIONS below with a static import:
 * the list must be the same in the batch's worker threads (which run `collect` through
 * reportPayload) and in the thread that writes the report (which runs `charts`), so it is never
 * changed at run time.
 */
import type { SessionResult } from '../../session/result/result.js';
import { IMU_EXTENSION } from './imu-extension.js';
import type { ExtensionData, ReportExtension } from './types.js';

export type { ExtensionChart, ExtensionData, ReportExtension } from './types.js';

/** The registered extensions, in the order their groups appear. */
export const REPORT_EXTENSIONS: readonly ReportExtension[] = [IMU_EXTENSION];

export function collectExtensions(r: SessionResult, epochs: Int32Array, list: readonly ReportExtension[] = REPORT_EXTENSIONS): Record<string, ExtensionData> {
  const out: Record<string, ExtensionData> = {};
  for (const x of list) {
    const d = x.collect(r, epochs);
    if (d !== undefined) out[x.id] = d;
  }
  return out;
}
