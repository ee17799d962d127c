/** The shape of one part of `npm run bench` (see bench/run.ts). */
export interface BenchResult {
  /** Lines to print (figures and the target). */
  lines: string[];
  /** The part's target was met; null for a part without a target (figures that explain the others). */
  ok: boolean | null;
}

export interface BenchPart {
  name: string;
  run(): Promise<BenchResult>;
}
