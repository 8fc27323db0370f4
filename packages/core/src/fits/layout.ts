import { LEGAL_BITPIX, paddedLength } from './constants.js';
import type { DiagnosticSink } from './diagnosticSink.js';
import type { FitsHeader } from './header.js';
import type { Card, ElementType, HduKind, HduLayout } from './types.js';
import type { ErrorCode } from '../errors.js';

const TWO_POW_63 = 2n ** 63n;

/** Element type of decoded pixels, following astropy 5.2.1 `io/fits/hdu/image.py` `_dtype_for_bitpix`. */
export function elementTypeFor(bitpix: number, bscale: number, bzero: number | bigint): ElementType {
  // Unsigned conventions need BSCALE exactly 1 (FITS 3.0 Table 4.9).
  if (bscale === 1) {
    if (bitpix === 8 && bzero === -128) return 'int8';
    if (bitpix === 16 && bzero === 32768) return 'uint16';
    if (bitpix === 32 && bzero === 2147483648) return 'uint32';
    if (bitpix === 64 && bzero === TWO_POW_63) return 'uint64';
    if (bzero === 0) {
      switch (bitpix) {
        case 8:
          return 'uint8';
        case 16:
          return 'int16';
        case 32:
          return 'int32';
        case 64:
          return 'int64';
        case -32:
          return 'float32';
        default:
          return 'float64';
      }
    }
  }
  // Other scaling: integers become float32 when BITPIX <= 16, float64 above; float data keep their
  // width (astropy scales float data in place).
  if (bitpix === -32) return 'float32';
  if (bitpix === -64) return 'float64';
  return bitpix <= 16 ? 'float32' : 'float64';
}

/** Pixel count of an HDU's data array: product of the axes (0 when there are none). */
export function pixelCount(axes: readonly number[]): number {
  if (axes.length === 0) return 0;
  let n = 1;
  for (const a of axes) n *= a;
  return n;
}

interface Checker {
  header: FitsHeader;
  hdu: number;
  sink: DiagnosticSink;
  headerOffset: number;
}

function cardAt(c: Checker, pos: number, keyword: string): Card {
  const card = c.header.cards[pos];
  if (card === undefined || card.keyword.toUpperCase() !== keyword || card.kind === 'commentary') {
    const found = card === undefined ? 'nothing' : card.keyword === '' ? 'a blank keyword' : card.keyword;
    throw c.sink.error('FITS_KEYWORD_ORDER', `card ${pos + 1}: expected ${keyword}; found ${found}`, {
      hdu: c.hdu,
      card: pos + 1,
      keyword,
      byte: c.headerOffset + pos * 80,
    });
  }
  return card;
}

function integerOf(c: Checker, card: Card, code: ErrorCode, what: string): number {
  const v = card.value;
  const n = typeof v === 'bigint' ? Number(v) : v;
  if (typeof n !== 'number' || !Number.isInteger(n)) {
    const shown = typeof v === 'string' ? `'${v.slice(0, 20)}'` : String(v);
    throw c.sink.error(code, `card ${card.index} (${card.keyword}): expected ${what}; found ${shown}`, {
      hdu: c.hdu,
      card: card.index,
      keyword: card.keyword.toUpperCase(),
      byte: c.headerOffset + (card.index - 1) * 80,
    });
  }
  return n;
}

function blankOf(c: Checker, bitpix: number): bigint | undefined {
  const v = c.header.get('BLANK');
  if (v === undefined || v === null) return undefined;
  const card = c.header.cards.find((k) => k.keyword.toUpperCase() === 'BLANK');
  const where = { hdu: c.hdu, card: card?.index, keyword: 'BLANK' };
  if (bitpix < 0) {
    // BLANK must not be used with IEEE data; NaN marks undefined values (FITS 3.0 §5.3).
    c.sink.warn('FITS_BLANK_IN_FLOAT', 'BLANK is ignored for floating-point data', where);
    return undefined;
  }
  if (typeof v === 'bigint') return v;
  if (typeof v === 'number' && Number.isInteger(v)) return BigInt(v);
  c.sink.warn('FITS_BAD_VALUE', 'BLANK is not an integer; ignored', where);
  return undefined;
}

/**
 * Check the mandatory keywords of an HDU header (FITS 3.0 §4.4.1, §7.1) and compute where its
 * data lie. The first HDU must start with SIMPLE = T; later ones with XTENSION.
 *
 * @throws FitsFormatError 'FITS_NOT_FITS' | 'FITS_KEYWORD_ORDER' | 'FITS_BAD_BITPIX' | 'FITS_BAD_NAXIS' | 'FITS_BAD_VALUE'
 */
export function layoutOf(
  header: FitsHeader,
  hdu: number,
  headerOffset: number,
  headerBytes: number,
  sink: DiagnosticSink,
): HduLayout {
  const c: Checker = { header, hdu, sink, headerOffset };
  let xtension: string | undefined;
  if (hdu === 0) {
    const simple = cardAt(c, 0, 'SIMPLE');
    if (simple.value !== true) {
      throw sink.error('FITS_NOT_FITS', 'SIMPLE is not T: the file does not claim to conform to FITS', {
        hdu,
        card: 1,
        keyword: 'SIMPLE',
        byte: headerOffset,
      });
    }
  } else {
    const x = cardAt(c, 0, 'XTENSION');
    if (typeof x.value !== 'string') {
      throw sink.error('FITS_BAD_VALUE', 'card 1 (XTENSION): expected a string', { hdu, card: 1, keyword: 'XTENSION' });
    }
    xtension = x.value.trim();
  }
  const bitpix = integerOf(c, cardAt(c, 1, 'BITPIX'), 'FITS_BAD_BITPIX', 'one of 8, 16, 32, 64, -32, -64');
  if (!LEGAL_BITPIX.includes(bitpix)) {
    throw sink.error('FITS_BAD_BITPIX', `card 2 (BITPIX): expected one of 8, 16, 32, 64, -32, -64; found ${bitpix}`, {
      hdu,
      card: 2,
      keyword: 'BITPIX',
      byte: headerOffset + 80,
    });
  }
  const naxis = integerOf(c, cardAt(c, 2, 'NAXIS'), 'FITS_BAD_NAXIS', 'an integer 0-999');
  if (naxis < 0 || naxis > 999) {
    throw sink.error('FITS_BAD_NAXIS', `card 3 (NAXIS): expected 0-999; found ${naxis}`, {
      hdu,
      card: 3,
      keyword: 'NAXIS',
      byte: headerOffset + 160,
    });
  }
  const axes: number[] = [];
  for (let i = 1; i <= naxis; i++) {
    const card = cardAt(c, 2 + i, `NAXIS${i}`);
    const n = integerOf(c, card, 'FITS_BAD_NAXIS', 'a non-negative integer');
    if (n < 0) {
      throw sink.error('FITS_BAD_NAXIS', `card ${card.index} (NAXIS${i}): expected >= 0; found ${n}`, {
        hdu,
        card: card.index,
        keyword: `NAXIS${i}`,
        byte: headerOffset + (card.index - 1) * 80,
      });
    }
    axes.push(n);
  }
  let pcount = 0;
  let gcount = 1;
  if (hdu > 0) {
    // Conforming extensions: PCOUNT and GCOUNT follow the last NAXISn (FITS 3.0 §7.1).
    pcount = integerOf(c, cardAt(c, 3 + naxis, 'PCOUNT'), 'FITS_BAD_VALUE', 'a non-negative integer');
    gcount = integerOf(c, cardAt(c, 4 + naxis, 'GCOUNT'), 'FITS_BAD_VALUE', 'a non-negative integer');
    if (pcount < 0 || gcount < 0) {
      throw sink.error('FITS_BAD_VALUE', `PCOUNT/GCOUNT must be >= 0; found ${pcount}/${gcount}`, { hdu, keyword: 'PCOUNT' });
    }
  }
  let kind: HduKind;
  let elements: number;
  const groups = hdu === 0 && naxis > 0 && axes[0] === 0 && header.boolean('GROUPS') === true;
  if (groups) {
    // Random groups: NAXIS1 = 0, GCOUNT groups of PCOUNT parameters plus the array (FITS 3.0 §6).
    kind = 'random-groups';
    const p = header.number('PCOUNT') ?? 0;
    const g = header.number('GCOUNT') ?? 1;
    pcount = Number.isInteger(p) && p >= 0 ? p : 0;
    gcount = Number.isInteger(g) && g >= 0 ? g : 1;
    elements = gcount * (pcount + pixelCount(axes.slice(1)));
  } else {
    elements = gcount * (pcount + pixelCount(axes));
    if (xtension === undefined || xtension === 'IMAGE') kind = 'image';
    else if (xtension === 'TABLE') kind = 'ascii-table';
    else if (xtension === 'BINTABLE') kind = header.boolean('ZIMAGE') === true ? 'compressed-image' : 'binary-table';
    else kind = 'unknown';
  }
  const dataBytes = (Math.abs(bitpix) / 8) * elements;

  let bscale = 1;
  let bzero: number | bigint = 0;
  let blank: bigint | undefined;
  let elementType: ElementType | undefined;
  if (kind === 'image') {
    bscale = header.number('BSCALE') ?? 1;
    const z = header.get('BZERO');
    if (typeof z === 'bigint') bzero = z === TWO_POW_63 ? z : Number(z);
    else if (typeof z === 'number' && Number.isFinite(z)) bzero = z === 2 ** 63 ? TWO_POW_63 : z;
    blank = blankOf(c, bitpix);
    elementType = elementTypeFor(bitpix, bscale, bzero);
  }
  const layout: HduLayout = {
    index: hdu,
    kind,
    xtension,
    headerOffset,
    headerBytes,
    dataOffset: headerOffset + headerBytes,
    dataBytes,
    paddedDataBytes: paddedLength(dataBytes),
    bitpix,
    axes,
    pcount,
    gcount,
    bscale,
    bzero,
    blank,
    elementType,
  };
  if (kind === 'compressed-image') {
    // Tiled image compression keywords (REFERENCE A.8.4).
    const zn = header.number('ZNAXIS') ?? 0;
    const zaxes: number[] = [];
    for (let i = 1; i <= zn && i <= 999; i++) zaxes.push(header.number(`ZNAXIS${i}`) ?? 0);
    layout.compressed = {
      bitpix: header.number('ZBITPIX') ?? 0,
      axes: zaxes,
      algorithm: header.string('ZCMPTYPE') ?? '',
    };
  }
  return layout;
}
