/** Seeded test matrices of the 18-state error model, shared by the RTS and kernel tests. */
import { NE } from '../../src/estimation/ins/error-model.js';
import type { Rng } from '../../src/simulate/rng.js';

const n = NE;

/** A random SPD matrix A Aᵀ + εI with entries of mixed scales (like P: metres to micro-radians), scale per row and column. */
export function spd(rng: Rng, scale: ArrayLike<number>): Float64Array {
  const A = new Float64Array(n * n).map(() => rng.normal());
  const P = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = i === j ? 0.1 : 0;
      for (let k = 0; k < n; k++) s += A[i * n + k]! * A[j * n + k]!;
      P[i * n + j] = s * scale[i]! * scale[j]!;
    }
  return P;
}

/** Φ with the error model's structure: rows 0..8 dense over columns 0..14 (some exact zeros), rows 9..17 diagonal. */
export function phiOf(rng: Rng): Float64Array {
  const F = new Float64Array(n * n);
  for (let i = 0; i < 9; i++) for (let j = 0; j < 15; j++) F[i * n + j] = (i === j ? 1 : 0) + (rng.next() < 0.3 ? 0 : 0.1 * rng.normal());
  for (let i = 9; i < n; i++) F[i * n + i] = i >= 15 ? 0.99 : 1;
  return F;
}
