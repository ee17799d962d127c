/**
 * Bytes of a log to text. Rules (documented in docs/formats.md):
 * - UTF-8 with or without a byte-order mark (EF BB BF, Unicode Standard §23.8); bytes that are not
 *   valid UTF-8 become U+FFFD (a Latin-1 "°" in a header does not spoil a file);
 * - UTF-16 little or big endian with its BOM (FF FE / FE FF), or without a BOM when every other byte
 *   of the start is NUL (plain ASCII text saved as UTF-16);
 * - UTF-32 is refused (BOM 00 00 FE FF / FF FE 00 00), and so is binary content: NUL bytes in text
 *   that is not UTF-16, more than 5 % control characters or more than 30 % invalid UTF-8 in the
 *   first 64 Ki characters.
 */
import { InputError } from '../errors.js';

export type TextEncodingName = 'utf-8' | 'utf-16le' | 'utf-16be';

export interface DecodedText {
  text: string;
  encoding: TextEncodingName;
  bom: boolean;
}

const PROBE_BYTES = 65536;

/** UTF-16 without a BOM: the share of NUL bytes at odd (LE) or even (BE) offsets of the start. */
function sniffUtf16(buf: Uint8Array): TextEncodingName | null {
  const n = Math.min(buf.length, 4096) & ~1;
  if (n < 4) return null;
  let evenNul = 0;
  let oddNul = 0;
  for (let i = 0; i < n; i += 2) {
    if (buf[i] === 0) evenNul++;
    if (buf[i + 1] === 0) oddNul++;
  }
  const pairs = n / 2;
  if (oddNul >= 0.9 * pairs && evenNul <= 0.1 * pairs) return 'utf-16le';
  if (evenNul >= 0.9 * pairs && oddNul <= 0.1 * pairs) return 'utf-16be';
  return null;
}

/**
 * Shares of the first 64 Ki characters that text logs never hold: C0 controls other than tab, LF,
 * CR, FF (and DEL), and U+FFFD (bytes that were not UTF-8).
 */
function oddShares(text: string): { control: number; replacement: number } {
  const n = Math.min(text.length, PROBE_BYTES);
  if (n === 0) return { control: 0, replacement: 0 };
  let control = 0;
  let replacement = 0;
  for (let i = 0; i < n; i++) {
    const c = text.charCodeAt(i);
    if ((c < 0x20 && c !== 9 && c !== 10 && c !== 13 && c !== 12) || c === 0x7f) control++;
    else if (c === 0xfffd) replacement++;
  }
  return { control: control / n, replacement: replacement / n };
}

export function decodeLogBytes(buf: Uint8Array, file: string): DecodedText {
  if (buf.length === 0) throw new InputError({ file }, 'empty file');
  const b0 = buf[0], b1 = buf[1], b2 = buf[2], b3 = buf[3];
  if (buf.length >= 4 && ((b0 === 0 && b1 === 0 && b2 === 0xfe && b3 === 0xff) || (b0 === 0xff && b1 === 0xfe && b2 === 0 && b3 === 0)))
    throw new InputError({ file }, 'UTF-32 text is not supported; save the file as UTF-8');
  let encoding: TextEncodingName = 'utf-8';
  let bom = false;
  let start = 0;
  if (buf.length >= 3 && b0 === 0xef && b1 === 0xbb && b2 === 0xbf) {
    bom = true;
    start = 3;
  } else if (buf.length >= 2 && b0 === 0xff && b1 === 0xfe) {
    encoding = 'utf-16le';
    bom = true;
    start = 2;
  } else if (buf.length >= 2 && b0 === 0xfe && b1 === 0xff) {
    encoding = 'utf-16be';
    bom = true;
    start = 2;
  } else {
    encoding = sniffUtf16(buf) ?? 'utf-8';
  }
  const body = buf.subarray(start);
  if (encoding === 'utf-8') {
    const probe = body.subarray(0, Math.min(body.length, PROBE_BYTES));
    if (probe.includes(0)) throw new InputError({ file }, 'binary content (NUL bytes): not a text log');
  }
  let text: string;
  try {
    text = new TextDecoder(encoding, { fatal: false, ignoreBOM: true }).decode(body);
  } catch (e) {
    throw new InputError({ file }, `cannot decode as ${encoding}: ${(e as Error).message}`);
  }
  if (encoding !== 'utf-8' && text.slice(0, PROBE_BYTES).includes('\u0000'))
    throw new InputError({ file }, `binary content (NUL characters after decoding as ${encoding.toUpperCase()}): not a text log`);
  const odd = oddShares(text);
  if (odd.control > 0.05 || odd.replacement > 0.3) throw new InputError({ file }, 'binary content (control characters or invalid UTF-8): not a text log');
  return { text, encoding, bom };
}
