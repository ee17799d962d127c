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

export function nelderMead(f: (x: number[]) => number, x0: number[], opt: NelderMeadOptions): NelderMeadResult {
  const n = x0.length;
  let evals = 0;
  const fx = (x: number[]) => {
    evals++;
    const v = f(x);
    return Number.isFinite(v) ? v : Infinity;
  };
  let simplex: number[][] = [x0.slice()];
  for (let i = 0; i < n; i++) {
    const v = x0.slice();
    v[i] = v[i]! + opt.step[i]!;
    simplex.push(v);
  }
  let values = simplex.map(fx);
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
    const along = (t: number) => c.map((cj, j) => cj + t * (cj - worst[j]!));
    const xr = along(1);
    const fr = fx(xr);
    if (fr < values[0]!) {
      const xe = along(2);
      const fe = fx(xe);
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
    const xc = along(outside ? 0.5 : -0.5);
    const fc = fx(xc);
    if (fc < (outside ? fr : values[n]!)) {
      simplex[n] = xc;
      values[n] = fc;
      continue;
    }
    // shrink toward the best vertex
    for (let i = 1; i <= n; i++) {
      simplex[i] = simplex[i]!.map((v, j) => simplex[0]![j]! + 0.5 * (v - simplex[0]![j]!));
      values[i] = fx(simplex[i]!);
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
