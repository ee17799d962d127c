/**
 * Chi-square distribution: CDF through the regularized lower incomplete gamma function and the
 * quantile by safeguarded Newton iteration.
 * Source: Press, Teukolsky, Vetterling, Flannery, "Numerical Recipes", 3rd ed. (2007), §6.2
 * (series for x < a + 1, Lentz continued fraction otherwise); Lanczos log-gamma (§6.1).
 */

const LANCZOS = [
  57.1562356658629235, -59.5979603554754912, 14.1360979747417471, -0.491913816097620199,
  0.339946499848118887e-4, 0.465236289270485756e-4, -0.983744753048795646e-4, 0.158088703224912494e-3,
  -0.210264441724104883e-3, 0.217439618115212643e-3, -0.164318106536763890e-3, 0.844182239838527433e-4,
  -0.261908384015814087e-4, 0.368991826595316234e-5,
];

/** ln Γ(x) for x > 0 (Numerical Recipes 3rd ed. §6.1, relative error < 1e-15). */
export function logGamma(x: number): number {
  let y = x;
  const tmp0 = x + 5.24218750000000000;
  const tmp = (x + 0.5) * Math.log(tmp0) - tmp0;
  let ser = 0.999999999999997092;
  for (let j = 0; j < 14; j++) ser += LANCZOS[j]! / ++y;
  return tmp + Math.log((2.5066282746310005 * ser) / x);
}

/** Regularized lower incomplete gamma P(a, x). */
export function gammaP(a: number, x: number): number {
  if (x <= 0) return 0;
  const gln = logGamma(a);
  if (x < a + 1) {
    // series: P = e^{−x} x^a / Γ(a) · Σ x^n / (a(a+1)…(a+n))
    let ap = a;
    let sum = 1 / a;
    let del = sum;
    for (let n = 0; n < 1000; n++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * 1e-16) break;
    }
    return sum * Math.exp(-x + a * Math.log(x) - gln);
  }
  // continued fraction for Q = 1 − P (modified Lentz)
  const FPMIN = 1e-300;
  let b = x + 1 - a;
  let c = 1 / FPMIN;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = b + an / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return 1 - Math.exp(-x + a * Math.log(x) - gln) * h;
}

/** Chi-square CDF with k degrees of freedom. */
export function chiSquareCdf(x: number, k: number): number {
  return gammaP(k / 2, x / 2);
}

const quantileCache = new Map<string, number>();

/** Chi-square quantile: the x with CDF(x; k) = p, for 0 < p < 1. */
export function chiSquareQuantile(p: number, k: number): number {
  if (!(p > 0 && p < 1) || !(k > 0)) throw new RangeError(`chi-square quantile needs 0<p<1 and k>0 (p=${p}, k=${k})`);
  const key = `${p}|${k}`;
  const cached = quantileCache.get(key);
  if (cached !== undefined) return cached;
  // exact for k = 2: x = −2 ln(1 − p)
  if (k === 2) {
    const v = -2 * Math.log1p(-p);
    quantileCache.set(key, v);
    return v;
  }
  // bracket, then bisection refined by Newton steps on the CDF
  let lo = 0;
  let hi = Math.max(1, k);
  while (chiSquareCdf(hi, k) < p) hi *= 2;
  let x = 0.5 * (lo + hi);
  for (let it = 0; it < 200; it++) {
    const f = chiSquareCdf(x, k) - p;
    if (f > 0) hi = x;
    else lo = x;
    // density of chi-square(k) at x
    const pdf = Math.exp((k / 2 - 1) * Math.log(x) - x / 2 - (k / 2) * Math.LN2 - logGamma(k / 2));
    let next = x - f / pdf;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) < 1e-13 * x) {
      x = next;
      break;
    }
    x = next;
  }
  quantileCache.set(key, x);
  return x;
}
