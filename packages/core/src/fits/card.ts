import type { Card, CardValue } from './types.js';

/** A problem found while reading one card; the header reader turns it into a diagnostic. */
export interface CardProblem {
  code: 'FITS_BAD_VALUE' | 'FITS_NONSTANDARD_CARD' | 'FITS_LOWERCASE_KEYWORD' | 'FITS_ILLEGAL_CHARACTER';
  message: string;
}

/** One card as read, with what the header reader needs to merge CONTINUE parts. */
export interface ParsedCard {
  card: Card;
  /** For string values: the characters between the quotes, quotes undoubled, trailing spaces kept. */
  stringContent?: string;
  problems: readonly CardProblem[];
  /** The keyword in upper case (the lookup key). */
  upper: string;
}

const COMMENTARY = new Set(['COMMENT', 'HISTORY', '']);
const KEYWORD_RE = /^[A-Z0-9_-]*$/;
const INTEGER_RE = /^[+-]?[0-9]+$/;
// Real: integer part or fraction (not both omitted), optional exponent; E/D per FITS 3.0 §4.2.4,
// lower-case e/d accepted as reader leniency (REFERENCE A.3, common practice).
const REAL_RE = /^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[EeDd][+-]?[0-9]+)?$/;

// WHATWG 'latin1' is windows-1252: still one UTF-16 unit per byte, so positions stay byte positions
// (0x80-0x9F become other characters, but those bytes are illegal in headers anyway).
const LATIN1 = new TextDecoder('latin1');

/** Bytes as text, one UTF-16 unit per byte, so character positions are byte positions. */
export function bytesText(bytes: Uint8Array, start: number, end: number): string {
  return LATIN1.decode(bytes.subarray(start, end));
}

/** Parse a number token of a value field; undefined when it is not an integer or real. */
export function parseNumberToken(token: string): number | bigint | undefined {
  if (INTEGER_RE.test(token)) {
    const n = Number(token);
    return Number.isSafeInteger(n) ? n : BigInt(token);
  }
  if (REAL_RE.test(token)) {
    const n = Number(token.replace(/[Dd]/, 'E'));
    return Number.isNaN(n) ? undefined : n;
  }
  return undefined;
}

interface ValueField {
  kind: 'value' | 'undefined';
  value: CardValue;
  comment: string;
  stringContent?: string;
  bad?: string;
}

/** After a value ends at `pos`, read "[spaces] [/ comment]"; returns the comment or undefined when junk follows. */
function tail(text: string, pos: number): string | undefined {
  let i = pos;
  while (i < text.length && text.charCodeAt(i) === 0x20) i++;
  if (i >= text.length) return '';
  if (text.charCodeAt(i) !== 0x2f) return undefined;
  return text.slice(i + 1).trim();
}

/** Parse a free-format value field (FITS 3.0 §4.2): string, logical, integer, real, complex or blank. */
export function parseValueField(text: string): ValueField {
  let i = 0;
  while (i < text.length && text.charCodeAt(i) === 0x20) i++;
  if (i >= text.length) return { kind: 'undefined', value: null, comment: '' };
  const first = text.charCodeAt(i);
  if (first === 0x2f) return { kind: 'undefined', value: null, comment: text.slice(i + 1).trim() };
  if (first === 0x27) {
    // String: a doubled quote stands for one quote (FITS 3.0 §4.2.1).
    let content = '';
    let j = i + 1;
    let closed = false;
    while (j < text.length) {
      const q = text.indexOf("'", j);
      if (q < 0) break;
      content += text.slice(j, q);
      if (text.charCodeAt(q + 1) === 0x27) {
        content += "'";
        j = q + 2;
      } else {
        j = q + 1;
        closed = true;
        break;
      }
    }
    if (!closed) return { kind: 'undefined', value: null, comment: '', bad: 'string without closing quote' };
    const comment = tail(text, j);
    if (comment === undefined) return { kind: 'undefined', value: null, comment: '', bad: 'text after the closing quote' };
    // Trailing spaces are not significant, leading spaces are (FITS 3.0 §4.2.1).
    return { kind: 'value', value: content.replace(/ +$/, ''), comment, stringContent: content };
  }
  if (first === 0x28) {
    const close = text.indexOf(')', i);
    if (close < 0) return { kind: 'undefined', value: null, comment: '', bad: 'complex value without closing parenthesis' };
    const parts = text.slice(i + 1, close).split(',');
    const re = parts.length === 2 ? parseNumberToken((parts[0] ?? '').trim()) : undefined;
    const im = parts.length === 2 ? parseNumberToken((parts[1] ?? '').trim()) : undefined;
    const comment = tail(text, close + 1);
    if (re === undefined || im === undefined || comment === undefined) {
      return { kind: 'undefined', value: null, comment: '', bad: 'malformed complex value' };
    }
    return { kind: 'value', value: { re: Number(re), im: Number(im) }, comment };
  }
  const slash = text.indexOf('/', i);
  const token = (slash < 0 ? text.slice(i) : text.slice(i, slash)).trimEnd();
  const comment = slash < 0 ? '' : text.slice(slash + 1).trim();
  if (token === 'T' || token === 'F') return { kind: 'value', value: token === 'T', comment };
  const n = parseNumberToken(token);
  if (n === undefined) return { kind: 'undefined', value: null, comment, bad: `unreadable value '${token.slice(0, 20)}'` };
  return { kind: 'value', value: n, comment };
}

const NON_PRINTABLE = /[^\x20-\x7e]/;
const LOWER = /[a-z]/;
const NONE: readonly CardProblem[] = Object.freeze([]);

function withProblem(problems: readonly CardProblem[], p: CardProblem): CardProblem[] {
  return problems === NONE ? [p] : [...problems, p];
}

/**
 * Parse one 80-character card (FITS 3.0 §4.1-4.2, HIERARCH and CONTINUE conventions).
 * CONTINUE cards are returned as commentary; the header reader merges them into long strings.
 *
 * @param raw - the 80 characters of the card, one per byte.
 * @param index - 1-based position of the card in its header.
 * @example parseCard("OBJECT  = 'O''HARA  '".padEnd(80), 1).card.value // "O'HARA"
 */
export function parseCard(raw: string, index: number, checkCharacters = true): ParsedCard {
  let problems = NONE;
  if (checkCharacters && NON_PRINTABLE.test(raw)) {
    const at = raw.search(NON_PRINTABLE);
    const c = raw.charCodeAt(at);
    problems = withProblem(problems, { code: 'FITS_ILLEGAL_CHARACTER', message: `byte 0x${c.toString(16).padStart(2, '0')} at column ${at + 1}` });
  }
  const field = raw.slice(0, 8).trimEnd();
  if (field === 'END') return { card: { index, keyword: 'END', kind: 'end', value: null, comment: '', raw }, problems, upper: 'END' };
  let upper = field;
  if (LOWER.test(field)) {
    upper = field.toUpperCase();
    problems = withProblem(problems, { code: 'FITS_LOWERCASE_KEYWORD', message: `keyword '${field}' is not upper case` });
  } else if (!KEYWORD_RE.test(field)) {
    problems = withProblem(problems, { code: 'FITS_NONSTANDARD_CARD', message: `keyword '${field}' has characters outside A-Z 0-9 - _` });
  }
  if (COMMENTARY.has(upper)) {
    // Commentary keywords never carry a value, even with "= " in bytes 9-10 (FITS 3.0 §4.4.2.4).
    return { card: { index, keyword: field, kind: 'commentary', value: null, comment: raw.slice(8).trimEnd(), raw }, problems, upper };
  }
  if (upper === 'HIERARCH') {
    const rest = raw.slice(8);
    const eq = rest.indexOf('=');
    const name = eq < 0 ? '' : rest.slice(0, eq).trim().split(/ +/).join(' ');
    if (name !== '') {
      const v = parseValueField(rest.slice(eq + 1));
      if (v.bad) problems = withProblem(problems, { code: 'FITS_BAD_VALUE', message: `HIERARCH ${name}: ${v.bad}` });
      const card: Card = { index, keyword: name, kind: v.kind === 'value' ? 'hierarch' : 'undefined', value: v.value, comment: v.comment, raw };
      const key = name.toUpperCase();
      return v.stringContent === undefined ? { card, problems, upper: key } : { card, problems, upper: key, stringContent: v.stringContent };
    }
    return { card: { index, keyword: upper, kind: 'commentary', value: null, comment: raw.slice(8).trimEnd(), raw }, problems, upper };
  }
  if (raw.charCodeAt(8) === 0x3d) {
    // Value indicator "= " in bytes 9-10; "=" alone is accepted (common practice).
    const v = parseValueField(raw.slice(raw.charCodeAt(9) === 0x20 ? 10 : 9));
    if (v.bad) problems = withProblem(problems, { code: 'FITS_BAD_VALUE', message: `${upper}: ${v.bad}` });
    const card: Card = { index, keyword: field, kind: v.kind, value: v.value, comment: v.comment, raw };
    return v.stringContent === undefined ? { card, problems, upper } : { card, problems, upper, stringContent: v.stringContent };
  }
  // No value indicator: commentary text (this is how CONTINUE reaches the header reader).
  return { card: { index, keyword: field, kind: 'commentary', value: null, comment: raw.slice(8).trimEnd(), raw }, problems, upper };
}
