/**
 * NMEA 0183 sentence framing: lines to sentences ("$…*hh"), the checksum rule and the tally of the
 * sentences that cannot be used (see the rules in the header of nmea.ts and docs/formats.md).
 */

/** XOR of the character codes of `body` (the text strictly between "$" and "*"), 0–255. */
export function nmeaChecksum(body: string): number {
  let x = 0;
  for (let i = 0; i < body.length; i++) x ^= body.charCodeAt(i) & 0xff;
  return x;
}

export type NmeaSplit =
  | { ok: true; talker: string; type: string; fields: string[]; checksum: 'valid' | 'absent' }
  | { ok: false; reason: string; code: 'nmea-checksum' | 'nmea-malformed' };

/** Split one sentence ("$GPGGA,…*47", without line ending) into talker, type and fields, checking the sum. */
export function splitNmeaSentence(raw: string): NmeaSplit {
  const s = raw.trim();
  if (s[0] !== '$') return { ok: false, code: 'nmea-malformed', reason: 'does not start with "$"' };
  const star = s.lastIndexOf('*');
  let body: string;
  let checksum: 'valid' | 'absent' = 'absent';
  if (star >= 0) {
    body = s.slice(1, star);
    const hex = s.slice(star + 1);
    if (!/^[0-9A-Fa-f]{2}$/.test(hex)) return { ok: false, code: 'nmea-checksum', reason: `checksum "${hex.slice(0, 8)}" is not two hex digits` };
    const want = parseInt(hex, 16);
    const got = nmeaChecksum(body);
    if (want !== got)
      return { ok: false, code: 'nmea-checksum', reason: `checksum ${hex.toUpperCase()} does not match the sentence (computed ${got.toString(16).toUpperCase().padStart(2, '0')})` };
    checksum = 'valid';
  } else body = s.slice(1);
  const fields = body.split(',');
  const addr = fields[0]!;
  if (!/^[A-Z][A-Z0-9]{4,5}$/.test(addr)) return { ok: false, code: 'nmea-malformed', reason: `address field "${addr.slice(0, 12)}" is not a talker and sentence type` };
  // proprietary sentences ($P + maker code) are reported with talker "P"
  if (addr[0] === 'P') return { ok: true, talker: 'P', type: addr.slice(1), fields, checksum };
  return { ok: true, talker: addr.slice(0, addr.length - 3), type: addr.slice(-3), fields, checksum };
}

/** A sentence that passed framing and the checksum rule. */
export type NmeaSentence = Extract<NmeaSplit, { ok: true }>;

/** Problems listed one by one (the rest only counted). */
const LISTED_PROBLEMS = 100000;

/** Counts of the sentences that could not be used, and their problems in file order. */
export class NmeaSentenceTally {
  readonly bad = { checksum: 0, malformed: 0, decode: 0, noChecksum: 0, garbage: 0 };
  readonly problems: Array<{ code: string; message: string; line: number }> = [];
  sentences = 0;
  firstBadLine = 0;

  note(code: string, message: string, line: number): void {
    if (this.problems.length < LISTED_PROBLEMS) this.problems.push({ code, message, line });
  }
}

/** Any "*hh" at the end of a sentence anywhere in the file: then checksums are required. */
export function fileHasNmeaChecksums(body: string): boolean {
  return /\*[0-9A-Fa-f]{2}\s*(\r|\n|$)/.test(body);
}

function splitLines(text: string): string[] {
  return text.split(/\r\n|\n|\r/);
}

/**
 * Frame the sentences of `body`, check each one's sum and pass the usable, non-proprietary ones to
 * `visit` with their 1-based line; the others are counted in `tally`.
 */
export function frameNmeaSentences(body: string, requireChecksum: boolean, tally: NmeaSentenceTally, visit: (sp: NmeaSentence, lineNo: number) => void): void {
  const lines = splitLines(body);
  for (let li = 0; li < lines.length; li++) {
    const lineNo = li + 1;
    const rawLine = lines[li]!;
    if (rawLine.trim() === '') continue;
    const dollar = rawLine.indexOf('$');
    if (dollar < 0) {
      tally.bad.garbage++;
      tally.note('nmea-malformed', `not an NMEA sentence: "${rawLine.trim().slice(0, 40)}"`, lineNo);
      continue;
    }
    // one line may hold more than one sentence when a line ending was lost
    const pieces = rawLine.slice(dollar).split('$');
    for (let pi = 1; pi < pieces.length; pi++) {
      const raw = '$' + pieces[pi]!;
      if (raw.trim() === '$') continue;
      const sp = checkedSentence(raw, requireChecksum, tally, lineNo);
      if (sp && sp.talker !== 'P') visit(sp, lineNo);
    }
  }
}

/** One framed sentence split and checked; null (counted in `tally`) when it cannot be used. */
function checkedSentence(raw: string, requireChecksum: boolean, tally: NmeaSentenceTally, lineNo: number): NmeaSentence | null {
  tally.sentences++;
  const sp = splitNmeaSentence(raw);
  if (!sp.ok) {
    if (sp.code === 'nmea-checksum') tally.bad.checksum++;
    else tally.bad.malformed++;
    if (!tally.firstBadLine) tally.firstBadLine = lineNo;
    tally.note(sp.code, `sentence skipped: ${sp.reason}`, lineNo);
    return null;
  }
  if (sp.checksum === 'absent' && requireChecksum) {
    tally.bad.noChecksum++;
    if (!tally.firstBadLine) tally.firstBadLine = lineNo;
    tally.note('nmea-checksum', 'sentence skipped: no checksum (other sentences of the file have one; likely damaged)', lineNo);
    return null;
  }
  return sp;
}
