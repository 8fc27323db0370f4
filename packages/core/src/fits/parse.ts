import { FitsFormatError, InvalidInputError } from '../errors.js';
import { onesComplementAdd, onesComplementSum } from './checksum.js';
import { DEFAULT_MAX_PIXELS } from './constants.js';
import { decodePixels } from './decode.js';
import { DiagnosticSink } from './diagnosticSink.js';
import { findHeaderEnd, readHeaderCards } from './header.js';
import type { FitsHeader } from './header.js';
import { layoutOf, pixelCount } from './layout.js';
import type { ChecksumResult, FitsFile, Hdu, HduLayout, ParseOptions } from './types.js';

/** An HDU found while scanning, before any decoding. */
export interface ListedHdu {
  layout: HduLayout;
  header: FitsHeader;
  /** The declared data run past the end of the bytes. */
  truncated: boolean;
}

export const NOT_CHECKED: ChecksumResult = { checksum: 'not-checked', datasum: 'not-checked' };

function startsWith(bytes: Uint8Array, offset: number, text: string): boolean {
  if (offset + text.length > bytes.length) return false;
  for (let i = 0; i < text.length; i++) if (bytes[offset + i] !== text.charCodeAt(i)) return false;
  return true;
}

/** True for bytes that start like a FITS file: `SIMPLE  =` in bytes 1-9 (FITS 3.0 §4.4.1.1). */
export function looksLikeFits(bytes: Uint8Array): boolean {
  return startsWith(bytes, 0, 'SIMPLE  =');
}

/** Refuse bytes that are not FITS before reading any header. */
export function checkFitsStart(bytes: Uint8Array, sink: DiagnosticSink): void {
  if (bytes.length >= 2 && bytes[0] === 0x1f && bytes[1] === 0x8b) {
    throw sink.error('FITS_NOT_FITS', 'gzip-compressed bytes: inflate them first (readFitsFile does for .gz files)', { byte: 0 });
  }
  if (!looksLikeFits(bytes)) {
    throw sink.error('FITS_NOT_FITS', 'the bytes do not start with SIMPLE = (not a FITS file)', { byte: 0 });
  }
}

/**
 * Read one HDU header at `offset`, check its mandatory keywords and compute its layout.
 * Returns undefined when no END card is found in the available bytes.
 */
export function readHduHeader(
  bytes: Uint8Array,
  offset: number,
  hdu: number,
  sink: DiagnosticSink,
  /** File offset of bytes[0] (for partial reads). */
  base = 0,
): { header: FitsHeader; layout: HduLayout } | undefined {
  const extent = findHeaderEnd(bytes, offset);
  if (extent === undefined) return undefined;
  const header = readHeaderCards(bytes, offset, extent.cardCount, hdu, sink, base);
  const layout = layoutOf(header, hdu, base + offset, extent.headerBytes, sink);
  return { header, layout };
}

/** After the last HDU: report leftover bytes that do not form an HDU (a diagnostic, not an error). */
export function reportTrailing(
  bytes: Uint8Array,
  offset: number,
  hdu: number,
  sink: DiagnosticSink,
  base = 0,
  /** Length of the leftover region when `bytes` holds only its start (partial reads). */
  length = bytes.length - offset,
): void {
  let zero = true;
  for (let i = offset; i < bytes.length; i++) {
    if (bytes[i] !== 0) {
      zero = false;
      break;
    }
  }
  const n = length;
  if (zero) sink.info('FITS_TRAILING_BYTES', `${n} zero bytes after the last HDU`, { hdu, byte: base + offset });
  else sink.warn('FITS_TRAILING_BYTES', `${n} bytes after the last HDU do not form an HDU`, { hdu, byte: base + offset });
}

/**
 * Check that the data padding is zero-filled (FITS 3.0 §3.3.2); ASCII tables pad with spaces.
 * `bytes[0]` is file byte `base` (partial reads pass the data region with base = dataOffset).
 */
export function checkPadding(bytes: Uint8Array, layout: HduLayout, sink: DiagnosticSink, base = 0): void {
  const from = layout.dataOffset + layout.dataBytes - base;
  const to = Math.min(bytes.length, layout.dataOffset + layout.paddedDataBytes - base);
  const fill = layout.kind === 'ascii-table' ? 0x20 : 0;
  for (let i = from; i < to; i++) {
    if (bytes[i] !== fill) {
      sink.warn('FITS_NONZERO_PADDING', `data padding byte ${base + i} is 0x${bytes[i]!.toString(16)}`, { hdu: layout.index, byte: base + i });
      return;
    }
  }
}

/**
 * An extension whose header breaks the mandatory rules ends the walk with a warning, so the HDUs before it (usually
 * the primary image) stay usable in folder runs; strict mode, and any fault of the primary HDU, still throw.
 */
export function tolerateBrokenExtension(err: unknown, hdu: number, sink: DiagnosticSink, byte: number): void {
  if (hdu === 0 || sink.strict || !(err instanceof FitsFormatError)) throw err;
  sink.warn('FITS_BAD_EXTENSION', `HDU ${hdu} cannot be read (${err.code}: ${err.message}); it and any later HDUs are left out`, { hdu, byte });
}

/**
 * Walk the HDUs of a whole file held in memory (headers only; no pixel decoding).
 * @throws FitsFormatError for a file that is not FITS or whose headers break the mandatory rules.
 */
export function listHdus(bytes: Uint8Array, sink: DiagnosticSink): ListedHdu[] {
  checkFitsStart(bytes, sink);
  const listed: ListedHdu[] = [];
  let offset = 0;
  for (let hdu = 0; offset < bytes.length; hdu++) {
    if (hdu > 0 && !startsWith(bytes, offset, 'XTENSION')) {
      reportTrailing(bytes, offset, hdu, sink);
      break;
    }
    let read: ReturnType<typeof readHduHeader>;
    try {
      read = readHduHeader(bytes, offset, hdu, sink);
      if (read === undefined) {
        throw sink.error('FITS_NO_END', `HDU ${hdu}: no END card before the end of the file`, { hdu, byte: offset });
      }
    } catch (err) {
      tolerateBrokenExtension(err, hdu, sink, offset);
      break;
    }
    const { header, layout } = read;
    const dataEnd = layout.dataOffset + layout.dataBytes;
    const paddedEnd = layout.dataOffset + layout.paddedDataBytes;
    const truncated = dataEnd > bytes.length;
    listed.push({ header, layout, truncated });
    if (truncated) break;
    if (paddedEnd > bytes.length) {
      // All declared bytes are there, only the last block is short (common practice to tolerate).
      checkPadding(bytes, layout, sink);
      sink.warn('FITS_SHORT_LAST_BLOCK', `the file ends ${paddedEnd - bytes.length} bytes before the end of its last block`, {
        hdu,
        byte: bytes.length,
      });
      break;
    }
    checkPadding(bytes, layout, sink);
    offset = paddedEnd;
  }
  if (listed.length > 1 && listed[0]!.header.boolean('EXTEND') !== true) {
    sink.info('FITS_MISSING_EXTEND', 'extensions follow but the primary header lacks EXTEND = T', { hdu: 0 });
  }
  return listed;
}

/**
 * CHECKSUM / DATASUM statuses of one HDU from its sums (FITS Checksum Proposal; REFERENCE A.8.3):
 * the whole HDU must sum to -0 (0xFFFFFFFF); DATASUM must equal the data sum.
 */
export function checksumStatus(
  listed: Pick<ListedHdu, 'header' | 'layout'>,
  headerSum: number,
  dataSum: number,
  sink: DiagnosticSink,
): ChecksumResult {
  const { header, layout } = listed;
  const result: ChecksumResult = { checksum: 'absent', datasum: 'absent' };
  const where = { hdu: layout.index, byte: layout.headerOffset };
  if (header.has('DATASUM')) {
    const v = header.get('DATASUM');
    const text = typeof v === 'string' ? v.trim() : typeof v === 'number' || typeof v === 'bigint' ? String(v) : '';
    const ok = /^[0-9]+$/.test(text) && Number(text) === dataSum;
    result.datasum = ok ? 'valid' : 'invalid';
    if (!ok) sink.warn('FITS_DATASUM_MISMATCH', `DATASUM is '${text.slice(0, 20)}'; the data sum to ${dataSum}`, { ...where, keyword: 'DATASUM' });
  }
  if (header.has('CHECKSUM')) {
    const total = onesComplementAdd(headerSum, dataSum);
    const ok = total === 0xffffffff;
    result.checksum = ok ? 'valid' : 'invalid';
    if (!ok) sink.warn('FITS_CHECKSUM_MISMATCH', `the HDU sums to 0x${total.toString(16)}, not 0xffffffff`, { ...where, keyword: 'CHECKSUM' });
  }
  return result;
}

/** True when the header carries CHECKSUM or DATASUM. */
export function hasChecksumCards(listed: Pick<ListedHdu, 'header'>): boolean {
  return listed.header.has('CHECKSUM') || listed.header.has('DATASUM');
}

/** Verify CHECKSUM and DATASUM of one HDU held in `bytes` (the whole file). */
export function verifyHduChecksums(bytes: Uint8Array, listed: ListedHdu, sink: DiagnosticSink): ChecksumResult {
  const { layout } = listed;
  if (!hasChecksumCards(listed)) return { checksum: 'absent', datasum: 'absent' };
  if (listed.truncated) return { ...NOT_CHECKED };
  const dataEnd = Math.min(bytes.length, layout.dataOffset + layout.paddedDataBytes);
  // Missing bytes of a short last block count as the zero padding they should have been.
  const dataSum = onesComplementSum(bytes.subarray(layout.dataOffset, dataEnd));
  const headerSum = onesComplementSum(bytes.subarray(layout.headerOffset, layout.dataOffset));
  return checksumStatus(listed, headerSum, dataSum, sink);
}

/** Validate `rows` against an image height. */
export function checkRows(rows: { start: number; count: number }, height: number, hdu: number, file: string | undefined): void {
  const { start, count } = rows;
  if (!Number.isInteger(start) || !Number.isInteger(count) || start < 0 || count < 0 || start + count > height) {
    throw new InvalidInputError(
      'INPUT_OUT_OF_BOUNDS',
      `rows ${start}..${start + count - 1} are outside the image's ${height} rows`,
      file === undefined ? { hdu } : { file, hdu },
    );
  }
}

/** Decoded shape of an image HDU; rows (when given) select rows of plane 0. */
export function imageShape(layout: HduLayout, rows: { start: number; count: number } | undefined, file: string | undefined) {
  const axes = layout.axes;
  const width = axes[0] ?? 0;
  const height = axes.length >= 2 ? axes[1]! : 1;
  const planes = axes.length >= 3 ? pixelCount(axes.slice(2)) : 1;
  if (rows === undefined) return { width, height, planes, rowStart: 0 };
  checkRows(rows, height, layout.index, file);
  return { width, height: rows.count, planes: 1, rowStart: rows.start };
}

/** Refuse images larger than `maxPixels` before any allocation. */
export function checkSize(pixels: number, maxPixels: number, layout: HduLayout, sink: DiagnosticSink): void {
  if (!(pixels <= maxPixels)) {
    throw sink.error('FITS_TOO_LARGE', `HDU ${layout.index} declares ${layout.axes.join(' x ')} pixels, more than the limit of ${maxPixels}`, {
      hdu: layout.index,
      byte: layout.headerOffset,
    });
  }
}

/** Which HDUs to decode: the one asked for, the first image when only rows are given, else every image. */
export function decodeTargets(listed: readonly ListedHdu[], opts: ParseOptions, sink: DiagnosticSink): Set<number> {
  const targets = new Set<number>();
  if (opts.hdu !== undefined) {
    const h = listed[opts.hdu];
    if (h === undefined || !Number.isInteger(opts.hdu)) {
      throw sink.error('FITS_NO_IMAGE', `HDU ${opts.hdu} does not exist (the file has ${listed.length})`, { hdu: opts.hdu });
    }
    if (h.layout.kind === 'compressed-image') {
      throw sink.error('FITS_COMPRESSED_NOT_DECODED', `HDU ${opts.hdu} is a tile-compressed image (${h.layout.compressed?.algorithm ?? '?'}); decoding it is not supported`, {
        hdu: opts.hdu,
      });
    }
    if (h.layout.kind !== 'image') {
      throw sink.error('FITS_NO_IMAGE', `HDU ${opts.hdu} is ${h.layout.kind}, not an image`, { hdu: opts.hdu });
    }
    targets.add(opts.hdu);
    return targets;
  }
  for (const h of listed) {
    if (h.layout.kind !== 'image' || pixelCount(h.layout.axes) === 0) continue;
    targets.add(h.layout.index);
    if (opts.rows !== undefined) return targets;
  }
  if (opts.rows !== undefined) throw sink.error('FITS_NO_IMAGE', 'no image HDU with pixels to take rows from', {});
  return targets;
}

/**
 * Parse a FITS file held in memory: every HDU listed with its header and layout, image HDUs decoded
 * into typed arrays (FITS 3.0 §3-§5, §7.1; scaling as astropy 5.2.1 `io/fits/hdu/image.py`).
 *
 * Tables, random groups and unknown extensions are listed and skipped by their sizes; tile-compressed
 * images are listed as kind 'compressed-image'. CHECKSUM/DATASUM are verified when decoding.
 *
 * @param bytes - the whole file (not gzip-compressed).
 * @param opts - see {@link ParseOptions}: `strict`, `maxPixels` (default 400e6), `decode` (default true),
 *   `hdu`, `rows`, `verifyChecksums` (default = decode), `file` (for error locations), `inPlace` (decode
 *   into `bytes`, which the caller gives up).
 * @returns the HDUs in file order and the diagnostics (tolerable problems).
 * @throws FitsFormatError 'FITS_NOT_FITS' | 'FITS_NO_END' | 'FITS_KEYWORD_ORDER' | 'FITS_BAD_BITPIX' |
 *   'FITS_BAD_NAXIS' | 'FITS_BAD_VALUE' | 'FITS_TRUNCATED' | 'FITS_TOO_LARGE' | 'FITS_NO_IMAGE' |
 *   'FITS_COMPRESSED_NOT_DECODED', and any warning code when `strict`;
 *   InvalidInputError 'INPUT_OUT_OF_BOUNDS' for rows outside the image.
 * @example
 * const fits = parseFits(bytes);
 * const img = fits.hdus[0]?.image; // { pixels: Uint16Array, width, height, ... }
 */
export function parseFits(bytes: Uint8Array, opts: ParseOptions = {}): FitsFile {
  const sink = new DiagnosticSink(opts.strict === true, opts.file);
  const listed = listHdus(bytes, sink);
  const decode = opts.decode ?? true;
  const verify = opts.verifyChecksums ?? decode;
  const maxPixels = opts.maxPixels ?? DEFAULT_MAX_PIXELS;
  const targets = decode ? decodeTargets(listed, opts, sink) : new Set<number>();
  const hdus: Hdu[] = [];
  for (const item of listed) {
    const { layout, header } = item;
    const hdu: Hdu = { layout, header, checksum: { ...NOT_CHECKED } };
    if (targets.has(layout.index)) {
      const shape = imageShape(layout, opts.rows, opts.file);
      checkSize(shape.width * shape.height * shape.planes, maxPixels, layout, sink);
      if (item.truncated) {
        throw sink.error('FITS_TRUNCATED', `HDU ${layout.index}: data end at byte ${layout.dataOffset + layout.dataBytes}, the file at ${bytes.length}`, {
          hdu: layout.index,
          byte: bytes.length,
        });
      }
      const bytesPer = Math.abs(layout.bitpix) / 8;
      const start = layout.dataOffset + shape.rowStart * shape.width * bytesPer;
      // Checksums are taken before decoding: decoding in place swaps the data bytes.
      if (verify && (opts.hdu === undefined || opts.hdu === layout.index)) hdu.checksum = verifyHduChecksums(bytes, item, sink);
      if (shape.width * shape.height * shape.planes > 0) hdu.image = decodePixels(bytes.subarray(start), layout, shape, opts.inPlace === true);
    } else {
      if (item.truncated) {
        sink.warn('FITS_TRUNCATED', `HDU ${layout.index}: data end at byte ${layout.dataOffset + layout.dataBytes}, the file at ${bytes.length}`, {
          hdu: layout.index,
          byte: bytes.length,
        });
      }
      if (verify && (opts.hdu === undefined || opts.hdu === layout.index)) hdu.checksum = verifyHduChecksums(bytes, item, sink);
    }
    hdus.push(hdu);
  }
  return { hdus, diagnostics: sink.list };
}

/**
 * The image HDUs of a parsed file that hold pixels (primary or IMAGE extensions with NAXIS > 0).
 * @example imageHdus(parseFits(bytes))[0]?.image?.pixels
 */
export function imageHdus(file: FitsFile): Hdu[] {
  return file.hdus.filter((h) => h.layout.kind === 'image' && pixelCount(h.layout.axes) > 0);
}

