/**
 * Output text written straight into byte chunks (UTF-8), so that a million-row output is streamed
 * to its file a megabyte at a time instead of being built as one string or object tree: no
 * per-cell strings, no joins, no UTF-16 → UTF-8 conversion of the whole text.
 *
 * The number and time writers give exactly the text of the JavaScript calls they replace
 * (ECMA-262 §21.1.3.3 Number.prototype.toFixed, §6.1.6.1.20 Number::toString, §21.4.4.36
 * Date.prototype.toISOString), tested against them in test/output/byte-chunks.test.ts:
 * - `fixed(v, d)` = `v.toFixed(d)`: the integer n nearest to |v|·10^d (ties up) from the rounded
 *   product |v|·10^d, whose error is at most half an ulp; when the product lies within two ulps of a
 *   tie, the exact answer could differ, and toFixed itself is called;
 * - `rounded(v, d)` = `String(Math.round(v·10^d) / 10^d)`: with n = Math.round(v·10^d) below 10^15,
 *   the decimal n·10^−d has at most 15 significant digits, so it is the only decimal of ≤ 15 digits
 *   naming that double (DBL_DIG = 15; IEEE 754-2008 §5.12.2) and therefore the shortest text that
 *   round-trips, which is what Number::toString prints (trailing zeros dropped); exponent notation
 *   (below 1e-6) and larger n fall back to String();
 * - `isoUtc(t)` = `new Date(Math.round(t·1000)).toISOString()`: the date part is cached per UTC day
 *   (regular logs stay within a day for 864,000 epochs at 10 Hz), the time of day is integer
 *   arithmetic; outside years 1970–9999 and for non-finite times Date is called (and throws as before).
 * Digits are written two at a time from a table of digit pairs in int32 arithmetic below 2^31 (one
 * at a time in doubles above), and the integer part of `fixed` comes from ⌊|v|⌋ with one correction
 * instead of a division (the same integers, hence the same text). A scaled value
 * n = |v|·10^d below 2^31 (metres at 3 decimals, degrees at 7) is written as n's digits with the
 * point inserted (`pointed`), the text of its integer part and fraction written apart
 * (test/output/byte-chunks-scaled-digits.test.ts checks both sides of 2^31 against the calls).
 */

/** Bytes of a chunk before it is handed out (the buffer has room for a row beyond it). */
export const CHUNK_BYTES = 1 << 20;
const SLACK_BYTES = 1 << 16;
const MS_PER_DAY = 86_400_000;
/** 10000-01-01T00:00:00Z: from here on toISOString writes a six-digit year. */
const MS_YEAR_10000 = 253_402_300_800_000;

/** 10^d as the expression `10 ** d` gives it (exact for d ≤ 22). */
export const POW10: readonly number[] = Array.from({ length: 23 }, (_, d) => 10 ** d);

/**
 * A non-negative integer n < 10^k below 2^53 in exactly k digits (zero-padded) ending before
 * b[end]; returns the index of its first digit. Below 2^31 two digits at a time in int32
 * arithmetic (a table of the 100 digit pairs), above it one at a time in doubles (exact: n < 2^53).
 */
function putDigits(b: Uint8Array, end: number, n: number, k: number): number {
  let p = end;
  const start = end - k;
  if (n <= 0x7fffffff) {
    let m = n | 0;
    while (m >= 100) {
      const q = (m / 100) | 0;
      const r2 = (m - q * 100) << 1;
      b[--p] = DIGIT_PAIRS[r2 + 1]!;
      b[--p] = DIGIT_PAIRS[r2]!;
      m = q;
    }
    if (m >= 10) {
      b[--p] = DIGIT_PAIRS[(m << 1) + 1]!;
      b[--p] = DIGIT_PAIRS[m << 1]!;
    } else b[--p] = C.zero + m;
  } else {
    let m = n;
    while (m > 0) {
      const q = Math.floor(m / 10);
      b[--p] = C.zero + (m - q * 10);
      m = q;
    }
  }
  // leading zeros
  while (p > start) b[--p] = C.zero;
  return start;
}

/** "00", "01", …, "99" as ASCII bytes (digit pair i at 2i, 2i + 1). */
const DIGIT_PAIRS = Uint8Array.from({ length: 200 }, (_, i) => 48 + (i & 1 ? (i >> 1) % 10 : Math.floor((i >> 1) / 10)));

const enum C {
  minus = 45,
  dot = 46,
  zero = 48,
  colon = 58,
  Z = 90,
}

export class ByteChunks {
  private buf: Buffer;
  private pos = 0;
  private day = NaN;
  private readonly dayPrefix = new Uint8Array(11);

  constructor(private readonly chunkBytes = CHUNK_BYTES) {
    this.buf = Buffer.allocUnsafe(chunkBytes + SLACK_BYTES);
  }

  /** A chunk is ready to be taken. */
  get full(): boolean {
    return this.pos >= this.chunkBytes;
  }

  /** Bytes written and not yet taken. */
  get length(): number {
    return this.pos;
  }

  /** The bytes written so far (to be written out before the next call writes more); empty when none. */
  take(): Buffer {
    const out = this.buf.subarray(0, this.pos);
    this.buf = Buffer.allocUnsafe(this.chunkBytes + SLACK_BYTES);
    this.pos = 0;
    return out;
  }

  /** Make room for `n` more bytes (a long text cell); copies into a larger buffer when needed. */
  private room(n: number): void {
    if (this.pos + n <= this.buf.length) return;
    const b = Buffer.allocUnsafe(Math.max(this.buf.length * 2, this.pos + n + SLACK_BYTES));
    this.buf.copy(b, 0, 0, this.pos);
    this.buf = b;
  }

  byte(c: number): void {
    this.room(1);
    this.buf[this.pos++] = c;
  }

  /** Text known to be ASCII (names, constants, number text). */
  ascii(s: string): void {
    const n = s.length;
    this.room(n);
    const b = this.buf;
    let p = this.pos;
    for (let i = 0; i < n; i++) b[p++] = s.charCodeAt(i);
    this.pos = p;
  }

  /** Any text, as UTF-8. */
  text(s: string): void {
    if (s.length < 32) {
      let ascii = true;
      for (let i = 0; i < s.length; i++)
        if (s.charCodeAt(i) > 0x7f) {
          ascii = false;
          break;
        }
      if (ascii) return this.ascii(s);
    }
    this.room(3 * s.length);
    this.pos += this.buf.write(s, this.pos, 'utf8');
  }

  /** Bytes prepared once (for constants written per row). */
  bytes(b: Uint8Array): void {
    const n = b.length;
    this.room(n);
    const buf = this.buf;
    let p = this.pos;
    for (let i = 0; i < n; i++) buf[p++] = b[i]!;
    this.pos = p;
  }

  /**
   * A non-negative integer below 2^53, at least `minDigits` digits (zero-padded): the digit count by
   * comparison with powers of ten, then `padded`.
   */
  private digits(n: number, minDigits: number): void {
    let nd = 1;
    while (nd < 16 && n >= POW10[nd]!) nd++;
    this.padded(n, nd < minDigits ? minDigits : nd);
  }

  /** A non-negative integer n < 10^k below 2^53 in exactly k digits (zero-padded; putDigits). */
  private padded(n: number, k: number): void {
    this.room(k);
    const p = this.pos + k;
    putDigits(this.buf, p, n, k);
    this.pos = p;
  }

  /** An integer (as String(n) for safe integers). */
  int(n: number): void {
    if (!Number.isSafeInteger(n)) return this.ascii(String(n));
    if (n < 0) {
      this.byte(C.minus);
      this.digits(-n, 1);
    } else this.digits(n, 1); // −0 writes "0", as String(−0)
  }

  /** `v.toFixed(d)` for finite v and 0 ≤ d ≤ 15. */
  fixed(v: number, d: number): void {
    const a = v < 0 ? -v : v;
    const f = POW10[d]!;
    const x = a * f;
    if (!(x < 4e15) || d > 15) return this.ascii(v.toFixed(d));
    const n0 = Math.floor(x);
    const frac = x - n0;
    // within two ulps of a tie the rounded product cannot tell which way the exact value lies
    if (Math.abs(frac - 0.5) <= x * 4.5e-16) return this.ascii(v.toFixed(d));
    const n = frac > 0.5 ? n0 + 1 : n0;
    if (d === 0) return this.decimal(v < 0, n, 0, 0);
    if (n <= 0x7fffffff) return this.pointed(v < 0, n, d);
    // n = ip·f + fp with 0 ≤ fp < f, from ip ≈ ⌊|v|⌋ (n differs from |v|·f by under one unit, so
    // one correction either way makes it exact; products and differences of integers < 4e15 are exact)
    let ip = Math.floor(a);
    let fp = n - ip * f;
    if (fp < 0) {
      ip--;
      fp += f;
    } else if (fp >= f) {
      ip++;
      fp -= f;
    }
    this.decimal(v < 0, ip, fp, d);
  }

  /** `v.toFixed(d)`, or nothing for a non-finite value (a CSV cell). */
  fixedCell(v: number, d: number): void {
    if (Number.isFinite(v)) this.fixed(v, d);
  }

  /**
   * The JSON text of `Math.round(v·10^d) / 10^d` (as JSON.stringify writes it), or `null` for a
   * non-finite v; 0 ≤ d ≤ 22.
   */
  rounded(v: number, d: number): void {
    if (!Number.isFinite(v)) return this.ascii('null');
    const f = POW10[d]!;
    const n = Math.round(v * f);
    const x = n / f;
    if (n === 0) return this.byte(C.zero); // also −0, which JSON writes as 0
    const a = n < 0 ? -n : n;
    if (!(a < 1e15) || Math.abs(x) < 1e-6) return this.ascii(String(x));
    if (d === 0) return this.decimal(n < 0, a, 0, 0);
    if (a <= 0x7fffffff) {
      // the fraction's trailing zeros are a's lowest zero digits (at most d of them)
      let m = a;
      let k = d;
      while (k > 0 && m % 10 === 0) {
        m /= 10;
        k--;
      }
      return k > 0 ? this.pointed(n < 0, m, k) : this.decimal(n < 0, m, 0, 0);
    }
    // a / f = |n / f| exactly (negation is exact), so ⌊|x|⌋ is ⌊a / f⌋ without a second division
    let ip = Math.floor(x < 0 ? -x : x);
    let fp = a - ip * f;
    if (fp < 0) {
      ip--;
      fp += f;
    }
    if (fp === 0) return this.decimal(n < 0, ip, 0, 0);
    let k = d;
    while (fp % 10 === 0) {
      fp /= 10;
      k--;
    }
    // fp < 10^k (it was below 10^d before k − d divisions by ten)
    this.decimal(n < 0, ip, fp, k);
  }

  /**
   * "−"? m / 10^k with k ≥ 1 decimals, for 0 ≤ m < 2^31: m's digits (at least k + 1, zero-padded)
   * with the point before the last k. The text of decimal(neg, ⌊m / 10^k⌋, m mod 10^k, k) in one
   * int32 loop (no integer part and fraction apart, no second digit count).
   */
  private pointed(neg: boolean, n: number, k: number): void {
    let m = n | 0;
    let nd = k + 1;
    // m < 2^31 < 10^10: at most ten digits
    while (nd < 10 && m >= POW10[nd]!) nd++;
    const len = (neg ? 1 : 0) + nd + 1;
    this.room(len);
    const b = this.buf;
    const stop = this.pos + (neg ? 1 : 0);
    let p = this.pos + len;
    this.pos = p;
    for (let i = 0; i < k; i++) {
      const q = (m / 10) | 0;
      b[--p] = C.zero + (m - q * 10);
      m = q;
    }
    b[--p] = C.dot;
    while (p > stop) {
      const q = (m / 10) | 0;
      b[--p] = C.zero + (m - q * 10);
      m = q;
    }
    if (neg) b[--p] = C.minus;
  }

  /**
   * "−"? ip "." fp: the integer part ip (< 2^53) in its digits, then, for k > 0, the point and
   * fp < 10^k in exactly k digits (zero-padded); one room check, digits from the end.
   */
  private decimal(neg: boolean, ip: number, fp: number, k: number): void {
    let nd = 1;
    while (nd < 16 && ip >= POW10[nd]!) nd++;
    const len = (neg ? 1 : 0) + nd + (k > 0 ? k + 1 : 0);
    this.room(len);
    const b = this.buf;
    const start = this.pos;
    const end = start + len;
    this.pos = end;
    let p = end;
    if (k > 0) {
      p = putDigits(b, p, fp, k);
      b[--p] = C.dot;
    }
    p = putDigits(b, p, ip, nd);
    if (neg) b[--p] = C.minus;
  }

  /** `new Date(Math.round(tSec·1000)).toISOString()`. */
  isoUtc(tSec: number): void {
    const ms = Math.round(tSec * 1000);
    if (!(ms >= 0 && ms < MS_YEAR_10000)) return this.ascii(new Date(ms).toISOString());
    const day = Math.floor(ms / MS_PER_DAY);
    if (day !== this.day) {
      const s = new Date(day * MS_PER_DAY).toISOString();
      for (let i = 0; i < 11; i++) this.dayPrefix[i] = s.charCodeAt(i);
      this.day = day;
    }
    this.room(24);
    const b = this.buf;
    let p = this.pos;
    const pre = this.dayPrefix;
    for (let i = 0; i < 11; i++) b[p++] = pre[i]!;
    let r = ms - day * MS_PER_DAY;
    const h = Math.floor(r / 3_600_000);
    r -= h * 3_600_000;
    const mi = Math.floor(r / 60_000);
    r -= mi * 60_000;
    const s = Math.floor(r / 1000);
    r -= s * 1000;
    b[p++] = C.zero + Math.floor(h / 10);
    b[p++] = C.zero + (h % 10);
    b[p++] = C.colon;
    b[p++] = C.zero + Math.floor(mi / 10);
    b[p++] = C.zero + (mi % 10);
    b[p++] = C.colon;
    b[p++] = C.zero + Math.floor(s / 10);
    b[p++] = C.zero + (s % 10);
    b[p++] = C.dot;
    b[p++] = C.zero + Math.floor(r / 100);
    b[p++] = C.zero + (Math.floor(r / 10) % 10);
    b[p++] = C.zero + (r % 10);
    b[p++] = C.Z;
    this.pos = p;
  }
}

/** The UTF-8 bytes of a string (for constants written per row). */
export function utf8(s: string): Uint8Array {
  return Buffer.from(s, 'utf8');
}

/** Join chunks into one string (the string-returning writers, tests). */
export function chunksToString(chunks: Iterable<Uint8Array>): string {
  const all: Uint8Array[] = [];
  for (const c of chunks) all.push(c);
  return Buffer.concat(all).toString('utf8');
}
