/** Park–Miller minimal standard generator (seeded; Park & Miller 1988, CACM 31(10), multiplier 48271): uniform on (0, 1). */
export function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

/** Standard normal variates from the generator above (Box & Muller 1958, one of each pair), seeded. */
export function gaussian(seed: number): () => number {
  const r = rng(seed);
  return () => Math.sqrt(-2 * Math.log(r() || 1e-12)) * Math.cos(2 * Math.PI * r());
}
