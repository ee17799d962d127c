/**
 * Argument size checks of the IMU filter's step functions: once per call (never per element), so a
 * wrongly sized array fails with the step's name instead of reading undefined as NaN.
 */

/** Throws "`fn`: `name` has n elements, expected `expected` (`shape`)" unless a.length === expected. */
export function checkSize(fn: string, name: string, a: ArrayLike<number>, expected: number, shape: string): void {
  if (a.length !== expected) throw sizeError(fn, name, a.length, expected, shape, false);
}

/** As checkSize, for arrays that may be longer (a slot or buffer of which the first `expected` are used). */
export function checkMinSize(fn: string, name: string, a: ArrayLike<number>, expected: number, shape: string): void {
  if (a.length < expected) throw sizeError(fn, name, a.length, expected, shape, true);
}

/** The error of a wrongly sized argument (for checks whose shape text is built only when they fail). */
export function sizeError(fn: string, name: string, length: number, expected: number, shape: string, atLeast: boolean): Error {
  return new Error(`${fn}: ${name} has ${length} elements, expected ${atLeast ? 'at least ' : ''}${expected} (${shape})`);
}
