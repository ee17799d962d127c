/**
 * A lenient XML 1.0 tokenizer (W3C Recommendation, for the markup) for the GPX reader: tags with
 * their attributes and lines, and the text between them; not a validating parser. A file cut short
 * inside markup reports the line of the cut.
 */

const ENTITIES: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };

/** Replace the predefined XML entities and character references. */
export function decodeXmlText(s: string): string {
  if (!s.includes('&')) return s;
  return s.replace(/&(#x[0-9a-fA-F]{1,6}|#\d{1,7}|[a-zA-Z]+);/g, (m, e: string) => {
    if (e[0] === '#') {
      const cp = e[1] === 'x' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10);
      return cp <= 0x10ffff ? String.fromCodePoint(cp) : m;
    }
    return ENTITIES[e] ?? m;
  });
}

/** A tag of the markup: name without namespace prefix, attributes, and where it starts. */
export interface XmlTag {
  kind: 'open' | 'close' | 'empty';
  name: string;
  attrs: Record<string, string>;
  line: number;
}

export interface XmlEvents {
  tag(t: XmlTag): void;
  text(s: string, line: number): void;
}

const ATTR = /([^\s=/>]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g;

function localName(q: string): string {
  const c = q.indexOf(':');
  return c >= 0 ? q.slice(c + 1) : q;
}

/**
 * Walk the markup of `text`, calling back for tags and character data (CDATA included, entities
 * decoded). Returns null at a clean end, or the line where a construct was left unfinished.
 */
export function scanXml(text: string, ev: XmlEvents): number | null {
  let pos = 0;
  let line = 1;
  // the next line feed not yet counted (positions passed to lineOf only move forward)
  let nextNl = text.indexOf('\n');
  const lineOf = (p: number) => {
    while (nextNl >= 0 && nextNl < p) {
      line++;
      nextNl = text.indexOf('\n', nextNl + 1);
    }
    return line;
  };
  const n = text.length;
  while (pos < n) {
    const lt = text.indexOf('<', pos);
    if (lt < 0) {
      const rest = text.slice(pos);
      if (rest.trim() !== '') ev.text(decodeXmlText(rest), lineOf(pos));
      return null;
    }
    if (lt > pos) ev.text(decodeXmlText(text.slice(pos, lt)), lineOf(pos));
    const at = lineOf(lt);
    const declEnd = declarationEnd(text, lt, at, ev);
    if (declEnd === CUT) return at;
    if (declEnd !== NOT_DECLARATION) {
      pos = declEnd;
      continue;
    }
    const i = tagEnd(text, lt);
    if (i >= n) return at;
    // a "<" inside a tag: the tag was cut; resynchronise there
    if (text.charCodeAt(i) === 60) {
      pos = i;
      continue;
    }
    pos = i + 1;
    emitTag(text.slice(lt + 1, i), at, ev);
  }
  return null;
}

/** declarationEnd: the markup is cut short (no end before the end of the text). */
const CUT = -1;
/** declarationEnd: a tag, not a comment, CDATA section, processing instruction or DOCTYPE. */
const NOT_DECLARATION = -2;

/**
 * The position after the comment, CDATA section (its text to `ev`), processing instruction or
 * DOCTYPE (possibly with an internal subset in brackets) at `lt`; CUT or NOT_DECLARATION.
 */
function declarationEnd(text: string, lt: number, at: number, ev: XmlEvents): number {
  if (text.startsWith('<!--', lt)) {
    const e = text.indexOf('-->', lt + 4);
    return e < 0 ? CUT : e + 3;
  }
  if (text.startsWith('<![CDATA[', lt)) {
    const e = text.indexOf(']]>', lt + 9);
    if (e < 0) return CUT;
    ev.text(text.slice(lt + 9, e), at);
    return e + 3;
  }
  if (text.startsWith('<?', lt)) {
    const e = text.indexOf('?>', lt + 2);
    return e < 0 ? CUT : e + 2;
  }
  if (text.startsWith('<!', lt)) {
    const gt = text.indexOf('>', lt);
    if (gt < 0) return CUT;
    const br = text.slice(lt, gt).indexOf('[');
    if (br < 0) return gt + 1;
    const e = text.indexOf(']>', lt + br);
    return e < 0 ? CUT : e + 2;
  }
  return NOT_DECLARATION;
}

/** The index of the ">" ending the tag at `lt` (outside quoted attribute values), of a "<" before it, or the text's length. */
function tagEnd(text: string, lt: number): number {
  const n = text.length;
  let i = lt + 1;
  let q = 0;
  for (; i < n; i++) {
    const c = text.charCodeAt(i);
    if (q) {
      if (c === q) q = 0;
    } else if (c === 34 || c === 39) q = c;
    else if (c === 62 || c === 60) break;
  }
  return i;
}

/** The tag with text `inner` (between "<" and ">") to `ev`: close, empty or open with its attributes. */
function emitTag(inner: string, at: number, ev: XmlEvents): void {
  if (inner[0] === '/') {
    ev.tag({ kind: 'close', name: localName(inner.slice(1).trim()), attrs: {}, line: at });
    return;
  }
  const empty = inner.endsWith('/');
  const body = empty ? inner.slice(0, -1) : inner;
  const m = /^[^\s/>]+/.exec(body);
  if (!m) return;
  const attrs: Record<string, string> = {};
  ATTR.lastIndex = m[0].length;
  for (let a = ATTR.exec(body); a; a = ATTR.exec(body)) attrs[localName(a[1]!)] = decodeXmlText(a[2] ?? a[3] ?? '');
  ev.tag({ kind: empty ? 'empty' : 'open', name: localName(m[0]), attrs, line: at });
}
