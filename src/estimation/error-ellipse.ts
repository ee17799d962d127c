/**
 * Error ellipse of a 2×2 horizontal covariance [[σee, σen], [σen, σnn]]: semi-axes scaled to a
 * probability (for 95%: k² = χ²₂(0.95) = −2 ln 0.05 = 5.991) and the azimuth of the major axis,
 * clockwise from north, in [0, 180).
 * Source: Mikhail, "Observations and Least Squares" (1976), §(error ellipses), common practice.
 */

export const K2_95 = -2 * Math.log(0.05);

export function errorEllipse(varE: number, varN: number, covEN: number, k2 = K2_95): { majorM: number; minorM: number; azimuthDeg: number } {
  const mean = 0.5 * (varE + varN);
  const d = Math.sqrt(0.25 * (varE - varN) ** 2 + covEN * covEN);
  const l1 = mean + d;
  const l2 = Math.max(mean - d, 0);
  // major-axis direction: angle from east is ½·atan2(2σen, σee − σnn); azimuth from north = 90° − that
  let az = 90 - (0.5 * Math.atan2(2 * covEN, varE - varN) * 180) / Math.PI;
  az = ((az % 180) + 180) % 180;
  return { majorM: Math.sqrt(k2 * l1), minorM: Math.sqrt(k2 * l2), azimuthDeg: az };
}
