/**
 * The scenario family: many logs drawn from wide ranges of receivers, error habits, motion and file
 * conventions (the ranges: simulate/family-spec.ts), each with its truth, for judging a processor on
 * data it was not tuned to. Seeded and deterministic: the same base seed gives the same logs.
 *
 * A log = its spec, its truth (invented, simulate/family-motion.ts, or a recorded smartLoc drive,
 * simulate/recorded-truth.ts), its fixes with labels (simulate/family-errors.ts) and the written CSV
 * with the configuration a user would set (simulate/family-csv.ts).
 */
import { EnuFrame } from '../geodesy/ecef.js';
import { degradeFamily, type FamilyFix } from './family-errors.js';
import { writeFamilyCsv, type WrittenLog } from './family-csv.js';
import { familyTruth, truthWindow } from './family-motion.js';
import type { FamilyLogSpec } from './family-spec.js';
import { parsePoint3Truth } from './recorded-truth.js';
import { truthAt, type TruthTrack } from './truth.js';

export interface FamilyLog {
  spec: FamilyLogSpec;
  frame: EnuFrame;
  truth: TruthTrack;
  fixes: FamilyFix[];
  written: WrittenLog;
  /** Truth ENU (m, frame) at a UTC Unix time. */
  truthEnuAt(tSec: number): [number, number, number];
}

/**
 * Generate one log. `readDrive` returns the text of a smartLoc ground-truth file
 * (`<drive>_GT.txt`) for real-dynamics logs (the simulator does no I/O itself).
 */
export function generateFamilyLog(spec: FamilyLogSpec, readDrive?: (drive: string) => string): FamilyLog {
  let truth: TruthTrack;
  let origin = spec.origin;
  if (spec.kind === 'real') {
    if (!spec.drive || !readDrive) throw new Error(`${spec.id}: real-dynamics log needs its recorded drive`);
    const rec = parsePoint3Truth(readDrive(spec.drive), 0.05);
    truth = truthWindow(rec.truth, spec.driveStartSec ?? 0, spec.durationSec);
    origin = rec.origin;
    spec = { ...spec, origin, durationSec: Math.min(spec.durationSec, Math.floor(truth.durationSec)) };
  } else {
    truth = familyTruth(spec.kind, spec.seed, spec.durationSec);
  }
  const frame = new EnuFrame(...origin);
  const at = (tRel: number): [number, number, number] => {
    const o = [0, 0, 0];
    truthAt(truth, tRel, o);
    return [o[0]!, o[1]!, o[2]!];
  };
  const fixes = degradeFamily(spec, frame, at);
  const start = spec.startUnixSec;
  return { spec, frame, truth, fixes, written: writeFamilyCsv(spec, fixes), truthEnuAt: (t) => at(t - start) };
}
