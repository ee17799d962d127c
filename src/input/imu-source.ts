/**
 * Sources of IMU samples for the IMU-aided session, which reads its samples several times (one pass
 * of the filter and smoother per round of the outlier review) and never opens a file itself:
 * - imuFileSource: a `<stem>.imu.csv` streamed on the first pass, its parsed samples recorded to a
 *   replay file (imu-replay.ts) that the later passes read instead of parsing the text again (or the
 *   CSV streamed again where no replay file can be made);
 * - imuArraySource: samples already in memory (t, fx, fy, fz, wx, wy, wz per sample), for library use.
 * A pass hands the samples from `fromSample` (0-based) on, in order, to the target.
 */
import type { HindcastConfig } from '../config/schema.js';
import type { InputWarning } from '../errors.js';
import { InputError } from '../errors.js';
import { streamImuCsv, type ImuSampleSink } from './imu-csv.js';
import { ImuReplay, ImuReplayWriter } from './imu-replay.js';

/** What a pass hands its samples to (the IMU filter). */
export interface ImuSampleTarget {
  addSample(tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number): void;
  /** The sample at src[o..o+7) (t, fx, fy, fz, wx, wy, wz). */
  addSampleAt(src: Float64Array, o: number): void;
}

export interface ImuPassStats {
  /** Whether the pass replayed recorded samples (no parsing). */
  replayed: boolean;
  /** The reader's warnings (the first pass that read the text; empty on a replay). */
  warnings: InputWarning[];
}

export interface ImuSampleSource {
  /** The name messages give (the file's name). */
  readonly name: string;
  /** One pass over the samples from `fromSample` on. */
  pass(target: ImuSampleTarget, fromSample: number): Promise<ImuPassStats>;
  /** Release what the source holds (its replay file); the source cannot be read after it. */
  close(): void;
}

/** Samples per value row of an in-memory source: t, fx, fy, fz, wx, wy, wz. */
export const IMU_SAMPLE_STRIDE = 7;

/**
 * The IMU log at `path` (shown as `displayName`, default its file name), read with the input
 * settings of `cfg` (columns, units, sensor-to-body rotation).
 */
export function imuFileSource(path: string, cfg: HindcastConfig, displayName = path.replace(/^.*[\\/]/, '')): ImuSampleSource {
  let replay: ImuReplay | undefined;
  // the reader's warnings, once the text has been read (a pass after that records no replay again)
  let warnings: InputWarning[] | undefined;
  let closed = false;
  return {
    name: displayName,
    async pass(target, fromSample) {
      if (closed) throw new Error(`IMU source ${displayName} used after close`);
      if (replay) {
        replay.replayAt(target, fromSample);
        return { replayed: true, warnings: [] };
      }
      let seen = 0;
      const sink: ImuSampleSink = (t, fx, fy, fz, wx, wy, wz) => {
        if (seen++ >= fromSample) target.addSample(t, fx, fy, fz, wx, wy, wz);
      };
      const rec = warnings === undefined ? ImuReplayWriter.tryCreate() : undefined;
      let read;
      try {
        read = await streamImuCsv(path, displayName, cfg, rec ? rec.tee(sink) : sink);
      } catch (e) {
        rec?.discard();
        throw e;
      }
      replay = rec?.finish();
      if (read.samples === 0) {
        replay?.close();
        replay = undefined;
        throw new InputError({ file: displayName }, 'no IMU samples');
      }
      const first = warnings === undefined;
      warnings = read.warnings;
      return { replayed: false, warnings: first ? read.warnings : [] };
    },
    close() {
      closed = true;
      replay?.close();
      replay = undefined;
    },
  };
}

/** Samples held in memory: `samples` holds IMU_SAMPLE_STRIDE values per sample, in time order. */
export function imuArraySource(name: string, samples: Float64Array): ImuSampleSource {
  if (samples.length % IMU_SAMPLE_STRIDE !== 0) throw new InputError({ file: name }, `IMU samples: ${samples.length} values is not a whole number of samples of ${IMU_SAMPLE_STRIDE}`);
  if (samples.length === 0) throw new InputError({ file: name }, 'no IMU samples');
  return {
    name,
    async pass(target, fromSample) {
      for (let o = fromSample * IMU_SAMPLE_STRIDE; o < samples.length; o += IMU_SAMPLE_STRIDE) target.addSampleAt(samples, o);
      return { replayed: true, warnings: [] };
    },
    close() {},
  };
}
