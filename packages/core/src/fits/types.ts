import type { Diagnostic } from '../diagnostics.js';

/** Value of one keyword record. Integers that a JS number cannot hold exactly are bigint. */
export type CardValue = boolean | number | bigint | string | Complex | null;
/** A complex value `(re, im)`; FITS has no fixed format for it (FITS 3.0 §4.2.5-4.2.6). */
export interface Complex {
  re: number;
  im: number;
}

export type CardKind =
  | 'value' // keyword = value [/ comment]
  | 'undefined' // keyword = (blank value field): value undefined
  | 'commentary' // COMMENT, HISTORY, blank keyword, or any card without "= " in bytes 9-10
  | 'hierarch' // HIERARCH convention: keyword holds the tokens after HIERARCH
  | 'continue' // CONTINUE part already merged into the preceding long string
  | 'end';

/** One 80-byte card, as read. */
export interface Card {
  /** 1-based position in its HDU's header. */
  index: number;
  /** Keyword as it appears (upper case for standard cards; HIERARCH tokens joined by one space). */
  keyword: string;
  kind: CardKind;
  /** Parsed value (CONTINUE parts merged); null for undefined values and commentary cards. */
  value: CardValue;
  /** Comment after `/`, trimmed; for commentary cards, the text of bytes 9-80 with trailing spaces removed. */
  comment: string;
  /** The 80 characters of the card (for a merged long string, the first card only). */
  raw: string;
}

/** Header of one HDU: cards in file order plus a keyword index (first occurrence wins). */
export interface Header {
  readonly cards: readonly Card[];
  /** true if a valued card with this keyword exists (lookup is case-insensitive). */
  has(keyword: string): boolean;
  /** Raw value of the first valued card with this keyword, or undefined when absent. */
  get(keyword: string): CardValue | undefined;
  /** Finite number (bigint converted when exact enough), else undefined. Strings holding numbers are accepted. */
  number(keyword: string): number | undefined;
  /** Trimmed string value, else undefined (numbers are not converted). */
  string(keyword: string): string | undefined;
  boolean(keyword: string): boolean | undefined;
  /** Comment of the first valued card with this keyword. */
  comment(keyword: string): string | undefined;
  /** Text of all COMMENT or HISTORY cards, in order. */
  commentary(keyword: 'COMMENT' | 'HISTORY' | ''): string[];
}

export type HduKind = 'image' | 'ascii-table' | 'binary-table' | 'compressed-image' | 'random-groups' | 'unknown';

/** Element type of decoded pixels; the typed array chosen is the narrowest that holds every physical value exactly. */
export type ElementType =
  | 'uint8'
  | 'int8'
  | 'int16'
  | 'uint16'
  | 'int32'
  | 'uint32'
  | 'int64'
  | 'uint64'
  | 'float32'
  | 'float64';

export type Pixels =
  | Uint8Array
  | Int8Array
  | Int16Array
  | Uint16Array
  | Int32Array
  | Uint32Array
  | Float32Array
  | Float64Array
  | BigInt64Array
  | BigUint64Array;

/** Layout of one HDU within the file (all offsets in bytes from the start of the file). */
export interface HduLayout {
  /** 0-based HDU number. */
  index: number;
  kind: HduKind;
  /** XTENSION value, trimmed; undefined for the primary HDU. */
  xtension: string | undefined;
  headerOffset: number;
  /** Header length in bytes, a multiple of 2880. */
  headerBytes: number;
  dataOffset: number;
  /** Data length in bytes without padding: |BITPIX|/8 x GCOUNT x (PCOUNT + NAXIS1 x ... x NAXISn). */
  dataBytes: number;
  /** Data length rounded up to whole 2880-byte blocks. */
  paddedDataBytes: number;
  bitpix: number;
  /** NAXIS1..NAXISn (NAXIS1 first: width, then height, then planes). */
  axes: number[];
  pcount: number;
  gcount: number;
  /** BSCALE (1 when absent). */
  bscale: number;
  /** BZERO (0 when absent); bigint for the unsigned 64-bit convention (2^63). */
  bzero: number | bigint;
  /** BLANK as stored (integer BITPIX only). */
  blank: bigint | undefined;
  /** The element type the data decode to (images only). */
  elementType: ElementType | undefined;
  /** For ZIMAGE = T: ZBITPIX, ZNAXISn and ZCMPTYPE of the compressed image. */
  compressed?: { bitpix: number; axes: number[]; algorithm: string };
}

export type ChecksumStatus = 'valid' | 'invalid' | 'absent' | 'not-checked';

export interface ChecksumResult {
  /** CHECKSUM: whole HDU sums to -0 (0xFFFFFFFF) in ones'-complement arithmetic. */
  checksum: ChecksumStatus;
  /** DATASUM: recomputed data sum equals the card's value. */
  datasum: ChecksumStatus;
}

/** A decoded image (or a row range of it). Plane k of a cube is at offset k x width x height. */
export interface ImageData {
  pixels: Pixels;
  elementType: ElementType;
  width: number;
  /** Rows actually decoded (the row range when one was asked for). */
  height: number;
  /** First decoded row (0-based) within the full image. */
  rowStart: number;
  /** Product of NAXIS3..NAXISn (1 for 2-D images). */
  planes: number;
  /** Pixels equal to BLANK (integer data without scaling keep the raw value; count given here). */
  blankCount: number;
  /** BLANK value in physical units when the data stay integer (pixels equal to it are undefined). */
  blankValue: number | bigint | undefined;
}

export interface Hdu {
  layout: HduLayout;
  header: Header;
  /** Present when the HDU is an image and decoding was asked for and NAXIS > 0. */
  image?: ImageData;
  checksum: ChecksumResult;
}

export interface ParseOptions {
  /** Turn warning diagnostics into FitsFormatError. */
  strict?: boolean;
  /** Refuse any image HDU declaring more pixels than this before allocating (default 400e6). */
  maxPixels?: number;
  /** Decode image data (default true). false reads headers only. */
  decode?: boolean;
  /** Only this HDU (0-based) is decoded; others are listed. */
  hdu?: number;
  /** Decode rows [start, start + count) of the selected image only (2-D images; planes ignored). */
  rows?: { start: number; count: number };
  /** Verify CHECKSUM/DATASUM (default true when decoding). */
  verifyChecksums?: boolean;
  /** File name for error locations. */
  file?: string;
  /**
   * Decode into `bytes` themselves (parseFits only): each decoded image's pixels become a view over
   * `bytes.buffer`, swapped where they lie, so no pixel buffer is allocated and no byte copied. The
   * caller hands the bytes over: afterwards they no longer hold the file. Checksums are verified first.
   * A data unit not aligned to its element size (8 bytes for 64-bit types, else 4) is copied as usual.
   */
  inPlace?: boolean;
}

export interface FitsFile {
  hdus: Hdu[];
  diagnostics: Diagnostic[];
}

/** One keyword to write. Numbers that are integers are written as integers unless `real` is set. */
export interface WriteCard {
  keyword: string;
  value?: boolean | number | bigint | string | null;
  comment?: string;
  /** Write an integer-valued number as a real (`300.0`). */
  real?: boolean;
}

/** One image HDU to write. The first becomes the primary HDU, the rest IMAGE extensions. */
export interface WriteImage {
  /** Uint16Array is written as BITPIX 16 with BZERO 32768 (FITS 3.0 Table 4.9); Float32Array as BITPIX -32. */
  pixels: Uint8Array | Int16Array | Uint16Array | Int32Array | Uint32Array | Float32Array | Float64Array;
  width: number;
  height: number;
  /** NAXIS3 (default 1: a 2-D image). */
  planes?: number;
  /** Extra cards after the mandatory ones (never SIMPLE, BITPIX, NAXISn, BZERO, BSCALE, CHECKSUM, DATASUM or END). */
  cards?: WriteCard[];
  /** Add CHECKSUM and DATASUM (default true). */
  checksum?: boolean;
}
