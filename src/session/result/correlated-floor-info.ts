/**
 * The correlated-error floor a session's reported uncertainty carries (computed and applied by
 * session/check/correlated-floor.ts; read by the draws, session/survey/draws.ts, and summary.json).
 */
export interface CorrelatedFloor {
  /** The ratios ρ (horizontal, vertical) to the white sigma. */
  ratio: { horizontal: number; vertical: number };
  /** The correlated sigma the regions assume (m): max(ρ σ_w, σ_b). */
  assumedSigmaM: { horizontal: number; vertical: number };
  /** The sd added in quadrature to every epoch (m): √Δ. */
  addedSdM: { horizontal: number; vertical: number };
}
