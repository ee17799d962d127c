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
  /**
   * The exact gradient of f, where the caller has one: used instead of differences at every step
   * (the diagonal start, when asked for, still comes from second differences). Counted in
   * `gradients`, not in `evaluations`.
   */
  gradient?: (x: number[]) => number[];
  /**
   * The diagonal start's second derivatives ∂²f/∂xᵢ² at x (f = f(x)) from the caller, instead of
   * curvatureStep's n second differences: for an objective whose structure gives them for fewer
   * evaluations (a pooled calibration steps the process noise of every log at once). Its
   * evaluations are the caller's to count. Needs `gradient`.
   */
  diagonalStart?: (x: number[], f: number) => number[];
}

export interface BoxBfgsResult {
  x: number[];
  f: number;
  evaluations: number;
  /** Calls of the exact gradient (0 without one). */
  gradients: number;
  iterations: number;
  converged: boolean;
}

export function boxBfgs(f: (x: number[]) => number, x0: number[], opt: BoxBfgsOptions): BoxBfgsResult {
  const run = new BoxBfgsRun(f, opt);
  let x = x0.map((v, i) => run.clamp(v, i));
  let fCur = run.fx(x);
  if (!Number.isFinite(fCur)) return { x, f: fCur, evaluations: run.evals, gradients: run.grads, iterations: 0, converged: false };
  // an exact gradient needs no refinement by central differences before stopping
  let central = opt.gradient !== undefined;
  // inverse Hessian approximation Hk (row-major n×n); null until the first update scales it
  let Hinv: number[][] | null = null;
  let g: number[];
  if (opt.diagonalStart && opt.gradient) {
    g = run.gradient(x, fCur, central);
    Hinv = diagonalInverse(opt.diagonalStart(x, fCur));
  } else if (opt.curvatureStep) {
    const start = run.curvatureStart(x, fCur, opt.curvatureStep);
    g = opt.gradient ? run.gradient(x, fCur, central) : start.g;
    Hinv = start.Hinv;
  } else g = run.gradient(x, fCur, central);
  let iterations = 0;
  let converged = false;
  while (run.evals < opt.maxEvaluations) {
    iterations++;
    let { d, slope } = run.direction(x, g, Hinv);
    if (!Hinv || !(slope < 0)) {
      // steepest descent (the first step, or a model that lost positive definiteness): reset
      Hinv = null;
      const sd = run.steepestDescent(x, g);
      if (!sd) {
        converged = true;
        break;
      }
      d = sd;
    } else if (-0.5 * slope < opt.fTolerance) {
      // the quadratic model's predicted decrease −½ gᵀd is negligible: a forward-difference
      // gradient is refined once by central differences before stopping
      if (central) {
        converged = true;
        break;
      }
      central = true;
      g = run.gradient(x, fCur, true);
      continue;
    }
    const step = run.lineSearch(x, fCur, g, d);
    if (!step) {
      if (Hinv || !central) {
        // retry from steepest descent with a central-difference gradient before giving up
        Hinv = null;
        if (!central) {
          central = true;
          g = run.gradient(x, fCur, true);
        }
        continue;
      }
      converged = true;
      break;
    }
    const gNew = run.gradient(step.x, step.f, central);
    Hinv = updateInverseHessian(Hinv, step.x.map((v, i) => v - x[i]!), gNew.map((v, i) => v - g[i]!));
    const fPrev = fCur;
    x = step.x;
    fCur = step.f;
    g = gNew;
    // a step that changed f by less than rounding: refine the gradient, then stop
    if (Math.abs(fPrev - fCur) < 1e-12 * Math.max(1, Math.abs(fCur))) {
      if (central) {
        converged = true;
        break;
      }
      central = true;
      g = run.gradient(x, fCur, true);
    }
  }
  return { x, f: fCur, evaluations: run.evals, gradients: run.grads, iterations, converged };
}

/** The objective with its evaluation count, and the steps of one minimization that need it. */
class BoxBfgsRun {
  evals = 0;
  grads = 0;
  private readonly n: number;
  private readonly lo: number[];
  private readonly hi: number[];

  constructor(
    private readonly f: (x: number[]) => number,
    private readonly opt: BoxBfgsOptions,
  ) {
    this.lo = opt.lo;
    this.hi = opt.hi;
    this.n = opt.lo.length;
  }

  /** f(x), a non-finite value as +∞. */
  fx(x: number[]): number {
    this.evals++;
    const v = this.f(x);
    return Number.isFinite(v) ? v : Infinity;
  }

  clamp(v: number, i: number): number {
    return Math.min(Math.max(v, this.lo[i]!), this.hi[i]!);
  }

  /** Gradient by forward or central differences (N&W §8.1), steps taken inward at a bound. */
  gradient(x: number[], f0: number, central: boolean): number[] {
    if (this.opt.gradient) {
      this.grads++;
      const ge = this.opt.gradient(x);
      if (ge.every(Number.isFinite)) return ge;
    }
    const { n, lo, hi } = this;
    const g = new Array<number>(n).fill(0);
    const y = x.slice();
    for (let i = 0; i < n; i++) {
      const h = this.opt.gradientStep[i]!;
      const up = x[i]! + h <= hi[i]!, down = x[i]! - h >= lo[i]!;
      if (central && up && down) {
        y[i] = x[i]! + h;
        const fp = this.fx(y);
        y[i] = x[i]! - h;
        const fm = this.fx(y);
        g[i] = (fp - fm) / (2 * h);
      } else {
        // forward difference, backward at the upper bound
        const s = up ? h : -h;
        y[i] = x[i]! + s;
        g[i] = (this.fx(y) - f0) / s;
      }
      y[i] = x[i]!;
      // a step into a region where f is not finite: no usable slope along this coordinate
      if (!Number.isFinite(g[i]!)) g[i] = 0;
    }
    return g;
  }

  /**
   * The first gradient by central differences at curvatureStep and, where every second difference
   * is positive, the diagonal start H₀ = diag(1 / ∂²f/∂xᵢ²) (otherwise null: steepest descent first).
   */
  curvatureStart(x: number[], fCur: number, curvatureStep: number[]): { g: number[]; Hinv: number[][] | null } {
    const { n, lo, hi } = this;
    const g = new Array<number>(n).fill(0);
    const diag = new Array<number>(n).fill(NaN);
    const y = x.slice();
    for (let i = 0; i < n; i++) {
      const h = curvatureStep[i]!;
      // the step shrunk to fit inside the box (both sides)
      const hi_ = Math.min(h, hi[i]! - x[i]!, x[i]! - lo[i]!);
      if (!(hi_ > 0)) continue;
      y[i] = x[i]! + hi_;
      const fp = this.fx(y);
      y[i] = x[i]! - hi_;
      const fm = this.fx(y);
      y[i] = x[i]!;
      // g ≈ (f₊ − f₋) / 2h, ∂²f/∂x² ≈ (f₊ − 2f + f₋) / h² (central differences, N&W §8.1)
      g[i] = (fp - fm) / (2 * hi_);
      diag[i] = (fp - 2 * fCur + fm) / (hi_ * hi_);
      if (!Number.isFinite(g[i]!)) g[i] = 0;
    }
    // coordinates at a bound: the one-sided differences of gradient()
    const atBound = (xi: number, i: number) => !(Math.min(curvatureStep[i]!, hi[i]! - xi, xi - lo[i]!) > 0);
    const gb = x.some(atBound) ? this.gradient(x, fCur, false) : null;
    if (gb) x.forEach((xi, i) => { if (atBound(xi, i)) g[i] = gb[i]!; });
    return { g, Hinv: diagonalInverse(diag) };
  }

  /** Active set (Bertsekas 1982): at a bound with the gradient pointing out of the box. */
  private free(x: number[], g: number[]): boolean[] {
    return x.map((xi, i) => !((xi <= this.lo[i]! && g[i]! > 0) || (xi >= this.hi[i]! && g[i]! < 0)));
  }

  /** d = −H g over the free variables (the active ones stay where they are), and its slope gᵀd. */
  direction(x: number[], g: number[], Hinv: number[][] | null): { d: number[]; slope: number } {
    const n = this.n;
    const free = this.free(x, g);
    const d = new Array<number>(n).fill(0);
    if (Hinv) for (let i = 0; i < n; i++) if (free[i]) for (let j = 0; j < n; j++) if (free[j]) d[i] = d[i]! - Hinv[i]![j]! * g[j]!;
    let slope = 0;
    for (let i = 0; i < n; i++) slope += d[i]! * g[i]!;
    return { d, slope };
  }

  /** The steepest-descent step of length maxStep in its largest coordinate, over the free variables; null where the free gradient is 0. */
  steepestDescent(x: number[], g: number[]): number[] | null {
    const n = this.n;
    const free = this.free(x, g);
    let gMax = 0;
    for (let i = 0; i < n; i++) if (free[i]) gMax = Math.max(gMax, Math.abs(g[i]!));
    if (gMax === 0) return null;
    const d = new Array<number>(n).fill(0);
    for (let i = 0; i < n; i++) d[i] = free[i] ? (-g[i]! / gMax) * this.opt.maxStep : 0;
    return d;
  }

  /** Backtracking along the projected path x(α) = P[x + α d] with sufficient decrease (N&W eq. 3.4); null when no step is accepted. */
  lineSearch(x: number[], fCur: number, g: number[], d: number[]): { x: number[]; f: number } | null {
    const { n, opt } = this;
    // at most maxStep per coordinate
    let dMax = 0;
    for (let i = 0; i < n; i++) dMax = Math.max(dMax, Math.abs(d[i]!));
    if (dMax > opt.maxStep) for (let i = 0; i < n; i++) d[i] = (d[i]! * opt.maxStep) / dMax;
    let alpha = 1;
    for (let k = 0; k < 30 && this.evals < opt.maxEvaluations; k++) {
      const xNew = x.map((xi, i) => this.clamp(xi + alpha * d[i]!, i));
      const fNew = this.fx(xNew);
      let dec = 0;
      for (let i = 0; i < n; i++) dec += g[i]! * (xNew[i]! - x[i]!);
      // f(x(α)) ≤ f(x) + c₁ ∇fᵀ(x(α) − x), c₁ = 1e-4
      if (fNew <= fCur + 1e-4 * dec) return { x: xNew, f: fNew };
      alpha *= fNew === Infinity ? 0.1 : 0.5;
    }
    return null;
  }
}

/**
 * The BFGS update of the inverse Hessian from the step s and the gradient change y (N&W eq. 6.17),
 * H₀ = (sᵀy / yᵀy) I at the first (eq. 6.20); skipped without curvature sᵀy > 0 (§6.1: H stays
 * positive definite). Updates Hinv in place; returns it (or the new one, or null as given).
 */
/** H₀ = diag(1 / dᵢ) where every dᵢ is a positive curvature (a usable diagonal start), else null (steepest descent first). */
function diagonalInverse(diag: number[]): number[][] | null {
  const n = diag.length;
  return diag.every((v) => Number.isFinite(v) && v > 0) ? diag.map((v, i) => Array.from({ length: n }, (_, j) => (i === j ? 1 / v : 0))) : null;
}

function updateInverseHessian(Hinv: number[][] | null, s: number[], yv: number[]): number[][] | null {
  const n = s.length;
  let sy = 0, yy = 0, ss = 0;
  for (let i = 0; i < n; i++) (sy += s[i]! * yv[i]!), (yy += yv[i]! * yv[i]!), (ss += s[i]! * s[i]!);
  if (!(sy > 1e-10 * Math.sqrt(ss * yy))) return Hinv;
  const H = Hinv ?? Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => (i === j ? sy / yy : 0)));
  // H ← (I − ρ s yᵀ) H (I − ρ y sᵀ) + ρ s sᵀ, ρ = 1 / yᵀs
  const rho = 1 / sy;
  const Hy = H.map((row) => row.reduce((a, v, j) => a + v * yv[j]!, 0));
  let yHy = 0;
  for (let i = 0; i < n; i++) yHy += yv[i]! * Hy[i]!;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) H[i]![j] = H[i]![j]! + (-rho * (Hy[i]! * s[j]! + s[i]! * Hy[j]!) + (rho * rho * yHy + rho) * s[i]! * s[j]!);
  return H;
}
