import type { Diagnostic } from '../diagnostics.js';
import { cardText, parseCard, parseNumberToken, parseValueField } from './card.js';
import type { ParsedCard } from './card.js';
import { CARD_BYTES, paddedLength } from './constants.js';
import { DiagnosticSink } from './diagnosticSink.js';
import type { Card, CardValue, Header } from './types.js';

const VALUED = new Set(['value', 'undefined', 'hierarch']);

/** Header of one HDU: cards in file order, lookup by keyword (case-insensitive, first occurrence wins). */
export class FitsHeader implements Header {
  readonly cards: readonly Card[];
  private readonly byKeyword = new Map<string, Card>();

  /** Build from cards already merged (CONTINUE) and numbered; later duplicates are not indexed. */
  constructor(cards: readonly Card[]) {
    this.cards = cards;
    for (const card of cards) {
      if (!VALUED.has(card.kind)) continue;
      const key = card.keyword.toUpperCase();
      if (!this.byKeyword.has(key)) this.byKeyword.set(key, card);
      if (card.kind === 'hierarch' || (card.kind === 'undefined' && card.raw.startsWith('HIERARCH'))) {
        const long = `HIERARCH ${key}`;
        if (!this.byKeyword.has(long)) this.byKeyword.set(long, card);
      }
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
): FitsHeader {
  const cards: Card[] = [];
  const seen = new Set<string>();
  let pending: { card: Card; content: string; comments: string[] } | undefined;
  for (let n = 0; n < cardCount; n++) {
    const byte = offset + n * CARD_BYTES;
    const parsed: ParsedCard = parseCard(cardText(bytes, byte), n + 1);
    const card = parsed.card;
    for (const p of parsed.problems) {
      sink.warn(p.code, `card ${n + 1}: ${p.message}`, { hdu, card: n + 1, keyword: card.keyword, byte });
    }
    if (pending !== undefined && card.kind === 'commentary' && card.keyword.toUpperCase() === 'CONTINUE') {
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
    if (VALUED.has(card.kind)) {
      const key = card.keyword.toUpperCase();
      if (seen.has(key)) {
        sink.warn('FITS_DUPLICATE_KEYWORD', `card ${n + 1}: keyword ${card.keyword} repeats; the first value is used`, {
          hdu,
          card: n + 1,
          keyword: card.keyword,
          byte,
        });
      }
      seen.add(key);
      if (parsed.stringContent !== undefined && parsed.stringContent.replace(/ +$/, '').endsWith('&')) {
        pending = { card, content: parsed.stringContent, comments: card.comment === '' ? [] : [card.comment] };
      }
    }
    cards.push(card);
  }
  return new FitsHeader(cards);
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

