/**
 * The lines of a text as offsets, split as `text.split(/\r\n|\n|\r/)` splits it (the last line
 * empty when the text ends with a line break), without making a string per line: the plain-row
 * path reads straight from the text, and only the other rows are cut out (`at`). The offsets live in
 * Int32Arrays grown by doubling (a text is at most MAX_LOG_BYTES = 2^29 characters, below 2^31):
 * a million-line file grew two plain arrays by repeated reallocation, 0.24 s against 0.04 s.
 */
export class Lines {
  start: Int32Array;
  end: Int32Array;
  length = 0;

  constructor(private readonly text: string) {
    const s = text;
    let start = new Int32Array(4096);
    let end = new Int32Array(4096);
    let m = 0;
    let pos = 0;
    let lf = s.indexOf('\n');
    let cr = s.indexOf('\r');
    for (;;) {
      let b: number, len: number;
      if (cr >= 0 && (lf < 0 || cr < lf)) {
        b = cr;
        len = s.charCodeAt(cr + 1) === 10 ? 2 : 1; // "\r\n" or a lone "\r"
      } else if (lf >= 0) {
        b = lf;
        len = 1;
      } else b = len = -1;
      if (m === start.length) {
        const s2 = new Int32Array(2 * m);
        s2.set(start);
        start = s2;
        const e2 = new Int32Array(2 * m);
        e2.set(end);
        end = e2;
      }
      start[m] = pos;
      if (b < 0) {
        end[m++] = s.length; // the last line
        break;
      }
      end[m++] = b;
      pos = b + len;
      if (lf >= 0 && lf < pos) lf = s.indexOf('\n', pos);
      if (cr >= 0 && cr < pos) cr = s.indexOf('\r', pos);
    }
    this.start = start;
    this.end = end;
    this.length = m;
  }

  at(j: number): string {
    return this.text.slice(this.start[j]!, this.end[j]!);
  }

  isEmpty(j: number): boolean {
    return this.start[j] === this.end[j];
  }

  pop(): void {
    this.length--;
  }
}
