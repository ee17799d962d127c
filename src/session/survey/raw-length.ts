/**
 * How much fix noise lengthens a polyline of raw fixes. A step between two fixes is the true step
 * (length ν) plus the difference of their errors δ, per horizontal axis Gaussian with variance
 *   s² = σ²ₖ + σ²ₖ₊₁ + 2 σ_b² (1 − e^{−Δt/τ})
 * (white noise σ per fix; a first-order Gauss–Markov error of sd σ_b and time constant τ, whose
 * difference over Δt has variance 2σ_b²(1 − φ), φ = e^{−Δt/τ}). Its length |ν + δ| is then Rice
 * distributed, with mean (Rice, "Mathematical analysis of random noise", Bell Syst. Tech. J. 24
 * (1945) 46–156; the moments as in Abramowitz & Stegun via the Laguerre function)
 *   E|ν + δ| = s √(π/2) L½(−ν²/2s²),  L½(x) = e^{x/2} [(1 − x) I₀(−x/2) − x I₁(−x/2)]
 * which is s√(π/2) for ν = 0 (Rayleigh) and ≈ ν + s²/(2ν) for ν ≫ s. The expected excess of a raw
 * polyline is the sum over its steps of E|ν + δ| − ν (the expectation is additive even though
 * neighbouring steps share a fix).
 */

/** e^{−y} I₀(y), y ≥ 0: Abramowitz & Stegun (1964) 9.8.1 and 9.8.2 (|ε| < 2e-7 relative). */
export function besselI0e(y: number): number {
  if (y < 3.75) {
    const t = (y / 3.75) ** 2;
    return Math.exp(-y) * (1 + t * (3.5156229 + t * (3.0899424 + t * (1.2067492 + t * (0.2659732 + t * (0.0360768 + t * 0.0045813))))));
  }
  const t = 3.75 / y;
  return (0.39894228 + t * (0.01328592 + t * (0.00225319 + t * (-0.00157565 + t * (0.00916281 + t * (-0.02057706 + t * (0.02635537 + t * (-0.01647633 + t * 0.00392377)))))))) / Math.sqrt(y);
}

/** e^{−y} I₁(y), y ≥ 0: Abramowitz & Stegun (1964) 9.8.3 and 9.8.4. */
export function besselI1e(y: number): number {
  if (y < 3.75) {
    const t = (y / 3.75) ** 2;
    return Math.exp(-y) * y * (0.5 + t * (0.87890594 + t * (0.51498869 + t * (0.15084934 + t * (0.02658733 + t * (0.00301532 + t * 0.00032411))))));
  }
  const t = 3.75 / y;
  return (0.39894228 + t * (-0.03988024 + t * (-0.00362018 + t * (0.00163801 + t * (-0.01031555 + t * (0.02282967 + t * (-0.02895312 + t * (0.01787654 - t * 0.00420059)))))))) / Math.sqrt(y);
}

/**
 * Mean length (m) of a step with true length ν (m) and isotropic Gaussian error of variance s² per axis (m²).
 * With y = ν²/(4s²): E = s √(π/2) [(1 + 2y) e^{−y}I₀(y) + 2y e^{−y}I₁(y)].
 */
export function expectedStepLength(nuM: number, s2: number): number {
  if (!(s2 > 0)) return nuM;
  const s = Math.sqrt(s2);
  const y = (nuM * nuM) / (4 * s2);
  // beyond y ~ 1e4 the polynomial's rounding exceeds the correction itself: the asymptotic form
  if (y > 1e4) return nuM + s2 / (2 * nuM);
  return s * Math.sqrt(Math.PI / 2) * ((1 + 2 * y) * besselI0e(y) + 2 * y * besselI1e(y));
}

/** Variance per axis (m²) of the difference of two fix errors Δt apart (white variances r1, r2; Gauss–Markov σ_b, τ). */
export function stepErrorVariance(r1: number, r2: number, dtSec: number, gmSigmaM: number, gmTauSec: number): number {
  const gm = gmSigmaM > 0 && gmTauSec > 0 ? 2 * gmSigmaM * gmSigmaM * (1 - Math.exp(-dtSec / gmTauSec)) : 0;
  return r1 + r2 + gm;
}
