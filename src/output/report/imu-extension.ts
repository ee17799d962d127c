/**
 * Report extension for IMU-aided sessions (SessionResult.attitudeDeg, attitudeSdDeg,
 * biasEstimates): roll and pitch, heading, their 1-sigma, and the smoothed accelerometer and
 * gyroscope biases over time. Sessions without these fields get no extra plots.
 */
import type { SessionResult } from '../../session/result/result.js';
import { seriesChart } from './chart-time.js';
import type { ExtensionChart, ExtensionData, PlotSeries, ReportExtension } from './types.js';

const RADPS_TO_DEGPH = (180 / Math.PI) * 3600;

function pick(src: Float64Array | undefined, epochs: Int32Array, scale = 1): Float32Array | null {
  if (!src) return null;
  return Float32Array.from(epochs, (j) => src[j]! * scale);
}

function f(d: ExtensionData, k: string): Float32Array {
  const v = d[k];
  return v instanceof Float32Array ? v : new Float32Array(0);
}

export const IMU_EXTENSION: ReportExtension = {
  id: 'imu',
  title: 'IMU: attitude and sensor biases',
  collect(r: SessionResult, epochs: Int32Array): ExtensionData | undefined {
    const a = r.attitudeDeg;
    if (!a) return undefined;
    const sd = r.attitudeSdDeg;
    const b = r.biasEstimates;
    const d: ExtensionData = {
      rollDeg: pick(a.roll, epochs),
      pitchDeg: pick(a.pitch, epochs),
      headingDeg: pick(a.heading, epochs),
      rollSdDeg: pick(sd?.roll, epochs),
      pitchSdDeg: pick(sd?.pitch, epochs),
      headingSdDeg: pick(sd?.heading, epochs),
      hasBias: !!b,
    };
    if (b)
      for (let i = 0; i < 3; i++) {
        const ax = 'xyz'[i]!;
        d[`accel${ax}Mps2`] = pick(b.accelMps2[i], epochs);
        d[`gyro${ax}Degph`] = pick(b.gyroRadps[i], epochs, RADPS_TO_DEGPH);
      }
    return d;
  },
  charts(d: ExtensionData, plot: PlotSeries, spans: Array<[number, number]>): ExtensionChart[] {
    const out: ExtensionChart[] = [
      {
        title: 'Roll and pitch over time',
        caption: 'Smoothed roll and pitch of the body (x forward, y left, z up), degrees.',
        spec: seriesChart(plot, [{ name: 'roll', values: f(d, 'rollDeg') }, { name: 'pitch', values: f(d, 'pitchDeg') }], spans, { description: 'Roll and pitch', yTitle: 'angle (deg)' }),
      },
      {
        title: 'Heading over time',
        caption: 'Smoothed heading clockwise from grid north, degrees (the line breaks where it wraps through north).',
        spec: seriesChart(plot, [{ name: 'heading', values: f(d, 'headingDeg') }], spans, { description: 'Heading', yTitle: 'heading (deg)', yScale: { domain: [0, 360] }, breakJump: 180 }),
      },
    ];
    if (f(d, 'rollSdDeg').length)
      out.push({
        title: 'Attitude standard deviation over time',
        caption: '1-sigma of the smoothed roll, pitch and heading, degrees.',
        spec: seriesChart(plot, [{ name: 'roll sd', values: f(d, 'rollSdDeg') }, { name: 'pitch sd', values: f(d, 'pitchSdDeg') }, { name: 'heading sd', values: f(d, 'headingSdDeg') }], spans, { description: 'Attitude sd', yTitle: 'sd (deg)' }),
      });
    if (d.hasBias) {
      out.push({
        title: 'Accelerometer bias over time',
        caption: 'Smoothed accelerometer bias per body axis, m/s².',
        spec: seriesChart(plot, ['x', 'y', 'z'].map((ax) => ({ name: `accel ${ax}`, values: f(d, `accel${ax}Mps2`) })), spans, { description: 'Accelerometer bias', yTitle: 'bias (m/s²)' }),
      });
      out.push({
        title: 'Gyroscope bias over time',
        caption: 'Smoothed gyroscope bias per body axis, degrees per hour.',
        spec: seriesChart(plot, ['x', 'y', 'z'].map((ax) => ({ name: `gyro ${ax}`, values: f(d, `gyro${ax}Degph`) })), spans, { description: 'Gyroscope bias', yTitle: 'bias (deg/h)' }),
      });
    }
    return out;
  },
};
