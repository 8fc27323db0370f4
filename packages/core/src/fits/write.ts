import { InvalidInputError } from '../errors.js';
import { encodeChecksum, onesComplementAdd, onesComplementSum } from './checksum.js';
import { CARD_BYTES, paddedLength } from './constants.js';
import { HOST_LITTLE_ENDIAN } from './decode.js';
import type { WriteCard, WriteImage } from './types.js';

const STANDARD_KEYWORD = /^[A-Z0-9_-]{1,8}$/;
const HIERARCH_NAME = /^[A-Za-z0-9_-]+(?: [A-Za-z0-9_-]+)*$/;
const PRINTABLE = /^[\x20-\x7e]*$/;
const COMMENTARY = new Set(['COMMENT', 'HISTORY', '']);
/** Keywords encodeFits writes itself; user cards may not set them. */
const RESERVED = /^(SIMPLE|XTENSION|BITPIX|NAXIS[0-9]*|PCOUNT|GCOUNT|EXTEND|BZERO|BSCALE|CHECKSUM|DATASUM|END|CONTINUE)$/;

function bad(message: string, keyword?: string): InvalidInputError {
  return new InvalidInputError('INPUT_BAD_PARAMETER', message, keyword === undefined ? {} : { keyword });
}

/** Real number text that always reads back as a real: a '.' or an exponent, E upper case (FITS 3.0 §4.2.4). */
function realText(x: number): string {
  if (Object.is(x, -0)) return '-0.0';
  const s = String(x).replace('e', 'E');
  return s.includes('.') || s.includes('E') ? s : `${s}.0`;
}

/** The value field text and whether it is right-justified to byte 30 (fixed format, FITS 3.0 §4.2). */
function valueText(card: WriteCard): { text: string; fixed: boolean } | undefined {
  const v = card.value;
  if (v === undefined || v === null) return undefined;
  if (typeof v === 'boolean') return { text: v ? 'T' : 'F', fixed: true };
  if (typeof v === 'bigint') return { text: v.toString(), fixed: true };
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) throw bad(`${card.keyword}: ${v} cannot be written in FITS`, card.keyword);
    if (Number.isInteger(v) && card.real !== true) {
      return { text: Math.abs(v) < 1e21 ? String(v === 0 ? 0 : v) : BigInt(v).toString(), fixed: true };
    }
    return { text: realText(v), fixed: true };
  }
  throw bad(`${card.keyword}: unsupported value type ${typeof v}`, card.keyword);
}

/** Quote a string: quotes doubled, padded to 8 characters as common writers do (FITS 3.0 §4.2.1). */
function quoted(s: string): string {
  return `'${s.replace(/'/g, "''").padEnd(8)}'`;
}

function withComment(head: string, comment: string | undefined): string {
  if (comment === undefined || comment === '') return head.padEnd(CARD_BYTES);
  if (!PRINTABLE.test(comment)) throw bad('comment holds characters outside ASCII 32-126');
  const room = CARD_BYTES - head.length - 3;
  // Comments that do not fit are cut (they carry no value); a value that leaves no room drops it.
  if (room <= 0) return head.padEnd(CARD_BYTES);
  return `${head} / ${comment.slice(0, room)}`.padEnd(CARD_BYTES);
}

/** Split a string into pieces whose quoted-escaped length is at most `max`. */
function splitEscaped(s: string, max: number): string[] {
  const parts: string[] = [];
  let cur = '';
  let len = 0;
  for (const ch of s) {
    const w = ch === "'" ? 2 : 1;
    if (len + w > max) {
      parts.push(cur);
      cur = '';
      len = 0;
    }
    cur += ch;
    len += w;
  }
  parts.push(cur);
  return parts;
}

/**
 * Format one keyword as the 80-character cards that hold it: fixed format (logical and numbers
 * right-justified ending in byte 30, strings opening in byte 11; FITS 3.0 §4.2), long strings split
 * with CONTINUE (registered convention, REFERENCE A.8.1), long commentary split over several cards,
 * keywords longer than 8 characters or with spaces written as HIERARCH (REFERENCE A.8.2).
 *
 * @throws InvalidInputError 'INPUT_BAD_PARAMETER' for a keyword FITS cannot hold, NaN or infinite
 *   numbers, or characters outside ASCII 32-126.
 * @example formatCards({ keyword: 'EXPTIME', value: 300, real: true })
 * // ['EXPTIME =                300.0' + spaces]
 */
export function formatCards(card: WriteCard): string[] {
  const keyword = card.keyword;
  if (COMMENTARY.has(keyword)) {
    const text = typeof card.value === 'string' ? card.value : card.comment ?? '';
    if (!PRINTABLE.test(text)) throw bad(`${keyword || 'blank keyword'}: text holds characters outside ASCII 32-126`, keyword);
    const chunks: string[] = [];
    for (let i = 0; i < text.length; i += 72) chunks.push(text.slice(i, i + 72));
    if (chunks.length === 0) chunks.push('');
    return chunks.map((t) => `${keyword.padEnd(8)}${t}`.padEnd(CARD_BYTES));
  }
  const hierarch = !STANDARD_KEYWORD.test(keyword);
  let name = keyword;
  if (hierarch) {
    name = keyword.startsWith('HIERARCH ') ? keyword.slice(9) : keyword;
    if (!HIERARCH_NAME.test(name) || (name.length <= 8 && !name.includes(' ') && !keyword.startsWith('HIERARCH '))) {
      throw bad(`keyword '${keyword.slice(0, 20)}' is not a FITS keyword (A-Z, 0-9, - and _, at most 8) nor a HIERARCH name`, keyword);
    }
  }
  const prefix = hierarch ? `HIERARCH ${name} = ` : `${keyword.padEnd(8)}= `;
  if (typeof card.value === 'string') {
    const s = card.value;
    if (!PRINTABLE.test(s)) throw bad(`${keyword}: string holds characters outside ASCII 32-126`, keyword);
    // With a comment, the value field is padded to 20 characters (bytes 11-30) as astropy does, so
    // astropy's re-serialised CHECKSUM card matches ours byte for byte (astropy 5.2.1 card.py).
    const one = `${prefix}${card.comment ? quoted(s).padEnd(20) : quoted(s)}`;
    if (one.length <= CARD_BYTES) return [withComment(one, card.comment)];
    if (hierarch) throw bad(`HIERARCH ${name}: the value does not fit in one card`, keyword);
    // Long string: every piece but the last ends with '&' inside the quotes.
    const pieces = splitEscaped(s, 67);
    const out: string[] = [];
    pieces.forEach((p, i) => {
      const last = i === pieces.length - 1;
      const body = `'${p.replace(/'/g, "''")}${last ? '' : '&'}'`;
      const head = i === 0 ? `${prefix}${body}` : `CONTINUE  ${body}`;
      out.push(last ? withComment(head, card.comment) : head.padEnd(CARD_BYTES));
    });
    return out;
  }
  const v = valueText(card);
  const field = v === undefined ? ''.padEnd(20) : v.text.padStart(20);
  const head = hierarch ? `${prefix}${v?.text ?? ''}` : `${prefix}${field}`;
  if (head.length > CARD_BYTES) throw bad(`${keyword}: the value does not fit in one card`, keyword);
  return [withComment(head, card.comment)];
}

/**
 * Format one keyword as a single 80-character card (see {@link formatCards} for the rules).
 * @throws InvalidInputError 'INPUT_BAD_PARAMETER' for impossible cards, including values that need
 *   more than one card (use formatCards for long strings).
 * @example formatCard({ keyword: 'BZERO', value: 32768 }) // 'BZERO   =                32768' + spaces
 */
export function formatCard(card: WriteCard): string {
  const cards = formatCards(card);
  if (cards.length !== 1) throw bad(`${card.keyword}: the value needs ${cards.length} cards; use formatCards`, card.keyword);
  return cards[0]!;
}

interface Plan {
  bitpix: number;
  cards: string[];
  /** Index of the CHECKSUM card among `cards`, or -1. */
  checksumAt: number;
  datasumAt: number;
  dataBytes: number;
  image: WriteImage;
}

function bitpixOf(pixels: WriteImage['pixels']): { bitpix: number; bzero?: number } {
  if (pixels instanceof Uint8Array) return { bitpix: 8 };
  if (pixels instanceof Int16Array) return { bitpix: 16 };
  if (pixels instanceof Uint16Array) return { bitpix: 16, bzero: 32768 };
  if (pixels instanceof Int32Array) return { bitpix: 32 };
  if (pixels instanceof Uint32Array) return { bitpix: 32, bzero: 2147483648 };
  if (pixels instanceof Float32Array) return { bitpix: -32 };
  if (pixels instanceof Float64Array) return { bitpix: -64 };
  throw bad('pixels must be a Uint8Array, Int16Array, Uint16Array, Int32Array, Uint32Array, Float32Array or Float64Array');
}

function planOf(image: WriteImage, index: number, extensions: boolean): Plan {
  const { width, height } = image;
  const planes = image.planes ?? 1;
  for (const [name, n] of [['width', width], ['height', height], ['planes', planes]] as const) {
    if (!Number.isSafeInteger(n) || n < 0) throw bad(`image ${index}: ${name} must be a non-negative integer; found ${n}`);
  }
  const count = width * height * planes;
  if (image.pixels.length !== count) {
    throw new InvalidInputError('INPUT_SHAPE_MISMATCH', `image ${index}: ${image.pixels.length} pixels for ${width} x ${height} x ${planes}`, {});
  }
  const { bitpix, bzero } = bitpixOf(image.pixels);
  const axes = count === 0 ? [] : planes === 1 ? [width, height] : [width, height, planes];
  const cards: string[] = [];
  const put = (c: WriteCard) => cards.push(...formatCards(c));
  if (index === 0) put({ keyword: 'SIMPLE', value: true, comment: 'conforms to FITS standard' });
  else put({ keyword: 'XTENSION', value: 'IMAGE', comment: 'image extension' });
  put({ keyword: 'BITPIX', value: bitpix, comment: 'array data type' });
  put({ keyword: 'NAXIS', value: axes.length, comment: 'number of array dimensions' });
  axes.forEach((n, i) => put({ keyword: `NAXIS${i + 1}`, value: n }));
  if (index > 0) {
    put({ keyword: 'PCOUNT', value: 0, comment: 'number of parameters' });
    put({ keyword: 'GCOUNT', value: 1, comment: 'number of groups' });
  }
  if (index === 0 && extensions) put({ keyword: 'EXTEND', value: true, comment: 'extensions may follow' });
  if (bzero !== undefined) {
    // Unsigned integers by offset (FITS 3.0 Table 4.9).
    put({ keyword: 'BSCALE', value: 1 });
    put({ keyword: 'BZERO', value: bzero, comment: 'offset for unsigned integers' });
  }
  let longStrings = (image.cards ?? []).some((c) => c.keyword === 'LONGSTRN');
  for (const c of image.cards ?? []) {
    if (RESERVED.test(c.keyword)) throw bad(`image ${index}: card ${c.keyword} is written by encodeFits itself`, c.keyword);
    const formatted = formatCards(c);
    if (formatted.length > 1 && typeof c.value === 'string' && !longStrings) {
      // fitsverify recommends flagging the CONTINUE convention with LONGSTRN (HEASARC OGIP 1.0).
      put({ keyword: 'LONGSTRN', value: 'OGIP 1.0', comment: 'long strings use CONTINUE' });
      longStrings = true;
    }
    cards.push(...formatted);
  }
  let checksumAt = -1;
  let datasumAt = -1;
  if (image.checksum !== false) {
    checksumAt = cards.length;
    put({ keyword: 'CHECKSUM', value: '0000000000000000', comment: 'HDU checksum' });
    datasumAt = cards.length;
    put({ keyword: 'DATASUM', value: '0', comment: 'data unit checksum' });
  }
  cards.push('END'.padEnd(CARD_BYTES));
  return { bitpix, cards, checksumAt, datasumAt, dataBytes: count * (Math.abs(bitpix) / 8), image };
}

function writeAscii(out: Uint8Array, offset: number, text: string): void {
  for (let i = 0; i < text.length; i++) out[offset + i] = text.charCodeAt(i);
}

/** Copy pixels into `out` at a 4-aligned offset as big-endian (one copy, swapped in place). */
function writeData(out: Uint8Array, offset: number, plan: Plan): void {
  const px = plan.image.pixels;
  const n = plan.dataBytes;
  out.set(new Uint8Array(px.buffer, px.byteOffset, n), offset);
  if (!HOST_LITTLE_ENDIAN) {
    if (px instanceof Uint16Array) for (let i = offset; i < offset + n; i += 2) out[i] = out[i]! ^ 0x80;
    if (px instanceof Uint32Array) for (let i = offset; i < offset + n; i += 4) out[i] = out[i]! ^ 0x80;
    return;
  }
  const words = new Uint32Array(out.buffer, out.byteOffset + offset, Math.ceil(n / 4));
  const size = Math.abs(plan.bitpix);
  if (size === 16) {
    // stored = value - 32768 = value xor 0x8000 (FITS 3.0 Table 4.9), applied before the byte swap.
    const mask = px instanceof Uint16Array ? 0x80008000 : 0;
    for (let i = 0; i < words.length; i++) {
      const w = words[i]! ^ mask;
      words[i] = ((w & 0x00ff00ff) << 8) | ((w >>> 8) & 0x00ff00ff);
    }
    if (n % 4 !== 0) {
      // The half-word past the data went through the xor too; restore its zero padding.
      out[offset + n] = 0;
      out[offset + n + 1] = 0;
    }
  } else if (size === 32) {
    const mask = px instanceof Uint32Array ? 0x80000000 : 0;
    for (let i = 0; i < words.length; i++) {
      const w = words[i]! ^ mask;
      words[i] = (w >>> 24) | ((w >>> 8) & 0xff00) | ((w & 0xff00) << 8) | (w << 24);
    }
  } else if (size === 64) {
    for (let i = 0; i + 1 < words.length; i += 2) {
      const a = words[i]!;
      const b = words[i + 1]!;
      words[i] = (b >>> 24) | ((b >>> 8) & 0xff00) | ((b & 0xff00) << 8) | (b << 24);
      words[i + 1] = (a >>> 24) | ((a >>> 8) & 0xff00) | ((a & 0xff00) << 8) | (a << 24);
    }
  }
}

/**
 * Write images as a FITS file: the first as the primary HDU, the rest as IMAGE extensions
 * (FITS 3.0 §4.4.1, §7.1). Uint16Array and Uint32Array are stored with BZERO 32768 / 2147483648,
 * Float32Array as BITPIX -32. CHECKSUM and DATASUM are added unless `checksum: false`
 * (FITS Checksum Proposal). Headers are space-padded, data zero-padded to 2880-byte blocks.
 *
 * @param images - one or more images; width/height/planes must match the pixel count.
 * @returns the bytes of the file.
 * @throws InvalidInputError 'INPUT_BAD_PARAMETER' (bad card, reserved keyword, no images) or
 *   'INPUT_SHAPE_MISMATCH' (pixel count differs from width x height x planes).
 * @example encodeFits([{ pixels: new Uint16Array(100), width: 10, height: 10 }])
 */
export function encodeFits(images: WriteImage[]): Uint8Array {
  if (images.length === 0) throw bad('encodeFits needs at least one image');
  const plans = images.map((img, i) => planOf(img, i, images.length > 1));
  let total = 0;
  for (const p of plans) total += paddedLength(p.cards.length * CARD_BYTES) + paddedLength(p.dataBytes);
  const out = new Uint8Array(total);
  let offset = 0;
  for (const p of plans) {
    const headerBytes = paddedLength(p.cards.length * CARD_BYTES);
    out.fill(0x20, offset, offset + headerBytes);
    p.cards.forEach((c, i) => writeAscii(out, offset + i * CARD_BYTES, c));
    const dataOffset = offset + headerBytes;
    const padded = paddedLength(p.dataBytes);
    if (p.dataBytes > 0) writeData(out, dataOffset, p);
    if (p.checksumAt >= 0) {
      const dataSum = onesComplementSum(out.subarray(dataOffset, dataOffset + padded));
      writeAscii(out, offset + p.datasumAt * CARD_BYTES, formatCard({ keyword: 'DATASUM', value: String(dataSum), comment: 'data unit checksum' }));
      const headerSum = onesComplementSum(out.subarray(offset, dataOffset));
      // The 16 characters replace the zeros that start in byte 12 of the CHECKSUM card.
      writeAscii(out, offset + p.checksumAt * CARD_BYTES + 11, encodeChecksum(onesComplementAdd(headerSum, dataSum)));
    }
    offset = dataOffset + padded;
  }
  return out;
}

