/**
 * Machine floors: what this machine charges for the parts of a run that no code of
 * Hindcast's can make cheaper — memory touched for the first time (a page fault per 4 KiB page, the
 * kernel zeroing it), reading and decoding the input's bytes, writing the outputs' bytes into new
 * files — and, priced with them, how much of the 1M-fix run's time (bench/pipeline.ts, its row in
 * bench/results.json) these alone account for, against the 5 s that 200,000 fixes/s allows.
 * No target of its own: it explains the pipeline part's figures. Each measurement is the fastest
 * of REPEAT; it runs in a child process so the fresh memory is fresh.
 * Run alone: `npm run build && node dist/bench/floors.js`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { BenchPart } from './part.js';
import { mergeResults, resultsPath } from './results.js';

const REPEAT = 3;
/** Fresh memory per measurement: 16 arrays of 8 MiB (the size of one per-epoch array at 1M epochs). */
const FRESH_ARRAYS = 16;
const ARRAY_MB = 8;
/** Sizes used when bench/results.json has no 1M row yet: the 1M log (B) and its outputs (B). */
const DEFAULT_IN = 66_020_014;
const DEFAULT_OUT = 168_667_474;
const TARGET_SEC_1M = 1_000_000 / 200_000;

export interface Floors {
  /** First touch of fresh memory, ms per MiB (filling new 8 MiB Float64Arrays). */
  freshMsPerMB: number;
  /** Rewriting memory already touched, ms per MiB (the same fill). */
  touchedMsPerMB: number;
  /** Minor page faults per MiB of fresh memory (256 where each 4 KiB page faults once). */
  faultsPerMB: number;
  /** Reading `inBytes` from a file just written (page cache) into a Buffer, and decoding it to a string (s). */
  readSec: number;
  decodeSec: number;
  inBytes: number;
  /** Writing `outBytes` (from memory already touched) into a new file (s). */
  writeSec: number;
  outBytes: number;
}

function best(f: () => number): number {
  let m = Infinity;
  for (let i = 0; i < REPEAT; i++) m = Math.min(m, f());
  return m;
}
/**
 * Child: measure the floors for an input of inBytes and outputs of outBytes. Each measurement keeps
 * what it made (see below), so this child holds ~1.2 GB at its peak.
 */
function measure(inBytes: number, outBytes: number): Floors {
  let sink = 0;
  const keep: Float64Array[] = [];
  let faults = 0;
  // every array stays alive to the end, so each repetition gets memory the process never had
  const freshMs = best(() => {
    const f0 = process.resourceUsage().minorPageFault;
    const t0 = performance.now();
    for (let i = 0; i < FRESH_ARRAYS; i++) {
      const a = new Float64Array((ARRAY_MB << 20) / 8);
      a.fill(1);
      keep.push(a);
    }
    const ms = performance.now() - t0;
    faults = process.resourceUsage().minorPageFault - f0;
    sink += keep[keep.length - 1]![7]!;
    return ms;
  });
  const one = keep[0]!;
  const touchedMs = best(() => {
    const t0 = performance.now();
    for (let i = 0; i < FRESH_ARRAYS; i++) one.fill(i);
    sink += one[3]!;
    return performance.now() - t0;
  });
  keep.length = 0;
  const dir = mkdtempSync(join(tmpdir(), 'hindcast-floors-'));
  try {
    // CSV-like bytes (digits, commas, newlines) of the input's size
    const line = Buffer.from('1700000000.100,52.4571863812,13.4816357130,34.512,0.9,11\n', 'latin1');
    const input = Buffer.allocUnsafe(inBytes);
    for (let o = 0; o < inBytes; o += line.length) line.copy(input, o, 0, Math.min(line.length, inBytes - o));
    const inPath = join(dir, 'in.csv');
    writeFileSync(inPath, input);
    // buffers, strings and files all kept to the end: a repetition that reused the memory or the
    // page-cache pages of the one before would measure memory already touched, not the run's cost
    const bufs: Buffer[] = [];
    const texts: string[] = [];
    const readSec = best(() => {
      const t0 = performance.now();
      bufs.push(readFileSync(inPath));
      return (performance.now() - t0) / 1000;
    });
    const decodeSec = best(() => {
      const t0 = performance.now();
      texts.push(bufs[texts.length]!.toString('latin1'));
      return (performance.now() - t0) / 1000;
    });
    for (const t of texts) sink += t.length;
    const output = Buffer.alloc(outBytes, 0x30);
    let n = 0;
    const writeSec = best(() => {
      const t0 = performance.now();
      writeFileSync(join(dir, `out${n++}.csv`), output);
      return (performance.now() - t0) / 1000;
    });
    if (!Number.isFinite(sink)) throw new Error('floors check');
    const mb = FRESH_ARRAYS * ARRAY_MB;
    return { freshMsPerMB: freshMs / mb, touchedMsPerMB: touchedMs / mb, faultsPerMB: faults / mb, readSec, decodeSec, inBytes, writeSec, outBytes };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

interface Row1M {
  fixes: number;
  bytes?: number;
  outputBytes?: number;
  minorFaults?: number;
  peakRssMB: number;
  totalSec: number;
}

/** The 1M row of bench/results.json (written by the pipeline part), if there is one. */
function row1M(): Row1M | undefined {
  const p = resultsPath();
  if (!existsSync(p)) return undefined;
  try {
    const rows = (JSON.parse(readFileSync(p, 'utf8')) as { rows?: Row1M[] }).rows ?? [];
    return rows.find((r) => r.fixes >= 1_000_000);
  } catch {
    return undefined;
  }
}

export function floorLines(fl: Floors, r: Row1M | undefined): string[] {
  const mb = (b: number) => b / 1048576;
  const f = (v: number, d = 2) => v.toFixed(d);
  const lines = [
    `fresh memory: ${f(fl.freshMsPerMB)} ms per MiB at first touch (${f(fl.faultsPerMB, 0)} page faults per MiB), ${f(fl.touchedMsPerMB, 3)} ms per MiB rewritten`,
    `reading ${f(mb(fl.inBytes), 0)} MiB from the page cache: ${f(fl.readSec)} s; decoding it to a string: ${f(fl.decodeSec)} s`,
    `writing ${f(mb(fl.outBytes), 0)} MiB into a new file: ${f(fl.writeSec)} s`,
  ];
  if (r && r.minorFaults !== undefined) {
    const faultSec = (r.minorFaults / fl.faultsPerMB) * fl.freshMsPerMB / 1000;
    const floor = faultSec + fl.readSec + fl.decodeSec + fl.writeSec;
    lines.push(
      `1M-fix run (${f(r.totalSec)} s, peak RSS ${Math.round(r.peakRssMB)} MB): ${Math.round(r.minorFaults / 1000)}k page faults ≈ ${f(faultSec)} s at that price (its peak alone ≈ ${f((r.peakRssMB * fl.freshMsPerMB) / 1000)} s)`,
      `  with reading, decoding and writing its bytes: ${f(floor)} s of the ${f(TARGET_SEC_1M, 1)} s that 200,000 fixes/s allows (${Math.round((100 * floor) / TARGET_SEC_1M)}%), before any computation`,
    );
  } else lines.push('(no 1M row in bench/results.json: run the pipeline part first to price its run)');
  return lines;
}

export const floorsBench: BenchPart = {
  name: 'machine floors: fresh memory, reading and writing bytes (no target; prices the 1M run)',
  async run() {
    const r = row1M();
    const inBytes = r?.bytes || DEFAULT_IN;
    const outBytes = r?.outputBytes || DEFAULT_OUT;
    const res = spawnSync(process.execPath, [fileURLToPath(import.meta.url), '--measure', String(inBytes), String(outBytes)], { encoding: 'utf8' });
    if (res.status !== 0) throw new Error(`floors child failed (${res.status}): ${res.stderr}`);
    const fl = JSON.parse(res.stdout.trim().split('\n').pop()!) as Floors;
    mergeResults({ floors: fl });
    return { ok: null, lines: floorLines(fl, r) };
  },
};

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  if (process.argv[2] === '--measure') process.stdout.write(JSON.stringify(measure(Number(process.argv[3]), Number(process.argv[4]))) + '\n');
  else
    void floorsBench.run().then((r) => {
      for (const l of r.lines) process.stdout.write(`${l}\n`);
    });
}
