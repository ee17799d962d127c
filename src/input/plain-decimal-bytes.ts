/**
 * A plain decimal number read straight from UTF-8 bytes (sign, digits, one point, an optional
 * exponent; no spaces or quotes), for the byte fast path of the IMU CSV reader. A decimal with at
 * most 2⁵³ as its digit string and a power of ten within ±22 is converted as one exact-operand
 * multiplication or division, which IEEE 754 rounds correctly: the same double as Number()
 * (Clinger, "How to read floating point numbers accurately", PLDI 1990, the fast path — from
 * memory); anything else is refused, for the general parser to take.
 */

/** Exact powers of ten (10²² is the largest exactly representable as a double). */
const POW10 = Array.from({ length: 23 }, (_, i) => Number(`1e${i}`));

/**
 * The number in bytes [p, e) of `buf` up to the next `delimByte` (or e) into `out[slot]`; returns
 * the index after it (at the delimiter or e), or −1 when the cell is not a plain decimal the fast
 * path converts exactly.
 */
export function scanPlainDecimal(buf: Uint8Array, p: number, e: number, delimByte: number, out: Float64Array, slot: number): number {
  let c = buf[p];
  let neg = false;
  if (c === 45) {
    neg = true;
    p++;
  } else if (c === 43) p++;
  let m = 0, digits = 0, frac = 0, dot = false;
  while (p < e) {
    c = buf[p]!;
    if (c >= 48 && c <= 57) {
      if (m > 900719925474098) return -1; // m·10 + 9 would pass 2⁵³
      m = m * 10 + (c - 48);
      digits++;
      if (dot) frac++;
    } else if (c === 46 && !dot) dot = true;
    else break;
    p++;
  }
  if (digits === 0) return -1;
  let ex = 0;
  if (p < e && (buf[p] === 101 || buf[p] === 69)) {
    p++;
    let eneg = false;
    if (buf[p] === 45) {
      eneg = true;
      p++;
    } else if (buf[p] === 43) p++;
    let ed = 0;
    while (p < e && buf[p]! >= 48 && buf[p]! <= 57) {
      if (ex > 1000) return -1;
      ex = ex * 10 + (buf[p]! - 48);
      ed++;
      p++;
    }
    if (ed === 0) return -1;
    if (eneg) ex = -ex;
  }
  if (p < e && buf[p] !== delimByte) return -1;
  const pw = ex - frac;
  let x = m;
  if (pw > 0) {
    if (pw > 22) return -1;
    x = m * POW10[pw]!;
  } else if (pw < 0) {
    if (pw < -22) return -1;
    x = m / POW10[-pw]!;
  }
  out[slot] = neg ? -x : x;
  return p;
}
