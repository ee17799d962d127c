/**
 * Derivative-free minimization by the Nelder–Mead simplex method, with the standard coefficients
 * (reflection 1, expansion 2, contraction ½, shrink ½).
 * Source: Nelder & Mead, "A simplex method for function minimization", Computer Journal 7:308–313
 * (1965); Lagarias, Reeds, Wright, Wright, SIAM J. Optim. 9(1):112–147 (1998) for the variant used.
 */

export interface NelderMeadOptions {
  /** Initial step per coordinate. */
  step: number[];
  maxEvaluations: number;
  /** Stop when the simplex's function values span less than this. */
  fTolerance: number;
  /** and its vertices lie within this distance of the best one (per coordinate). */
  xTolerance: number;
}

export interface NelderMeadResult {
  x: number[];
  f: number;
  evaluations: number;
  converged: boolean;
}

/** A value of the objective, non-finite ones as +Infinity. */
function finite(v: number): number {
  return Number.isFinite(v) ? v : Infinity;
}

/** The point c + t (c − worst). */
function alongLine(c: number[], worst: number[], t: number): number[] {
  const out = new Array<number>(c.length);
  for (let j = 0; j < c.length; j++) out[j] = c[j]! + t * (c[j]! - worst[j]!);
  return out;
}

// no closures made per call in the hot parts: a module-level function is compiled once for all the
// sessions of a thread, a closure again for each call (measured: 15 recompilations of nelderMead's
// closures in a batch of 20 logs)
export function nelderMead(f: (x: number[]) => number, x0: number[], opt: NelderMeadOptions): NelderMeadResult {
  const n = x0.length;
  let evals = 0;
  let simplex: number[][] = [x0.slice()];
  for (let i = 0; i < n; i++) {
    const v = x0.slice();
    v[i] = v[i]! + opt.step[i]!;
    simplex.push(v);
  }
  let values: number[] = [];
  for (const x of simplex) {
    evals++;
    values.push(finite(f(x)));
  }
  let converged = false;
  while (evals < opt.maxEvaluations) {
    const order = values.map((v, i) => [v, i] as const).sort((a, b) => a[0] - b[0]);
    simplex = order.map(([, i]) => simplex[i]!);
    values = order.map(([v]) => v);
    const spread = values[n]! - values[0]!;
    let xs = 0;
    for (let i = 1; i <= n; i++) for (let j = 0; j < n; j++) xs = Math.max(xs, Math.abs(simplex[i]![j]! - simplex[0]![j]!));
    if (spread < opt.fTolerance && xs < opt.xTolerance) {
      converged = true;
      break;
    }
    // centroid of all but the worst
    const c = new Array<number>(n).fill(0);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) c[j] = c[j]! + simplex[i]![j]! / n;
    const worst = simplex[n]!;
    const xr = alongLine(c, worst, 1);
    evals++;
    const fr = finite(f(xr));
    if (fr < values[0]!) {
      const xe = alongLine(c, worst, 2);
      evals++;
      const fe = finite(f(xe));
      if (fe < fr) {
        simplex[n] = xe;
        values[n] = fe;
      } else {
        simplex[n] = xr;
        values[n] = fr;
      }
      continue;
    }
    if (fr < values[n - 1]!) {
      simplex[n] = xr;
      values[n] = fr;
      continue;
    }
    // contraction (outside if the reflection improved on the worst, inside otherwise)
    const outside = fr < values[n]!;
    const xc = alongLine(c, worst, outside ? 0.5 : -0.5);
    evals++;
    const fc = finite(f(xc));
    if (fc < (outside ? fr : values[n]!)) {
      simplex[n] = xc;
      values[n] = fc;
      continue;
    }
    // shrink toward the best vertex
    for (let i = 1; i <= n; i++) {
      simplex[i] = simplex[i]!.map((v, j) => simplex[0]![j]! + 0.5 * (v - simplex[0]![j]!));
      evals++;
      values[i] = finite(f(simplex[i]!));
    }
  }
  let best = 0;
  for (let i = 1; i <= n; i++) if (values[i]! < values[best]!) best = i;
  return { x: simplex[best]!, f: values[best]!, evaluations: evals, converged };
}

/**
 * Numerical Hessian by central differences with step h per coordinate (for standard errors of a
 * maximum-likelihood estimate: Cov ≈ H⁻¹ of the negative log-likelihood).
 */
export function numericalHessian(f: (x: number[]) => number, x: number[], h: number[]): number[][] {
  const n = x.length;
  const H: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  const f0 = f(x);
  const at = (d: Array<[number, number]>) => {
    const y = x.slice();
    for (const [i, s] of d) y[i] = y[i]! + s;
    return f(y);
  };
  for (let i = 0; i < n; i++) {
    const hi = h[i]!;
    H[i]![i] = (at([[i, hi]]) - 2 * f0 + at([[i, -hi]])) / (hi * hi);
    for (let j = i + 1; j < n; j++) {
      const hj = h[j]!;
      const v = (at([[i, hi], [j, hj]]) - at([[i, hi], [j, -hj]]) - at([[i, -hi], [j, hj]]) + at([[i, -hi], [j, -hj]])) / (4 * hi * hj);
      H[i]![j] = v;
      H[j]![i] = v;
    }
  }
  return H;
}
