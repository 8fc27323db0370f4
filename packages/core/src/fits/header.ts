import type { Diagnostic } from '../diagnostics.js';
import { bytesText, parseCard, parseNumberToken, parseValueField } from './card.js';
import type { ParsedCard } from './card.js';
import { CARD_BYTES, paddedLength } from './constants.js';
import { DiagnosticSink } from './diagnosticSink.js';
import type { Card, CardValue, Header } from './types.js';

const VALUED = new Set(['value', 'undefined', 'hierarch']);

/** Index a valued card under its upper-case keyword (and `HIERARCH <name>`); false when already there. */
function indexCard(map: Map<string, Card>, card: Card, key: string): boolean {
  if (map.has(key)) return false;
  map.set(key, card);
  if (card.raw.charCodeAt(0) === 0x48 && card.raw.startsWith('HIERARCH')) {
    const long = `HIERARCH ${key}`;
    if (!map.has(long)) map.set(long, card);
  }
  return true;
}

/** Header of one HDU: cards in file order, lookup by keyword (case-insensitive, first occurrence wins). */
export class FitsHeader implements Header {
  readonly cards: readonly Card[];
  private readonly byKeyword: Map<string, Card> = new Map();

  /**
   * Build from cards already merged (CONTINUE) and numbered; later duplicates are not indexed.
   * `index` (upper-case keyword → first valued card) may be passed when already built.
   */
  constructor(cards: readonly Card[], index?: Map<string, Card>) {
    this.cards = cards;
    if (index !== undefined) {
      this.byKeyword = index;
      return;
    }
    for (const card of cards) {
      if (!VALUED.has(card.kind)) continue;
      indexCard(this.byKeyword, card, card.keyword.toUpperCase());
    }
  }

  private find(keyword: string): Card | undefined {
    return this.byKeyword.get(keyword.trim().toUpperCase());
  }

  has(keyword: string): boolean {
    return this.find(keyword) !== undefined;
  }

  get(keyword: string): CardValue | undefined {
    return this.find(keyword)?.value;
  }

  number(keyword: string): number | undefined {
    const v = this.get(keyword);
    let n: number | undefined;
    if (typeof v === 'number') n = v;
    else if (typeof v === 'bigint') n = Number(v);
    else if (typeof v === 'string') {
      const parsed = parseNumberToken(v.trim());
      n = parsed === undefined ? undefined : Number(parsed);
    }
    return n !== undefined && Number.isFinite(n) ? n : undefined;
  }

  string(keyword: string): string | undefined {
    const v = this.get(keyword);
    return typeof v === 'string' ? v.trim() : undefined;
  }

  boolean(keyword: string): boolean | undefined {
    const v = this.get(keyword);
    return typeof v === 'boolean' ? v : undefined;
  }

  comment(keyword: string): string | undefined {
    return this.find(keyword)?.comment;
  }

  commentary(keyword: 'COMMENT' | 'HISTORY' | ''): string[] {
    const key = keyword.toUpperCase();
    const out: string[] = [];
    for (const card of this.cards) {
      if (card.kind === 'commentary' && card.keyword.toUpperCase() === key) out.push(card.comment);
    }
    return out;
  }
}

/** Result of scanning for the END card. */
export interface HeaderExtent {
  /** Number of cards before END. */
  cardCount: number;
  /** Header length rounded up to whole blocks. */
  headerBytes: number;
}

/** True when the card at `offset` is END: bytes 1-8 are `END` and five spaces (FITS 3.0 §4.4.1). */
function isEndCard(bytes: Uint8Array, offset: number): boolean {
  return (
    bytes[offset] === 0x45 &&
    bytes[offset + 1] === 0x4e &&
    bytes[offset + 2] === 0x44 &&
    bytes[offset + 3] === 0x20 &&
    bytes[offset + 4] === 0x20 &&
    bytes[offset + 5] === 0x20 &&
    bytes[offset + 6] === 0x20 &&
    bytes[offset + 7] === 0x20
  );
}

/**
 * Find the END card of a header starting at `offset`; undefined when the bytes end first.
 * Only whole cards are examined.
 */
export function findHeaderEnd(bytes: Uint8Array, offset: number): HeaderExtent | undefined {
  for (let p = offset, n = 0; p + CARD_BYTES <= bytes.length; p += CARD_BYTES, n++) {
    if (isEndCard(bytes, p)) return { cardCount: n, headerBytes: paddedLength((n + 1) * CARD_BYTES) };
  }
  return undefined;
}

/**
 * Read `cardCount` cards at `offset` into a header: CONTINUE long strings merged (registered
 * CONTINUE convention, REFERENCE A.8.1), problems reported to `sink`.
 */
export function readHeaderCards(
  bytes: Uint8Array,
  offset: number,
  cardCount: number,
  hdu: number,
  sink: DiagnosticSink,
  /** File offset of bytes[0] (for partial reads), so diagnostics carry file positions. */
  base = 0,
): FitsHeader {
  const cards: Card[] = [];
  const index = new Map<string, Card>();
  let pending: { card: Card; content: string; comments: string[] } | undefined;
  const text = bytesText(bytes, offset, offset + cardCount * CARD_BYTES);
  // One scan of the whole header for bytes outside 0x20-0x7E (FITS 3.0 §3.2); cards check only then.
  const check = /[^\x20-\x7e]/.test(text);
  for (let n = 0; n < cardCount; n++) {
    const byte = base + offset + n * CARD_BYTES;
    const parsed: ParsedCard = parseCard(text.slice(n * CARD_BYTES, (n + 1) * CARD_BYTES), n + 1, check);
    const card = parsed.card;
    for (let k = 0; k < parsed.problems.length; k++) {
      const p = parsed.problems[k]!;
      sink.warn(p.code, `card ${n + 1}: ${p.message}`, { hdu, card: n + 1, keyword: card.keyword, byte });
    }
    if (pending !== undefined && card.kind === 'commentary' && card.keyword === 'CONTINUE') {
      const v = parseValueField(card.raw.slice(8));
      if (v.stringContent !== undefined) {
        // Drop the '&' and anything after it, keep what precedes it, append the next part.
        const head = pending.content.replace(/ +$/, '');
        const content = head.slice(0, -1) + v.stringContent;
        pending.content = content;
        pending.card.value = content.replace(/ +$/, '');
        if (v.comment !== '') pending.comments.push(v.comment);
        pending.card.comment = pending.comments.join(' ');
        cards.push({ index: n + 1, keyword: 'CONTINUE', kind: 'continue', value: null, comment: v.comment, raw: card.raw });
        if (!content.replace(/ +$/, '').endsWith('&')) pending = undefined;
        continue;
      }
    }
    pending = undefined;
    if (card.kind === 'value' || card.kind === 'undefined' || card.kind === 'hierarch') {
      if (!indexCard(index, card, parsed.upper)) {
        sink.warn('FITS_DUPLICATE_KEYWORD', `card ${n + 1}: keyword ${card.keyword} repeats; the first value is used`, {
          hdu,
          card: n + 1,
          keyword: card.keyword,
          byte,
        });
      }
      const content = parsed.stringContent;
      if (content !== undefined && content.replace(/ +$/, '').endsWith('&')) {
        pending = { card, content, comments: card.comment === '' ? [] : [card.comment] };
      }
    }
    cards.push(card);
  }
  return new FitsHeader(cards, index);
}

/** Options for {@link parseHeaderBlocks}. */
export interface HeaderBlockOptions {
  /** Turn warning diagnostics into FitsFormatError. */
  strict?: boolean;
  /** File name for locations. */
  file?: string;
}

/**
 * Parse one FITS header (80-byte cards up to END) without the mandatory-keyword checks of a full
 * HDU. Useful for headers kept apart from their data.
 *
 * @param bytes - header bytes; the header starts at byte 0.
 * @returns the header, its length in bytes (whole 2880-byte blocks) and diagnostics.
 * @throws FitsFormatError 'FITS_NO_END' when no END card is found; warnings in strict mode.
 * @example
 * const { header } = parseHeaderBlocks(bytes);
 * header.number('EXPTIME'); // 300
 */
export function parseHeaderBlocks(
  bytes: Uint8Array,
  opts: HeaderBlockOptions = {},
): { header: Header; headerBytes: number; diagnostics: Diagnostic[] } {
  const sink = new DiagnosticSink(opts.strict === true, opts.file);
  const extent = findHeaderEnd(bytes, 0);
  if (extent === undefined) throw sink.error('FITS_NO_END', 'no END card before the end of the bytes', { byte: 0 });
  const header = readHeaderCards(bytes, 0, extent.cardCount, 0, sink);
  return { header, headerBytes: extent.headerBytes, diagnostics: sink.list };
}

