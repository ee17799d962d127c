/**
 * Minimization within box bounds lo ≤ x ≤ hi by a projected quasi-Newton (BFGS) method with a
 * finite-difference gradient.
 * Sources: Nocedal & Wright, "Numerical Optimization", 2nd ed. (2006) (equation numbers from
 * memory): ch. 6, the BFGS update of the inverse Hessian (eq. 6.17) and the initial scaling
 * sᵀy / yᵀy (eq. 6.20); §3.1, backtracking with the sufficient-decrease condition (eq. 3.4); §8.1,
 * forward and central differences. Bertsekas, "Projected Newton methods for optimization problems
 * with simple constraints", SIAM J. Control Optim. 20(2):221–246 (1982): the active set (a variable
 * at a bound whose gradient pushes it outward is held there) and the step projected into the box.
 * A diagonal start from second differences (optional) instead of the scaled identity: common practice.
 * The objective may return a non-finite value (treated as +∞); the search never evaluates outside
 * the box (difference steps at a bound are taken inward).
 */

export interface BoxBfgsOptions {
  lo: number[];
  hi: number[];
  maxEvaluations: number;
  /** Difference step per coordinate (the scale of each coordinate's rounding, ~1e-5 of its range of interest). */
  gradientStep: number[];
  /** Largest change of any coordinate in one step (keeps the first, unscaled steps sensible). */
  maxStep: number;
  /** Stop when the quasi-Newton model predicts less than this decrease (½ gᵀH g over the free variables). */
  fTolerance: number;
  /**
   * When given: the first gradient by central differences at this step per coordinate, and their
   * second differences as a diagonal start H₀ = diag(1 / ∂²f/∂xᵢ²) (n more evaluations, once); a
   * start near the optimum then needs few updates. Without it the first step is steepest descent.
   */
  curvatureStep?: number[];
}

export interface BoxBfgsResult {
  x: number[];
  f: number;
  evaluations: number;
  iterations: number;
  converged: boolean;
}

export function boxBfgs(f: (x: number[]) => number, x0: number[], opt: BoxBfgsOptions): BoxBfgsResult {
  const n = x0.length;
  const { lo, hi } = opt;
  let evals = 0;
  const fx = (x: number[]) => {
    evals++;
    const v = f(x);
    return Number.isFinite(v) ? v : Infinity;
  };
  const clamp = (v: number, i: number) => Math.min(Math.max(v, lo[i]!), hi[i]!);
  let x = x0.map(clamp);
  let fCur = fx(x);
  if (!Number.isFinite(fCur)) return { x, f: fCur, evaluations: evals, iterations: 0, converged: false };

  /** Gradient by forward or central differences (N&W §8.1), steps taken inward at a bound. */
  const gradient = (x: number[], f0: number, central: boolean): number[] => {
    const g = new Array<number>(n).fill(0);
    const y = x.slice();
    for (let i = 0; i < n; i++) {
      const h = opt.gradientStep[i]!;
      const up = x[i]! + h <= hi[i]!, down = x[i]! - h >= lo[i]!;
      if (central && up && down) {
        y[i] = x[i]! + h;
        const fp = fx(y);
        y[i] = x[i]! - h;
        const fm = fx(y);
        g[i] = (fp - fm) / (2 * h);
      } else {
        // forward difference, backward at the upper bound
        const s = up ? h : -h;
        y[i] = x[i]! + s;
        g[i] = (fx(y) - f0) / s;
      }
      y[i] = x[i]!;
      // a step into a region where f is not finite: no usable slope along this coordinate
      if (!Number.isFinite(g[i]!)) g[i] = 0;
    }
    return g;
  };

  let central = false;
  // inverse Hessian approximation Hk (row-major n×n); null until the first update scales it
  let Hinv: number[][] | null = null;
  const identity = (s: number) => Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? s : 0)));
  let g: number[];
  if (opt.curvatureStep) {
    g = new Array<number>(n).fill(0);
    const diag = new Array<number>(n).fill(NaN);
    const y = x.slice();
    for (let i = 0; i < n; i++) {
      const h = opt.curvatureStep[i]!;
      // the step shrunk to fit inside the box (both sides)
      const hi_ = Math.min(h, hi[i]! - x[i]!, x[i]! - lo[i]!);
      if (!(hi_ > 0)) continue;
      y[i] = x[i]! + hi_;
      const fp = fx(y);
      y[i] = x[i]! - hi_;
      const fm = fx(y);
      y[i] = x[i]!;
      // g ≈ (f₊ − f₋) / 2h, ∂²f/∂x² ≈ (f₊ − 2f + f₋) / h² (central differences, N&W §8.1)
      g[i] = (fp - fm) / (2 * hi_);
      diag[i] = (fp - 2 * fCur + fm) / (hi_ * hi_);
      if (!Number.isFinite(g[i]!)) g[i] = 0;
    }
    // coordinates at a bound: the one-sided differences of gradient()
    const gb = x.some((xi, i) => !(Math.min(opt.curvatureStep![i]!, hi[i]! - xi, xi - lo[i]!) > 0)) ? gradient(x, fCur, false) : null;
    if (gb) x.forEach((xi, i) => { if (!(Math.min(opt.curvatureStep![i]!, hi[i]! - xi, xi - lo[i]!) > 0)) g[i] = gb[i]!; });
    // a positive curvature each: a usable diagonal start (otherwise steepest descent first)
    if (diag.every((v) => Number.isFinite(v) && v > 0)) Hinv = diag.map((v, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 / v : 0)));
  } else g = gradient(x, fCur, central);
  let iterations = 0;
  let converged = false;
  while (evals < opt.maxEvaluations) {
    iterations++;
    // active set (Bertsekas 1982): at a bound with the gradient pointing out of the box
    const free = x.map((xi, i) => !((xi <= lo[i]! && g[i]! > 0) || (xi >= hi[i]! && g[i]! < 0)));
    // d = −H g over the free variables (the active ones stay where they are)
    const d = new Array<number>(n).fill(0);
    if (Hinv) for (let i = 0; i < n; i++) if (free[i]) for (let j = 0; j < n; j++) if (free[j]) d[i] = d[i]! - Hinv[i]![j]! * g[j]!;
    let slope = 0;
    for (let i = 0; i < n; i++) slope += d[i]! * g[i]!;
    if (!Hinv || !(slope < 0)) {
      // steepest descent (the first step, or a model that lost positive definiteness): reset
      Hinv = null;
      let gMax = 0;
      for (let i = 0; i < n; i++) if (free[i]) gMax = Math.max(gMax, Math.abs(g[i]!));
      if (gMax === 0) {
        converged = true;
        break;
      }
      for (let i = 0; i < n; i++) d[i] = free[i] ? (-g[i]! / gMax) * opt.maxStep : 0;
      slope = 0;
      for (let i = 0; i < n; i++) slope += d[i]! * g[i]!;
    } else if (-0.5 * slope < opt.fTolerance) {
      // the quadratic model's predicted decrease −½ gᵀd is negligible: a forward-difference
      // gradient is refined once by central differences before stopping
      if (central) {
        converged = true;
        break;
      }
      central = true;
      g = gradient(x, fCur, true);
      continue;
    }
    // at most maxStep per coordinate
    let dMax = 0;
    for (let i = 0; i < n; i++) dMax = Math.max(dMax, Math.abs(d[i]!));
    if (dMax > opt.maxStep) for (let i = 0; i < n; i++) d[i] = (d[i]! * opt.maxStep) / dMax;
    // backtracking along the projected path x(α) = P[x + α d] with sufficient decrease (N&W eq. 3.4)
    let alpha = 1;
    let xNew: number[] = x;
    let fNew = Infinity;
    let accepted = false;
    for (let k = 0; k < 30 && evals < opt.maxEvaluations; k++) {
      xNew = x.map((xi, i) => clamp(xi + alpha * d[i]!, i));
      fNew = fx(xNew);
      let dec = 0;
      for (let i = 0; i < n; i++) dec += g[i]! * (xNew[i]! - x[i]!);
      // f(x(α)) ≤ f(x) + c₁ ∇fᵀ(x(α) − x), c₁ = 1e-4
      if (fNew <= fCur + 1e-4 * dec) {
        accepted = true;
        break;
      }
      alpha *= fNew === Infinity ? 0.1 : 0.5;
    }
    if (!accepted) {
      if (Hinv || !central) {
        // retry from steepest descent with a central-difference gradient before giving up
        Hinv = null;
        if (!central) {
          central = true;
          g = gradient(x, fCur, true);
        }
        continue;
      }
      converged = true;
      break;
    }
    const gNew = gradient(xNew, fNew, central);
    const s = xNew.map((v, i) => v - x[i]!);
    const yv = gNew.map((v, i) => v - g[i]!);
    let sy = 0, yy = 0, ss = 0;
    for (let i = 0; i < n; i++) (sy += s[i]! * yv[i]!), (yy += yv[i]! * yv[i]!), (ss += s[i]! * s[i]!);
    const fPrev = fCur;
    x = xNew;
    fCur = fNew;
    g = gNew;
    // the update needs curvature sᵀy > 0 (skipped otherwise, N&W §6.1: Hk stays positive definite)
    if (sy > 1e-10 * Math.sqrt(ss * yy)) {
      // first update: H₀ = (sᵀy / yᵀy) I (N&W eq. 6.20)
      if (!Hinv) Hinv = identity(sy / yy);
      // H ← (I − ρ s yᵀ) H (I − ρ y sᵀ) + ρ s sᵀ, ρ = 1 / yᵀs (N&W eq. 6.17)
      const rho = 1 / sy;
      const Hy = Hinv.map((row) => row.reduce((a, v, j) => a + v * yv[j]!, 0));
      let yHy = 0;
      for (let i = 0; i < n; i++) yHy += yv[i]! * Hy[i]!;
      for (let i = 0; i < n; i++)
        for (let j = 0; j < n; j++) Hinv[i]![j] = Hinv[i]![j]! + (-rho * (Hy[i]! * s[j]! + s[i]! * Hy[j]!) + (rho * rho * yHy + rho) * s[i]! * s[j]!);
    }
    // a step that changed f by less than rounding: refine the gradient, then stop
    if (Math.abs(fPrev - fCur) < 1e-12 * Math.max(1, Math.abs(fCur))) {
      if (central) {
        converged = true;
        break;
      }
      central = true;
      g = gradient(x, fCur, true);
    }
  }
  return { x, f: fCur, evaluations: evals, iterations, converged };
}
