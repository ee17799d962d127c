/** Park–Miller minimal standard generator (seeded; Park & Miller 1988, CACM 31(10), multiplier 48271): uniform on (0, 1). */
export function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}
