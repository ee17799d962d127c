/**
 * The specification of one log of the scenario family (simulate/family.ts) and its seeded draw.
 *
 * The family varies the habits of the data, not only their sizes, so that a processor tuned to one
 * simulator's assumptions is caught out. Every log is drawn from a seed; the ranges (all uniform
 * unless said otherwise):
 *
 * | quantity | range |
 * |---|---|
 * | receiver grade | survey, mapping, consumer, phone (per kind, below) |
 * | white noise, horizontal 1σ per axis | survey 0.3–0.6 m, mapping 0.5–1.2 m, consumer 0.8–2.2 m, phone 1.5–3 m |
 * | white noise, vertical | horizontal × 1.2–2.5 |
 * | white-noise tails | normal (55%), Student t with ν 3–6 (integer) scaled to the same sd (25%), contaminated normal: 2–5% of fixes × 3–5 (20%) |
 * | correlated error, horizontal 1σ | survey 0.3–0.6 m, mapping 0.4–1.5 m, consumer 0.8–3 m, phone 1.5–5 m |
 * | correlated error, vertical 1σ | horizontal × 1–2.5 (at most 8 m) |
 * | correlated time constant | 10–300 s (log-uniform), vertical drawn on its own (× 0.3–3 of horizontal, kept in 10–300 s) |
 * | correlated error shape | first-order Gauss–Markov (40%); sum of a short (10–40 s) and a long (100–300 s) one (30%); first-order plus a slowly drifting bias (integrated, 0.3–1.5 m over ten minutes) (30%) |
 * | fix-mode steps | 0–3 per log (half the logs none): the correlated error steps by N(0, 0.5–2 m) per axis and stays |
 * | quality columns (HDOP, satellites) | informative: error ∝ HDOP^α, α 0.6–1.2 (40%); weak: HDOP varies but error ∝ HDOP^α, α 0–0.25, times an unwritten factor (35%); absent: not written, an unwritten factor varies the error (25%) |
 * | HDOP | slowly varying (log random walk, time constant 60–600 s), 0.6–5 |
 * | multipath bursts | 0.2–1 a minute; jumps (0.3–2 s, at least one fix, at a constant offset) or ramps (20–50%: the offset grows over 2–8 s, holds 0–2 s, then drops or fades over 2–5 s); at least 15 m and 6–20 × the fix's total 1σ |
 * | gaps | 0–2 outages of 5–40 s, sometimes one of 70–120 s (a new segment) |
 * | invalid rows | 0–3 rows at (0, 0) and 0–2 rows with an empty position |
 * | time written as | ISO with Z, ISO with an offset, local time without an offset (input.timeZone configured), Unix s, Unix ms |
 *
 * Kinds: walking survey legs with corners and static occupations (1–20 Hz), delivery van (10 Hz,
 * parked start, 20–70 s stops after ~4 s decelerations), urban stop-and-go (1–5 Hz), survey-line
 * drone (5 Hz), tight circling walker (radius 2–5 m for minutes, 1 Hz), degraded deep urban
 * (1 Hz, slowly varying biases of 15–35 m, white 3–8 m, many bad fixes), and real dynamics (the
 * smartLoc ground-truth drives, CC BY-SA 4.0, test/fixtures/smartloc, with simulated receiver errors).
 * Logs are 8–20 minutes, 10–20 Hz ones 5–8 minutes.
 *
 * An IMU block can be added as `imu?: …` on FamilyLogSpec; today no IMU log is written.
 */
import { Rng } from './rng.js';

export type FamilyKind = 'walk' | 'van' | 'urban' | 'drone' | 'circle' | 'degraded' | 'real';
export const FAMILY_KINDS: FamilyKind[] = ['walk', 'van', 'urban', 'drone', 'circle', 'degraded', 'real'];

export type ReceiverGrade = 'survey' | 'mapping' | 'consumer' | 'phone' | 'deep-urban';

export type WhiteTail = { kind: 'normal' } | { kind: 'student'; nu: number } | { kind: 'contaminated'; share: number; scale: number };

/** One axis group's (horizontal or vertical) time-correlated error. */
export interface CorrelatedSpec {
  /** Gauss–Markov components, summed: 1σ (m) and time constant (s). */
  components: Array<{ sigmaM: number; tauSec: number }>;
  /** Drifting bias: 1σ of its change over ten minutes (m); 0 for none. */
  drift10MinM: number;
}

export type QualityMode = 'informative' | 'weak' | 'absent';

export interface QualitySpec {
  mode: QualityMode;
  /** Exponent of HDOP in the error's scale. */
  alpha: number;
  /** Log-sd of the unwritten factor on the error (weak, absent). */
  hiddenLogSd: number;
  /** Time constant of HDOP's and the hidden factor's variation (s). */
  tauSec: number;
}

export interface BurstSpec {
  perMinute: number;
  /** Share of bursts that are ramps. */
  rampShare: number;
  /** Magnitude range as multiples of the fix's total 1σ (at least minM). */
  minSigmas: number;
  maxSigmas: number;
  minM: number;
}

export type TimeFormat = 'iso-z' | 'iso-offset' | 'local' | 'unix-s' | 'unix-ms';

export interface FamilyLogSpec {
  /** Name of the log, e.g. "walk-03". */
  id: string;
  kind: FamilyKind;
  seed: number;
  durationSec: number;
  rateHz: number;
  /** Geodetic origin of the truth frame (invented site; for real dynamics the drive's first point). */
  origin: [number, number, number];
  startUnixSec: number;
  /** For kind "real": the smartLoc drive (file stem) and the start (s) of the window used. */
  drive?: string;
  driveStartSec?: number;
  receiver: {
    grade: ReceiverGrade;
    whiteHM: number;
    whiteVM: number;
    tail: WhiteTail;
    correlatedH: CorrelatedSpec;
    correlatedV: CorrelatedSpec;
    /** Times (s from start) of fix-mode changes and the 1σ of the step (m). */
    modeSteps: number[];
    stepSigmaM: number;
  };
  quality: QualitySpec;
  bursts: BurstSpec;
  /** Outages: [start (s), length (s)]. */
  gaps: Array<[number, number]>;
  zeroRows: number;
  emptyRows: number;
  time: { format: TimeFormat; /** IANA zone (local) or fixed offset in minutes (iso-offset). */ zone?: string; offsetMin?: number };
  /** Header spelling variant (the reader's built-in aliases). */
  header: number;
}

/** Real-dynamics drives in test/fixtures/smartloc and their durations (s). */
export const SMARTLOC_DRIVES: Array<[string, number]> = [
  ['Berlin_Potsdamer_Platz', 282],
  ['Berlin_Gendarmenmarkt', 1192],
  ['Frankfurt_Westend_Tower', 714],
  ['Frankfurt_Main_Tower', 1169],
];

/** Invented sites with their IANA zones (summer offsets avoided near changes: dates May–September). */
const SITES: Array<{ origin: [number, number, number]; zone: string }> = [
  { origin: [47.3769, 8.5417, 420], zone: 'Europe/Zurich' },
  { origin: [52.52, 13.405, 40], zone: 'Europe/Berlin' },
  { origin: [-33.87, 151.21, 30], zone: 'Australia/Sydney' },
  { origin: [40.71, -74.0, 20], zone: 'America/New_York' },
  { origin: [35.68, 139.69, 45], zone: 'Asia/Tokyo' },
  { origin: [64.14, -21.94, 60], zone: 'Atlantic/Reykjavik' },
  { origin: [-23.55, -46.63, 760], zone: 'America/Sao_Paulo' },
  { origin: [19.43, -99.13, 2240], zone: 'America/Mexico_City' },
];

const logUniform = (rng: Rng, a: number, b: number) => Math.exp(rng.uniform(Math.log(a), Math.log(b)));
const pick = <T>(rng: Rng, xs: readonly T[]): T => xs[Math.min(xs.length - 1, Math.floor(rng.next() * xs.length))]!;

const GRADES: Record<Exclude<ReceiverGrade, 'deep-urban'>, { white: [number, number]; corr: [number, number] }> = {
  survey: { white: [0.3, 0.6], corr: [0.3, 0.6] },
  mapping: { white: [0.5, 1.2], corr: [0.4, 1.5] },
  consumer: { white: [0.8, 2.2], corr: [0.8, 3] },
  phone: { white: [1.5, 3], corr: [1.5, 5] },
};

const KIND_GRADES: Record<FamilyKind, ReceiverGrade[]> = {
  walk: ['survey', 'mapping', 'consumer', 'phone'],
  van: ['mapping', 'consumer'],
  urban: ['consumer', 'phone', 'mapping'],
  drone: ['survey', 'mapping', 'consumer'],
  circle: ['consumer', 'phone'],
  degraded: ['deep-urban'],
  real: ['mapping', 'consumer', 'phone'],
};

function drawCorrelated(rng: Rng, sigmaM: number, tauSec: number): CorrelatedSpec {
  const u = rng.next();
  if (u < 0.4) return { components: [{ sigmaM, tauSec }], drift10MinM: 0 };
  if (u < 0.7) {
    // the variance split between a short and a long process
    const w = rng.uniform(0.3, 0.7);
    return {
      components: [
        { sigmaM: sigmaM * Math.sqrt(w), tauSec: logUniform(rng, 10, 40) },
        { sigmaM: sigmaM * Math.sqrt(1 - w), tauSec: logUniform(rng, 100, 300) },
      ],
      drift10MinM: 0,
    };
  }
  return { components: [{ sigmaM, tauSec }], drift10MinM: rng.uniform(0.3, 1.5) };
}

function drawTime(rng: Rng, zone: string): FamilyLogSpec['time'] {
  const f = pick(rng, ['iso-z', 'iso-offset', 'local', 'unix-s', 'unix-ms'] as const);
  if (f === 'local') return { format: f, zone };
  if (f === 'iso-offset') return { format: f, offsetMin: pick(rng, [-300, -180, 60, 120, 330, 540, 600]) };
  return { format: f };
}

/**
 * Draw one log of a kind from its seed (see the table in the file header). The draws come from one
 * stream in a fixed order (site, rate, span, noise levels, tail, steps, quality, bursts, gaps,
 * start, correlated errors, step size, invalid rows, time format, header): the order is part of
 * the family's definition.
 */
export function drawLogSpec(kind: FamilyKind, index: number, seed: number): FamilyLogSpec {
  const rng = new Rng(seed);
  const site = pick(rng, SITES);
  const rateHz = drawRateHz(rng, kind);
  const { durationSec, drive, driveStartSec } = drawSpan(rng, kind, index, rateHz);
  const lv = drawNoiseLevels(rng, kind);
  const tail = drawTail(rng);
  const nSteps = rng.next() < 0.5 ? 0 : rng.int(1, 3);
  const modeSteps = Array.from({ length: nSteps }, () => rng.uniform(0.1, 0.9) * durationSec).sort((a, b) => a - b);
  const quality = drawQuality(rng);
  const degraded = kind === 'degraded';
  const bursts: BurstSpec = degraded
    ? { perMinute: rng.uniform(3, 6), rampShare: 0.4, minSigmas: 4, maxSigmas: 10, minM: 60 }
    : { perMinute: rng.uniform(0.2, 1), rampShare: rng.uniform(0.2, 0.5), minSigmas: 6, maxSigmas: 20, minM: 15 };
  const gaps = drawGaps(rng, durationSec);
  const start = Date.UTC(2026, 4 + rng.int(0, 4), rng.int(1, 28), rng.int(6, 17), rng.int(0, 59), 0) / 1000;
  return {
    id: `${kind}-${String(index + 1).padStart(2, '0')}`,
    kind,
    seed,
    durationSec,
    rateHz,
    origin: site.origin,
    startUnixSec: start,
    ...(drive !== undefined ? { drive, driveStartSec } : {}),
    receiver: {
      grade: lv.grade,
      whiteHM: lv.whiteHM,
      whiteVM: lv.whiteVM,
      tail,
      correlatedH: drawCorrelated(rng, lv.corrHM, lv.tauH),
      correlatedV: drawCorrelated(rng, lv.corrVM, lv.tauV),
      modeSteps,
      stepSigmaM: rng.uniform(0.5, 2) * (degraded ? 5 : 1),
    },
    quality,
    bursts,
    gaps,
    zeroRows: rng.int(0, 3),
    emptyRows: rng.int(0, 2),
    time: drawTime(rng, site.zone),
    header: rng.int(0, 3),
  };
}

function drawRateHz(rng: Rng, kind: FamilyKind): number {
  switch (kind) {
    case 'walk': return pick(rng, [1, 1, 2, 5, 10, 20]);
    case 'van': return 10;
    case 'urban': return pick(rng, [1, 1, 2, 5]);
    case 'drone': return 5;
    case 'circle': return 1;
    case 'degraded': return 1;
    case 'real': return pick(rng, [1, 2]);
  }
}

/** The log's length (s, whole), and for a real drive its name and the start within it. */
function drawSpan(rng: Rng, kind: FamilyKind, index: number, rateHz: number): { durationSec: number; drive?: string; driveStartSec?: number } {
  let durationSec = rateHz >= 10 ? rng.uniform(300, 480) : rng.uniform(480, 1200);
  let drive: string | undefined;
  let driveStartSec: number | undefined;
  if (kind === 'real') {
    const [name, len] = SMARTLOC_DRIVES[index % SMARTLOC_DRIVES.length]!;
    drive = name;
    durationSec = Math.min(len - 2, rng.uniform(480, 1200));
    driveStartSec = rng.uniform(0, Math.max(0, len - 2 - durationSec));
  }
  return { durationSec: Math.round(durationSec), drive, driveStartSec };
}

/** The receiver grade and its white and correlated error levels (m) and time constants (s). */
function drawNoiseLevels(rng: Rng, kind: FamilyKind) {
  const grade = pick(rng, KIND_GRADES[kind]);
  let whiteHM: number, corrHM: number;
  if (grade === 'deep-urban') {
    whiteHM = rng.uniform(3, 8);
    corrHM = rng.uniform(15, 35);
  } else {
    whiteHM = rng.uniform(...GRADES[grade].white);
    corrHM = rng.uniform(...GRADES[grade].corr);
  }
  const whiteVM = whiteHM * rng.uniform(1.2, 2.5);
  const corrVM = Math.min(grade === 'deep-urban' ? 50 : 8, corrHM * rng.uniform(1, 2.5));
  const tauH = grade === 'deep-urban' ? logUniform(rng, 60, 300) : logUniform(rng, 10, 300);
  const tauV = Math.min(300, Math.max(10, tauH * logUniform(rng, 0.3, 3)));
  return { grade, whiteHM, corrHM, whiteVM, corrVM, tauH, tauV };
}

function drawTail(rng: Rng): WhiteTail {
  const tu = rng.next();
  return tu < 0.55 ? { kind: 'normal' } : tu < 0.8 ? { kind: 'student', nu: rng.int(3, 6) } : { kind: 'contaminated', share: rng.uniform(0.02, 0.05), scale: rng.uniform(3, 5) };
}

function drawQuality(rng: Rng): QualitySpec {
  const qu = rng.next();
  const mode: QualityMode = qu < 0.4 ? 'informative' : qu < 0.75 ? 'weak' : 'absent';
  return {
    mode,
    alpha: mode === 'informative' ? rng.uniform(0.6, 1.2) : mode === 'weak' ? rng.uniform(0, 0.25) : 0,
    hiddenLogSd: mode === 'informative' ? 0 : rng.uniform(0.1, 0.35),
    tauSec: logUniform(rng, 60, 600),
  };
}

/** Outages [start (s), length (s)] in time order: up to two short ones, sometimes a long one. */
function drawGaps(rng: Rng, durationSec: number): Array<[number, number]> {
  const gaps: Array<[number, number]> = [];
  const nGaps = rng.int(0, 2);
  for (let g = 0; g < nGaps; g++) gaps.push([rng.uniform(0.15, 0.85) * durationSec, rng.uniform(5, 40)]);
  if (rng.next() < 0.15) gaps.push([rng.uniform(0.3, 0.7) * durationSec, rng.uniform(70, 120)]);
  gaps.sort((a, b) => a[0] - b[0]);
  return gaps;
}

/** Logs per kind in the standard family (64 logs). */
export const FAMILY_COUNTS: Record<FamilyKind, number> = { walk: 10, van: 8, urban: 9, drone: 9, circle: 8, degraded: 8, real: 12 };

/** The family's log specifications for a base seed (deterministic; another base seed gives new logs). */
export function familySpecs(baseSeed = 1, counts: Partial<Record<FamilyKind, number>> = FAMILY_COUNTS): FamilyLogSpec[] {
  const out: FamilyLogSpec[] = [];
  FAMILY_KINDS.forEach((kind, ki) => {
    const n = counts[kind] ?? 0;
    for (let i = 0; i < n; i++) {
      // a distinct 32-bit seed per (base, kind, index) (Knuth's multiplicative hash, common practice)
      const seed = (Math.imul(baseSeed, 2654435761) ^ Math.imul(ki * 1000 + i + 1, 40503)) >>> 0;
      out.push(drawLogSpec(kind, i, seed));
    }
  });
  return out;
}

/** Habits that can be switched off for a diagnosis (familyVariant). */
export const FAMILY_HABITS = ['bursts', 'tails', 'steps', 'drift', 'quality', 'gaps', 'invalid'] as const;
export type FamilyHabit = (typeof FAMILY_HABITS)[number];

/**
 * A log without some of its habits, the rest of its specification unchanged (the noise itself is
 * drawn anew from the same seed, so it differs fix by fix):
 * bursts (none), tails (normal white noise), steps (no fix-mode steps), drift (no drifting bias),
 * quality (HDOP informative with α = 1 and no unwritten factor), gaps (no outages), invalid (no
 * invalid rows). For telling which habit a shortfall comes from; the acceptance uses the full logs.
 */
export function familyVariant(spec: FamilyLogSpec, without: readonly FamilyHabit[]): FamilyLogSpec {
  const s: FamilyLogSpec = structuredClone(spec);
  for (const h of without) {
    if (h === 'bursts') s.bursts.perMinute = 0;
    if (h === 'tails') s.receiver.tail = { kind: 'normal' };
    if (h === 'steps') s.receiver.modeSteps = [];
    if (h === 'drift') s.receiver.correlatedH.drift10MinM = s.receiver.correlatedV.drift10MinM = 0;
    if (h === 'quality') s.quality = { ...s.quality, mode: 'informative', alpha: 1, hiddenLogSd: 0 };
    if (h === 'gaps') s.gaps = [];
    if (h === 'invalid') s.zeroRows = s.emptyRows = 0;
  }
  return s;
}
