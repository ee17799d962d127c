/**
 * The closed-loop reset of the error-state filter: the estimated error folded into the nominal state,
 * after which the error-state estimate is zero again (Groves 2013 ch. 14, closed-loop
 * correction of the inertial solution — from memory).
 */
import { quatRotateNav } from '../../models/ins/attitude.js';
import { NAV_BA, NAV_BG, NAV_GM, NAV_LEN, NAV_P, NAV_Q, NAV_V } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { E_A, E_BA, E_BG, E_GM, E_P, E_V, NE } from './error-model.js';

/** x ← x ⊕ δx: additive for position, velocity, biases and fix error; attitude by C ← (I + [φ×]) C. */
export function applyCorrection(x: Float64Array, dx: Float64Array): void {
  checkSize('applyCorrection', 'x', x, NAV_LEN, 'navigation state');
  checkSize('applyCorrection', 'dx', dx, NE, 'error state');
  for (let i = 0; i < 3; i++) {
    x[NAV_P + i] = x[NAV_P + i]! + dx[E_P + i]!;
    x[NAV_V + i] = x[NAV_V + i]! + dx[E_V + i]!;
    x[NAV_BA + i] = x[NAV_BA + i]! + dx[E_BA + i]!;
    x[NAV_BG + i] = x[NAV_BG + i]! + dx[E_BG + i]!;
    x[NAV_GM + i] = x[NAV_GM + i]! + dx[E_GM + i]!;
  }
  quatRotateNav(x, NAV_Q, dx[E_A]!, dx[E_A + 1]!, dx[E_A + 2]!);
}
